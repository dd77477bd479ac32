/** How replay prints events and the summary. */
import { formatRunClock } from '@shared/engine/time-format';
import type { EngineEvent, RunSummary } from '@shared/engine/types';

const round = (value: number, digits: number) => Number(value.toFixed(digits));

/** The NDJSON summary record of docs/cli.md. */
export function summaryRecord(summary: RunSummary) {
  const phaseS: Record<string, number> = {};
  for (const [phase, seconds] of Object.entries(summary.phaseS)) phaseS[phase] = round(seconds ?? 0, 1);
  return {
    type: 'summary' as const,
    durationS: round(summary.durationS, 1),
    ah: round(summary.ah, 4),
    wh: round(summary.wh, 3),
    phaseS,
    lines: summary.lines,
    rejected: summary.rejected,
    timeGlitches: summary.timeGlitches ?? 0,
    clockResets: summary.clockResets ?? 0,
  };
}

export const formatClock = formatRunClock;

export function formatEventText(event: EngineEvent): string {
  const at = formatClock(event.t).padStart(9);
  switch (event.type) {
    case 'phase':
      return `${at}  phase  ${event.phase}`;
    case 'alarm':
      return `${at}  ${event.level === 'critical' ? 'ALARM' : 'warn '}  ${event.code}: ${event.message}`;
    case 'alarm-clear':
      return `${at}  clear  ${event.code}`;
    case 'gap':
      return `${at}  gap    ${event.reason}${event.endT === null ? '' : ` (until ${formatClock(event.endT)})`}`;
  }
}

export function formatSummaryText(summary: RunSummary): string {
  const phases = Object.entries(summary.phaseS)
    .map(([phase, seconds]) => `${phase} ${formatClock(seconds ?? 0)}`)
    .join(', ');
  return (
    `summary: ${formatClock(summary.durationS)} run, ${summary.ah.toFixed(3)} Ah, ${summary.wh.toFixed(2)} Wh; ` +
    `${phases || 'no phases'}; ${summary.lines} lines, ${summary.rejected} rejected` +
    (summary.timeGlitches ? `, ${summary.timeGlitches} time glitch(es)` : '') +
    (summary.clockResets ? `, ${summary.clockResets} device reboot(s)` : '') +
    '\n'
  );
}

/** Display formatting: durations on the run's time axis, numbers with their units. */
import { formatRunClock } from '@shared/engine/time-format';
import type { Phase } from '@shared/engine/types';

/** Seconds of run -> `h:mm` (or `d h:mm` past a day), the label format of every time axis. */
export { formatRunTime } from '@shared/display/run-time';

/** Seconds -> `h:mm:ss`, for elapsed times a person reads on the bench. */
export function formatDuration(durationS: number | null | undefined): string {
  if (durationS === null || durationS === undefined || !Number.isFinite(durationS)) return '–';
  return formatRunClock(durationS);
}

export function formatNumber(value: number | null | undefined, digits: number, unit = ''): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '–';
  return unit ? `${value.toFixed(digits)} ${unit}` : value.toFixed(digits);
}

export function formatPercent(fraction: number | null | undefined, digits = 0): string {
  if (fraction === null || fraction === undefined || !Number.isFinite(fraction)) return '–';
  return `${(fraction * 100).toFixed(digits)} %`;
}

/** Unix seconds -> local date and time, for run start times. */
export function formatClock(unixS: number | null | undefined): string {
  if (unixS === null || unixS === undefined || !Number.isFinite(unixS)) return '–';
  const d = new Date(unixS * 1000);
  const pad = (n: number) => String(n).padStart(2, '0');
  return `${d.getFullYear()}-${pad(d.getMonth() + 1)}-${pad(d.getDate())} ${pad(d.getHours())}:${pad(d.getMinutes())}:${pad(d.getSeconds())}`;
}

/** Unix seconds -> `hh:mm:ss.s` local time of day, for the Line feed. */
export function formatTimeOfDay(unixS: number): string {
  const d = new Date(unixS * 1000);
  const pad = (n: number) => String(n).padStart(2, '0');
  return `${pad(d.getHours())}:${pad(d.getMinutes())}:${pad(d.getSeconds())}.${Math.floor(d.getMilliseconds() / 100)}`;
}

/** Phase codes (docs/codes.md) in words a person reads from across the bench. */
export const PHASE_WORDS: Record<Phase, string> = {
  precondition: 'Precondition',
  cc: 'Constant current',
  cv: 'Constant voltage',
  done: 'Done',
  fault: 'Fault',
  idle: 'Idle',
};

/** Lead-acid names its stages bulk / absorption / float (docs/codes.md). */
export function phaseWords(phase: Phase, chemistry?: string): string {
  if (chemistry === 'lead-acid') {
    if (phase === 'cc') return 'Bulk (constant current)';
    if (phase === 'cv') return 'Absorption (constant voltage)';
    if (phase === 'done') return 'Float (done)';
  }
  return PHASE_WORDS[phase] ?? phase;
}

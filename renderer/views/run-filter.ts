/**
 * Search and filters of the Runs view: free text over everything a run row says (station,
 * profile, chemistry, end reason, and board id, verdict and alarm codes where the backend sends
 * them), a start-date range, and how the run ended. Pure, so it is tested with plain rows.
 */
import type { RunListRow } from '../wire';

export interface RunFilter {
  text: string;
  /** `YYYY-MM-DD` of the first and last start day (local), empty = open. */
  from: string;
  to: string;
  /** End reason, `recording` for a run still open, empty = any. */
  ended: string;
}

/** Words a run is found by; optional fields are read when present (board id, verdict, alarms). */
export function runSearchText(run: RunListRow): string {
  const extra = run as unknown as { boardId?: unknown; board?: unknown; verdict?: unknown; alarms?: unknown };
  const alarmWords = Array.isArray(extra.alarms) ? extra.alarms.map(String).join(' ') : '';
  return [
    String(run.id),
    run.stationId,
    run.stationLabel,
    run.profileName,
    run.chemistry,
    run.endReason ?? 'recording',
    typeof extra.boardId === 'string' ? extra.boardId : '',
    typeof extra.board === 'string' ? extra.board : '',
    typeof extra.verdict === 'string' ? extra.verdict : '',
    alarmWords,
  ]
    .join(' ')
    .toLowerCase();
}

function localDay(unixS: number): string {
  const d = new Date(unixS * 1000);
  const pad = (n: number) => String(n).padStart(2, '0');
  return `${d.getFullYear()}-${pad(d.getMonth() + 1)}-${pad(d.getDate())}`;
}

export function filterRuns(runs: readonly RunListRow[], f: RunFilter): RunListRow[] {
  const words = f.text.toLowerCase().split(/\s+/).filter(Boolean);
  return runs.filter((run) => {
    if (words.length) {
      const hay = runSearchText(run);
      if (!words.every((w) => hay.includes(w))) return false;
    }
    const day = localDay(run.startRxS);
    if (f.from && day < f.from) return false;
    if (f.to && day > f.to) return false;
    if (f.ended && (run.endReason ?? 'recording') !== f.ended) return false;
    return true;
  });
}

/** File names offered for a run's CSV export, Run report and Batch report (save dialog and HTTP download). */
import type { RunRow } from '@shared/ipc/payloads';

export { batchFileStem } from '@shared/display/file-names';

/** Longest station part of a name; a serial path given to `taperline record` can be long. */
const MAX_STATION_CHARS = 64;

/**
 * `taperline-run-<id>-<station>` with every character outside `A-Z a-z 0-9 . _ -` replaced by
 * `_`: station ids of recorded runs can be port paths (`serial:/dev/ttyUSB0`), whose `/` and
 * `:` would make a save dialog propose a folder or break a Content-Disposition header.
 */
export function runFileStem(run: Pick<RunRow, 'id' | 'stationId'>): string {
  const station = run.stationId.replace(/[^A-Za-z0-9._-]/g, '_').slice(0, MAX_STATION_CHARS);
  return station === '' ? `taperline-run-${run.id}` : `taperline-run-${run.id}-${station}`;
}

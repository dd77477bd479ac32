/**
 * The file name of a burn-in batch's Batch report, the same in a save dialog, an HTTP
 * download and the dashboard's download link: `taperline-batch-<id>`, every character outside
 * `A-Z a-z 0-9 . _ -` replaced by `_` (batch ids may hold any printable ASCII, and `/` or `"`
 * would make a dialog propose a folder or break a Content-Disposition header).
 */
export function batchFileStem(batchId: string): string {
  return `taperline-batch-${batchId.replace(/[^A-Za-z0-9._-]/g, '_')}`;
}

/**
 * Run time as every time axis and table of Taperline prints it, the dashboard and the Run
 * report alike: `h:mm` (axis labels) or `h:mm:ss`, with days spelled out past 24 h, so a
 * 7-day burn-in reads `7 d 0:00`, never `168:00`.
 *
 * Self-contained on purpose (no imports, no outside names): the report embeds these functions'
 * source text in its page script, so report and app cannot format time differently.
 */
export function formatRunTime(tS: number): string {
  if (!Number.isFinite(tS)) return '–';
  const sign = tS < 0 ? '−' : '';
  const total = Math.floor(Math.abs(tS));
  const days = Math.floor(total / 86400);
  const hours = Math.floor((total % 86400) / 3600);
  const minutes = Math.floor((total % 3600) / 60);
  const hm = hours + ':' + String(minutes).padStart(2, '0');
  return days > 0 ? sign + days + ' d ' + hm : sign + hm;
}

export function formatRunTimeSeconds(tS: number): string {
  if (!Number.isFinite(tS)) return '–';
  const total = Math.floor(Math.abs(tS));
  const seconds = String(total % 60).padStart(2, '0');
  return formatRunTime(tS) + ':' + seconds;
}

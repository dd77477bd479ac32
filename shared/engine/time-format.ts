/** How run times read everywhere (CLI, report, evidence text, dashboard): one definition. */

/** A moment or elapsed time on the run clock as h:mm:ss (negative values read as 0). */
export function formatRunClock(tS: number): string {
  if (!Number.isFinite(tS)) return '?:??:??';
  const total = Math.max(0, Math.round(tS));
  const h = Math.floor(total / 3600);
  const m = Math.floor((total % 3600) / 60);
  const s = total % 60;
  return `${h}:${String(m).padStart(2, '0')}:${String(s).padStart(2, '0')}`;
}

/** A duration a person reads at a glance: `42 s`, `23 min`, `3 h 05 min`. */
export function formatSpan(s: number): string {
  if (!Number.isFinite(s)) return 'unknown time';
  if (s < 90) return `${Math.round(s)} s`;
  const min = Math.round(s / 60);
  if (min < 90) return `${min} min`;
  return `${Math.floor(min / 60)} h ${String(min % 60).padStart(2, '0')} min`;
}

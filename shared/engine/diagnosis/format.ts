/** Number and time formatting for evidence text: fixed decimals, units always written. */

export const fmtV = (v: number): string => `${v.toFixed(2)} V`;
export const fmtA = (a: number): string => `${a.toFixed(2)} A`;
export const fmtC = (c: number): string => `${c.toFixed(1)} °C`;
export const fmtOhm = (r: number): string => (r < 1 ? `${(r * 1000).toFixed(0)} mΩ` : `${r.toFixed(2)} Ω`);
export const fmtAh = (ah: number): string => `${ah.toFixed(2)} Ah`;

/** A duration a person reads at a glance: `42 s`, `23 min`, `3 h 05 min`. */
export function fmtDuration(s: number): string {
  if (s < 90) return `${Math.round(s)} s`;
  const min = Math.round(s / 60);
  if (min < 90) return `${min} min`;
  const h = Math.floor(min / 60);
  return `${h} h ${String(min % 60).padStart(2, '0')} min`;
}

/** A moment of the run: `t = 1:23:10` (h:mm:ss since the first sample). */
export function fmtT(t: number): string {
  const total = Math.max(0, Math.round(t));
  const h = Math.floor(total / 3600);
  const m = Math.floor((total % 3600) / 60);
  const s = total % 60;
  return `t = ${h}:${String(m).padStart(2, '0')}:${String(s).padStart(2, '0')}`;
}

export const clamp01 = (x: number): number => (x < 0 ? 0 : x > 1 ? 1 : x);

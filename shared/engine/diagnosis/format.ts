/** Number and time formatting for evidence text: fixed decimals, units always written. */
import { formatRunClock, formatSpan } from '../time-format';

export const fmtV = (v: number): string => `${v.toFixed(2)} V`;
export const fmtA = (a: number): string => `${a.toFixed(2)} A`;
export const fmtC = (c: number): string => `${c.toFixed(1)} °C`;
export const fmtOhm = (r: number): string => (r < 1 ? `${(r * 1000).toFixed(0)} mΩ` : `${r.toFixed(2)} Ω`);
export const fmtAh = (ah: number): string => `${ah.toFixed(2)} Ah`;

/** A duration a person reads at a glance: `42 s`, `23 min`, `3 h 05 min`. */
export const fmtDuration = formatSpan;

/** A moment of the run: `t = 1:23:10` (h:mm:ss since the first sample). */
export function fmtT(t: number): string {
  return `t = ${formatRunClock(t)}`;
}

export const clamp01 = (x: number): number => (x > 0 ? (x > 1 ? 1 : x) : 0);

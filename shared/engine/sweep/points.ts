/** P–V points from the run's samples: every sample that carries both source voltage and current. */
import type { TimedSample } from '../types';
import type { SweepPoint } from './types';

export function pointsFromSamples(samples: readonly TimedSample[]): SweepPoint[] {
  const out: SweepPoint[] = [];
  for (const s of samples) {
    const v = s.vinV;
    const i = s.iinA;
    if (v === undefined || i === undefined || !Number.isFinite(v) || !Number.isFinite(i)) continue;
    if (v <= 0 || i < 0) continue;
    out.push({ tS: s.t, vV: v, iA: i, pW: v * i });
  }
  return out;
}

/** A numeric extra channel (for example `tpanel`) of the samples, by run time. */
export function extraChannel(samples: readonly TimedSample[], key: string): { tS: number; value: number }[] {
  const out: { tS: number; value: number }[] = [];
  for (const s of samples) {
    const v = s.extra[key];
    if (typeof v === 'number' && Number.isFinite(v)) out.push({ tS: s.t, value: v });
  }
  return out;
}

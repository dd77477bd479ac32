/**
 * efficiency: energy into the pack over energy from the source (0..1), both by trapezoid over
 * the intervals where pack and source were both reported and current flowed, never across a gap.
 */
import { round, type CheckContext } from '../context';
import type { Measurement } from '../types';

export function measureEfficiency(ctx: CheckContext): Measurement {
  const { samples } = ctx;
  const maxDtS = Math.max(5, 3 * ctx.typicalDtS);
  let packWs = 0;
  let sourceWs = 0;
  let n = 0;
  let fromT = NaN;
  let toT = NaN;
  for (let i = 1; i < samples.length; i++) {
    const a = samples[i - 1];
    const b = samples[i];
    const dt = b.t - a.t;
    if (dt <= 0 || dt > maxDtS) continue;
    if (a.vbatV === undefined || a.ibatA === undefined || a.vinV === undefined || a.iinA === undefined)
      continue;
    if (b.vbatV === undefined || b.ibatA === undefined || b.vinV === undefined || b.iinA === undefined)
      continue;
    if (a.ibatA <= 0 || b.ibatA <= 0) continue;
    packWs += (dt * (a.vbatV * a.ibatA + b.vbatV * b.ibatA)) / 2;
    sourceWs += (dt * (a.vinV * a.iinA + b.vinV * b.iinA)) / 2;
    if (n === 0) fromT = a.t;
    toT = b.t;
    n++;
  }
  if (n === 0 || sourceWs <= 0)
    return {
      measured: null,
      basis: null,
      note: 'the source voltage and current (vin, iin) were not reported while charging',
    };
  return {
    measured: round(packWs / sourceWs, 4),
    basis: { fromT, toT, samples: n + 1 },
    note: `${(packWs / 3600).toFixed(2)} Wh into the pack over ${(sourceWs / 3600).toFixed(2)} Wh from the source`,
  };
}

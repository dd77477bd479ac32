/**
 * MPPT efficiency as EN 50530 defines it (formula from memory; the standard's scope note in
 * IEC 62891 extends it to charge controllers): energy taken from the source over the energy
 * available at its maximum power point over the same time,
 *   eta_MPPT = integral(v i dt) / integral(P_MPP(t) dt)
 * (the static test divides by P_MPP T_M, the same formula at constant light).
 */
import type { FittedCurve, MaximumPowerPoint, SweepPoint } from './types';

/** Longest step counted between two samples; a longer gap is not integrated across (project choice). */
const MAX_STEP_S = 60;

/** The EN 50530 ratio over samples by the trapezoid rule; null when nothing was available. */
export function mpptEfficiency(
  tS: readonly number[],
  takenW: readonly number[],
  availableW: readonly number[],
): { efficiency: number | null; takenWh: number; availableWh: number } {
  let taken = 0;
  let available = 0;
  for (let k = 1; k < tS.length; k++) {
    const dt = tS[k] - tS[k - 1];
    if (!(dt > 0) || dt > MAX_STEP_S) continue;
    taken += ((takenW[k] + takenW[k - 1]) / 2) * dt;
    available += ((availableW[k] + availableW[k - 1]) / 2) * dt;
  }
  return {
    efficiency: available > 0 ? taken / available : null,
    takenWh: taken / 3600,
    availableWh: available / 3600,
  };
}

export interface SweepAtTime {
  /** Middle of the sweep, run seconds. */
  tS: number;
  curve: FittedCurve;
  mpp: MaximumPowerPoint;
}

export interface DayEfficiency {
  efficiency: number | null;
  takenWh: number;
  availableWh: number;
  /** Share of the run's time the estimate covers (samples inside a sweep's voltage range). */
  coverage: number;
  sweeps: number;
}

/**
 * Whole-run estimate from the sweeps and the steady stretches between them. Between sweeps
 * the available power is not measured, so it is estimated: the nearest sweep's curve shape is
 * taken as fixed and scaled with the light, so the power a sample shows at its voltage, over
 * what the curve gives there, scales the curve's maximum: P_MPP(t) ~ p(t) * P_mpp / curve(v(t)).
 * That ignores the change of shape with panel temperature and light (say so with the figure).
 */
export function dayEfficiency(points: readonly SweepPoint[], sweeps: readonly SweepAtTime[]): DayEfficiency {
  const empty = { efficiency: null, takenWh: 0, availableWh: 0, coverage: 0, sweeps: sweeps.length };
  if (sweeps.length === 0 || points.length < 2) return empty;
  const tS: number[] = [];
  const taken: number[] = [];
  const available: number[] = [];
  let coveredS = 0;
  let prev: SweepPoint | null = null;
  for (const p of points) {
    let nearest = sweeps[0];
    for (const s of sweeps) if (Math.abs(s.tS - p.tS) < Math.abs(nearest.tS - p.tS)) nearest = s;
    const c = nearest.curve;
    const atCurve = p.vV >= c.vMinV && p.vV <= c.vMaxV ? c.powerW(p.vV) : NaN;
    // Samples far down the curve (near open circuit) would scale noise: leave them out.
    if (!(atCurve > 0.1 * nearest.mpp.pW)) {
      prev = null;
      tS.push(NaN);
      taken.push(0);
      available.push(0);
      continue;
    }
    if (prev && p.tS - prev.tS <= MAX_STEP_S) coveredS += p.tS - prev.tS;
    prev = p;
    tS.push(p.tS);
    taken.push(p.pW);
    available.push(Math.max(p.pW, (p.pW * nearest.mpp.pW) / atCurve));
  }
  const e = mpptEfficiency(tS, taken, available);
  const spanS = points[points.length - 1].tS - points[0].tS;
  return { ...e, coverage: spanS > 0 ? coveredS / spanS : 0, sweeps: sweeps.length };
}

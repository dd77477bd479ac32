/**
 * The single-diode model of a PV module (pvlib-python, `pvlib.pvsystem.singlediode`):
 *   I = I_L - I_0 [exp((V + I R_s) / a) - 1] - (V + I R_s) / R_sh,   a = n N_s V_th,
 * solved explicitly for I(V) with the Lambert W function (Jain & Kapoor, Solar Energy
 * Materials & Solar Cells 81 (2004), from memory):
 *   I = (R_sh (I_L + I_0) - V) / (R_s + R_sh) - (a / R_s) W(theta),
 *   theta = R_s R_sh I_0 / (a (R_s + R_sh)) exp(R_sh (R_s (I_L + I_0) + V) / (a (R_s + R_sh))).
 */
import { lambertWOfExp } from './lambert-w';

/** Boltzmann constant over the elementary charge, V/K (CODATA, exact in the 2019 SI). */
const K_OVER_Q_V_PER_K = 1.380649e-23 / 1.602176634e-19;

export interface DiodeParams {
  /** Light-generated current I_L, amperes. */
  ilA: number;
  /** Diode saturation current I_0, amperes. */
  i0A: number;
  /** Modified ideality a = n N_s V_th, volts. */
  aV: number;
  rsOhm: number;
  /** Shunt resistance; Infinity for none. */
  rshOhm: number;
}

export function thermalVoltageV(tempC: number): number {
  return K_OVER_Q_V_PER_K * (tempC + 273.15);
}

/** a = n N_s kT/q. */
export function modifiedIdealityV(ideality: number, cellsInSeries: number, tempC: number): number {
  return ideality * cellsInSeries * thermalVoltageV(tempC);
}

/** Terminal current at terminal voltage V (may go negative beyond open circuit). */
export function diodeCurrentA(p: DiodeParams, vV: number): number {
  const g = Number.isFinite(p.rshOhm) ? 1 / p.rshOhm : 0;
  if (p.rsOhm < 1e-9) return p.ilA - p.i0A * Math.expm1(vV / p.aV) - vV * g;
  if (g === 0) {
    // R_sh -> infinity: I = I_L + I_0 - (a/R_s) W(R_s I_0/a exp((R_s (I_L + I_0) + V)/a)).
    const x = Math.log((p.rsOhm * p.i0A) / p.aV) + (p.rsOhm * (p.ilA + p.i0A) + vV) / p.aV;
    return p.ilA + p.i0A - (p.aV / p.rsOhm) * lambertWOfExp(x);
  }
  const rs = p.rsOhm;
  const rsh = p.rshOhm;
  const sum = rs + rsh;
  const x = Math.log((rs * rsh * p.i0A) / (p.aV * sum)) + (rsh * (rs * (p.ilA + p.i0A) + vV)) / (p.aV * sum);
  return (rsh * (p.ilA + p.i0A) - vV) / sum - (p.aV / rs) * lambertWOfExp(x);
}

export function diodePowerW(p: DiodeParams, vV: number): number {
  return vV * diodeCurrentA(p, vV);
}

/** Open-circuit voltage: Newton's method on I(V) = 0 at I = 0, where R_s drops out. */
export function diodeOpenCircuitV(p: DiodeParams): number {
  const g = Number.isFinite(p.rshOhm) ? 1 / p.rshOhm : 0;
  let v = p.aV * Math.log(p.ilA / p.i0A + 1);
  for (let k = 0; k < 60; k++) {
    const e = Math.exp(v / p.aV);
    const f = p.ilA - p.i0A * (e - 1) - v * g;
    const step = f / (-(p.i0A * e) / p.aV - g);
    v -= step;
    if (Math.abs(step) < 1e-12) break;
  }
  return v;
}

/** I_0 that puts the open circuit at `vocV` for the other parameters (used by the fit). */
export function saturationForOpenCircuitA(ilA: number, vocV: number, aV: number, rshOhm: number): number {
  const g = Number.isFinite(rshOhm) ? 1 / rshOhm : 0;
  return (ilA - vocV * g) / Math.expm1(vocV / aV);
}

/**
 * Largest of a unimodal function on [lo, hi] by golden-section search (each round keeps one
 * inner point, so one new evaluation); 60 rounds narrow the interval to 3e-13 of its width.
 */
export function goldenMax(f: (x: number) => number, lo: number, hi: number): { x: number; y: number } {
  const g = (Math.sqrt(5) - 1) / 2;
  let a = lo;
  let b = hi;
  let c = b - g * (b - a);
  let d = a + g * (b - a);
  let fc = f(c);
  let fd = f(d);
  for (let k = 0; k < 60 && b - a > 1e-9 * Math.max(1, Math.abs(b)); k++) {
    if (fc > fd) {
      b = d;
      d = c;
      fd = fc;
      c = b - g * (b - a);
      fc = f(c);
    } else {
      a = c;
      c = d;
      fc = fd;
      d = a + g * (b - a);
      fd = f(d);
    }
  }
  const x = (a + b) / 2;
  return { x, y: f(x) };
}

/** The model's maximum power point on [lo, hi] (default: 0 to open circuit). */
export function diodeMaxPower(
  p: DiodeParams,
  lo = 0,
  hi = diodeOpenCircuitV(p),
): { vV: number; iA: number; pW: number } {
  const m = goldenMax((v) => diodePowerW(p, v), lo, hi);
  return { vV: m.x, iA: diodeCurrentA(p, m.x), pW: m.y };
}

/**
 * Synthetic sample sequences for the engine tests. Invented data: a simple pack model (open-
 * circuit voltage rising linearly with state of charge, a series resistance) behind an ideal
 * CC/CV charger. It is only meant to produce the shapes of a charge, not any real cell.
 */
import type { AlarmEvent, EngineEvent, RunEngine, TimedSample } from '@shared/engine/types';

/** Deterministic noise (a 32-bit linear congruential generator, Numerical Recipes constants). */
export function noise(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (Math.imul(state, 1664525) + 1013904223) >>> 0;
    return state / 4294967296 - 0.5; // uniform in [-0.5, 0.5)
  };
}

export interface CcCvOptions {
  cells: number;
  capacityAh: number;
  setA: number;
  terminationA: number;
  regulationVPerCell: number;
  /** Open-circuit voltage per cell at 0 % and 100 % state of charge (linear in between). */
  ocvEmptyV: number;
  ocvFullV: number;
  startSocPct: number;
  /** Series resistance of the whole pack. */
  packOhm: number;
  dtS: number;
  /** Seconds of sample time to generate. */
  durationS: number;
  /** Peak-to-peak noise added to vbat (V) and ibat (A). */
  vNoiseV?: number;
  iNoiseA?: number;
  tempC?: number;
  /** Print chg/flt pins (a charger that has them). */
  pins?: boolean;
  vinV?: number;
  /** Current available from the source (a weak panel), A; Infinity = unlimited. */
  sourceLimitA?: (tS: number) => number;
  /** Precondition: below this per-cell voltage, charge at preconditionA. */
  preconditionVPerCell?: number;
  preconditionA?: number;
  seed?: number;
}

/** An ideal CC/CV charge of a simple pack model, one sample per dtS. */
export function ccCvCharge(o: CcCvOptions): TimedSample[] {
  const rnd = noise(o.seed ?? 1);
  const out: TimedSample[] = [];
  let soc = o.startSocPct / 100;
  let terminated = false;
  const vReg = o.regulationVPerCell * o.cells;
  for (let t = 0; t <= o.durationS + 1e-9; t += o.dtS) {
    const ocv = (o.ocvEmptyV + (o.ocvFullV - o.ocvEmptyV) * soc) * o.cells;
    const limitA = o.sourceLimitA ? o.sourceLimitA(t) : Infinity;
    let currentA = 0;
    if (!terminated) {
      const precond = o.preconditionVPerCell !== undefined && ocv / o.cells < o.preconditionVPerCell;
      const ccA = precond ? (o.preconditionA ?? o.setA / 10) : o.setA;
      const cvA = (vReg - ocv) / o.packOhm;
      currentA = Math.max(0, Math.min(ccA, cvA, limitA));
      if (cvA < o.setA && cvA <= o.terminationA && limitA >= o.terminationA) {
        terminated = true;
        currentA = 0;
      }
    }
    const vbat = ocv + currentA * o.packOhm;
    const sample: TimedSample = {
      t,
      rxS: 1_800_000_000 + t,
      vbatV: vbat + (o.vNoiseV ?? 0) * rnd(),
      ibatA: currentA + (o.iNoiseA ?? 0) * rnd(),
      extra: {},
    };
    if (o.tempC !== undefined) sample.tempC = o.tempC;
    if (o.vinV !== undefined) sample.vinV = o.vinV;
    if (o.pins) {
      sample.chg = currentA > 0;
      sample.flt = false;
    }
    out.push(sample);
    soc += (currentA * o.dtS) / 3600 / o.capacityAh;
  }
  return out;
}

/** A constant sample repeated every dtS from t0 for durationS (fields merged onto a base). */
export function steady(
  t0: number,
  durationS: number,
  dtS: number,
  fields: Partial<TimedSample>,
): TimedSample[] {
  const out: TimedSample[] = [];
  for (let t = t0; t < t0 + durationS - 1e-9; t += dtS)
    out.push({ rxS: 1_800_000_000 + t, extra: {}, ...fields, t });
  return out;
}

/** Push every sample, collecting the events in order. */
export function pushAll(engine: RunEngine, samples: TimedSample[]): EngineEvent[] {
  const events: EngineEvent[] = [];
  for (const s of samples) for (const e of engine.push(s)) events.push(e);
  return events;
}

export function phasesOf(events: EngineEvent[]): string[] {
  return events.filter((e) => e.type === 'phase').map((e) => (e as { phase: string }).phase);
}

export function alarmsOf(events: EngineEvent[]): AlarmEvent[] {
  return events.filter((e): e is AlarmEvent => e.type === 'alarm');
}

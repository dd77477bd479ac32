/**
 * What a person at the bench wants to know during a charge: roughly how full the pack is, when
 * it will be full, and what comes next ("CV at 12.60 V in about 40 min"), each as a range, not a
 * false-precise number. Pure: the caller hands in the profile's numbers, the run's metrics and the
 * rate at which the pack voltage is rising.
 *
 * Model. In CC the pack voltage climbs toward the regulation voltage; the time to CV is the gap
 * divided by the recent rise rate (measured over two windows; their spread is the range). The CC
 * stage ends at a fraction of capacity that depends on chemistry and rate (CC_END below), so the
 * charge still to go in CV, and the CV stage's length under an exponential taper from the set
 * current down to the termination current, follow from the capacity. Once CV starts, the engine's
 * taper model (learned from the decay seen) replaces the assumption.
 */
import type { Chemistry } from '../../chemistry/types';
import type { Phase } from '../types';

export interface Range {
  low: number;
  high: number;
}

export interface OutlookInput {
  chemistry: Chemistry;
  hasCv: boolean;
  phase: Phase;
  /** Stated capacity; null when the profile gives none (then no charge level is claimed). */
  capacityAh: number | null;
  ahIn: number;
  /** Present charge current, A. */
  currentA: number | null;
  /** The profile's CC level and termination current, A. */
  setA: number;
  terminationA: number;
  /** Pack voltages: regulation (CV / absorption), float (lead-acid), precondition threshold. */
  regulationV: number;
  floatV: number | null;
  preconditionV: number;
  vbatV: number | null;
  /** Rise rate of the pack voltage over a short and a long recent window, V/s; null if unknown. */
  riseVPerS: Range | null;
  /** The engine's state of charge when anchored (empty or full seen), %; else null. */
  engineSocPct: number | null;
  /** The engine's CV time from its learned taper, s; else null. */
  engineCvS: number | null;
}

export type NextStep = 'cc' | 'cv' | 'done';

export interface ChargeOutlook {
  /** Charge level, % of the stated capacity. */
  socPct: Range | null;
  /** Seconds until the charge ends (done / float). */
  fullInS: Range | null;
  /** The next stage, the pack voltage where it starts (null when it starts on current), and when. */
  next: { step: NextStep; atV: number | null; inS: Range | null } | null;
}

/**
 * Fraction of capacity in the pack when CC hands over to CV. Li-ion: about 60–85 %, lower at
 * higher rates (from memory: Battery University BU-409 "Charging Lithium-ion" describes CC
 * ending near 70 % at 1C). LiFePO4's flat curve holds CC longer, 80–95 % (from memory). Lead-acid
 * bulk ends near 70–80 % (from memory: Battery University BU-403 "Charging Lead Acid").
 */
const CC_END: Record<Chemistry, Range> = {
  'li-ion': { low: 0.6, high: 0.85 },
  'li-ion-hv': { low: 0.6, high: 0.85 },
  lifepo4: { low: 0.8, high: 0.95 },
  'lead-acid': { low: 0.7, high: 0.8 },
  nimh: { low: 1, high: 1 },
};

/** NiMH takes in 1.2–1.4 times its capacity to be full (from memory: charge-input factor in the NiMH makers' handbooks). */
const NIMH_INPUT = { low: 1.2, high: 1.4 };

/** A taper learned only minutes ago is still uncertain: ±15 % (common practice margin). */
const TAPER_SPREAD = 0.15;

const clampPct = (v: number) => (v < 0 ? 0 : v > 100 ? 100 : v);
const ordered = (a: number, b: number): Range => (a <= b ? { low: a, high: b } : { low: b, high: a });

/** Least-squares slope of y over x (per unit of x); null with fewer than 3 points or no spread. */
export function slopePerS(points: readonly { x: number; y: number | null }[]): number | null {
  let n = 0;
  let sx = 0;
  let sy = 0;
  for (const p of points) {
    if (p.y === null || !Number.isFinite(p.x) || !Number.isFinite(p.y)) continue;
    n++;
    sx += p.x;
    sy += p.y;
  }
  if (n < 3) return null;
  const mx = sx / n;
  const my = sy / n;
  let sxx = 0;
  let sxy = 0;
  for (const p of points) {
    if (p.y === null || !Number.isFinite(p.x) || !Number.isFinite(p.y)) continue;
    sxx += (p.x - mx) ** 2;
    sxy += (p.x - mx) * (p.y - my);
  }
  return sxx > 0 ? sxy / sxx : null;
}

/** Seconds for an exponential taper from fromA to the termination current that still delivers cvAh. */
function taperS(cvAh: number, fromA: number, terminationA: number): number {
  if (!(fromA > terminationA) || !(cvAh > 0)) return 0;
  const tauS = (cvAh * 3600) / (fromA - terminationA);
  return tauS * Math.log(fromA / terminationA);
}

export function chargeOutlook(input: OutlookInput): ChargeOutlook {
  const { phase, capacityAh: cap } = input;
  const none: ChargeOutlook = { socPct: null, fullInS: null, next: null };
  if (phase === 'done') return { socPct: { low: 100, high: 100 }, fullInS: { low: 0, high: 0 }, next: null };
  if (phase === 'fault' || phase === 'idle') return none;
  const currentA = input.currentA !== null && input.currentA > 0 ? input.currentA : null;
  const engineSoc = input.engineSocPct;

  // Time until the pack voltage reaches `targetV` at the recent rise rates.
  const timeToV = (targetV: number): Range | null => {
    if (input.vbatV === null || input.riseVPerS === null) return null;
    const gapV = targetV - input.vbatV;
    if (gapV <= 0) return { low: 0, high: 0 };
    const fast = Math.max(input.riseVPerS.low, input.riseVPerS.high);
    const slow = Math.min(input.riseVPerS.low, input.riseVPerS.high);
    if (!(fast > 0)) return null;
    // A slope near zero would read as days: the slow end is bounded at a tenth of the fast one.
    return { low: gapV / fast, high: gapV / Math.max(slow, fast / 10) };
  };

  if (phase === 'precondition')
    return {
      socPct: null,
      fullInS: null,
      next: { step: 'cc', atV: input.preconditionV, inS: timeToV(input.preconditionV) },
    };

  if (!input.hasCv) {
    // NiMH: constant current to the −ΔV end; the charge level follows from the input factor.
    let socPct: Range | null = engineSoc !== null ? { low: engineSoc, high: engineSoc } : null;
    let fullInS: Range | null = null;
    if (cap !== null && currentA !== null) {
      if (socPct === null)
        socPct = {
          low: clampPct((input.ahIn / (NIMH_INPUT.high * cap)) * 100),
          high: 100,
        };
      const leftHighAh = Math.max(0, NIMH_INPUT.high * cap * (1 - socPct.low / 100));
      const leftLowAh = Math.max(0, NIMH_INPUT.low * cap * (1 - socPct.high / 100));
      fullInS = ordered((leftLowAh * 3600) / currentA, (leftHighAh * 3600) / currentA);
    }
    return { socPct, fullInS, next: { step: 'done', atV: null, inS: fullInS } };
  }

  const ccEnd = CC_END[input.chemistry];
  if (phase === 'cc') {
    const toCv = timeToV(input.regulationV);
    let socPct: Range | null = null;
    let cvS: Range | null = null;
    if (cap !== null) {
      if (engineSoc !== null) socPct = { low: engineSoc, high: engineSoc };
      else if (toCv !== null && currentA !== null) {
        // Charge still to go before CV, at the present current.
        const ahToCv = ordered((currentA * toCv.low) / 3600, (currentA * toCv.high) / 3600);
        socPct = {
          low: clampPct(Math.max((input.ahIn / cap) * 100, (ccEnd.low - ahToCv.high / cap) * 100)),
          high: clampPct((ccEnd.high - ahToCv.low / cap) * 100),
        };
        if (socPct.low > socPct.high) socPct = { low: socPct.high, high: socPct.high };
      }
      cvS =
        input.engineCvS !== null
          ? { low: input.engineCvS * (1 - TAPER_SPREAD), high: input.engineCvS * (1 + TAPER_SPREAD) }
          : ordered(
              taperS(cap * (1 - ccEnd.high), input.setA, input.terminationA),
              taperS(cap * (1 - ccEnd.low), input.setA, input.terminationA),
            );
    }
    const fullInS =
      toCv !== null && cvS !== null ? { low: toCv.low + cvS.low, high: toCv.high + cvS.high } : null;
    return { socPct, fullInS, next: { step: 'cv', atV: input.regulationV, inS: toCv } };
  }

  // CV (lead-acid: absorption): the taper to the termination current.
  let cvLeft: Range | null =
    input.engineCvS !== null
      ? { low: input.engineCvS * (1 - TAPER_SPREAD), high: input.engineCvS * (1 + TAPER_SPREAD) }
      : null;
  let socPct: Range | null = engineSoc !== null ? { low: engineSoc, high: engineSoc } : null;
  if (cap !== null && currentA !== null) {
    // Under the assumed taper (CV charge from CC_END), the charge still to come at this current.
    const tauLow = (cap * (1 - ccEnd.high) * 3600) / Math.max(1e-9, input.setA - input.terminationA);
    const tauHigh = (cap * (1 - ccEnd.low) * 3600) / Math.max(1e-9, input.setA - input.terminationA);
    const leftAh = ordered(
      (Math.max(0, currentA - input.terminationA) * tauLow) / 3600,
      (Math.max(0, currentA - input.terminationA) * tauHigh) / 3600,
    );
    socPct ??= {
      low: clampPct(100 - (leftAh.high / cap) * 100),
      high: clampPct(100 - (leftAh.low / cap) * 100),
    };
    if (cvLeft === null && currentA > input.terminationA) {
      const lnRatio = Math.log(currentA / input.terminationA);
      cvLeft = { low: tauLow * lnRatio, high: tauHigh * lnRatio };
    }
  }
  const next =
    input.chemistry === 'lead-acid'
      ? { step: 'done' as const, atV: input.floatV, inS: cvLeft }
      : { step: 'done' as const, atV: null, inS: cvLeft };
  return { socPct, fullInS: cvLeft, next };
}

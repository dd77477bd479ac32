/**
 * overtemperature: the pack really got too hot. Reads the temperature against the top of the
 * charge window, how fast it rose before the peak, and the current flowing at the time. A reading
 * reached by an impossible jump is left to thermistor-fault.
 */
import type { DiagnosisContext } from '../context';
import { clamp01, fmtA, fmtC, fmtDuration, fmtT } from '../format';
import { isImpossibleJump, SENSOR_RANGE_C } from '../temperature';
import type { TimedSample } from '../../types';
import type { Cause } from '../types';

/** Window before the peak over which the rate of rise is measured. */
const RISE_WINDOW_S = 20 * 60;

export function scoreOvertemperature(ctx: DiagnosisContext): Cause {
  const { profile, samples, end } = ctx;
  const topC = profile.tempWindowC[1];
  const evidence: string[] = [];
  // The hottest plausible reading: skip readings outside the sensor range, and any reading
  // that arrived by an impossible jump (until the trace returns near where it jumped from).
  let peak: TimedSample | null = null;
  let prev: TimedSample | null = null;
  let suspectFromC: number | null = null;
  let jumpedToHot = false;
  let firstC: number | null = null;
  for (let i = 0; i < end; i++) {
    const s = samples[i];
    const c = s.tempC;
    if (c === undefined || !Number.isFinite(c) || c < SENSOR_RANGE_C[0] || c > SENSOR_RANGE_C[1]) continue;
    if (firstC === null) firstC = c;
    if (prev && isImpossibleJump(prev.tempC as number, c, s.t - prev.t)) {
      if (suspectFromC === null) {
        suspectFromC = prev.tempC as number;
        if (c > suspectFromC && c >= topC) jumpedToHot = true;
      } else if (Math.abs(c - suspectFromC) < 5) suspectFromC = null;
    }
    prev = s;
    if (suspectFromC !== null) continue;
    if (!peak || c > (peak.tempC as number)) peak = s;
  }
  if (!peak || firstC === null) return result(0, evidence, ctx);
  const peakC = peak.tempC as number;
  let score = 0;
  if (peakC >= topC) {
    score += 0.55;
    evidence.push(
      `temperature reached ${fmtC(peakC)} at ${fmtT(peak.t)}, above the ${fmtC(topC)} top of the charge window`,
    );
  } else if (peakC >= topC - 3) {
    score += 0.2;
    evidence.push(
      `temperature reached ${fmtC(peakC)} at ${fmtT(peak.t)}, within 3 °C of the ${fmtC(topC)} window top`,
    );
  } else {
    if (jumpedToHot) {
      evidence.push(
        'the only readings above the window arrived by an impossible jump (see thermistor-fault)',
      );
    }
    return result(0, evidence, ctx);
  }
  // Near the window but not over it: worth a line, not a cause on its own, unless the fault
  // came while the pack was still heating there (the charger's own sensor may trip a little early).
  const heatingIntoFault = ctx.fault !== null && ctx.t - peak.t <= 300;
  if (peakC < topC && !heatingIntoFault) return result(score, evidence, ctx);
  const startOfRise = sampleNear(samples, end, peak.t - RISE_WINDOW_S);
  if (startOfRise && startOfRise.tempC !== undefined && Number.isFinite(startOfRise.tempC)) {
    const riseC = peakC - startOfRise.tempC;
    const minutes = (peak.t - startOfRise.t) / 60;
    const rate = minutes > 0 ? riseC / minutes : 0;
    if (riseC > 0 && minutes > 0) {
      evidence.push(
        `it rose ${riseC.toFixed(1)} °C in the ${fmtDuration(peak.t - startOfRise.t)} before (${rate.toFixed(2)} °C/min)`,
      );
      // Rising by half a degree a minute under charge is heat the pack itself makes (common practice).
      if (rate >= 0.5) score += 0.2;
      else if (rate >= 0.2) score += 0.1;
    }
  }
  const ibatA = peak.ibatA ?? 0;
  if (ibatA >= 0.5 * profile.chargeCurrentA) {
    score += 0.1;
    evidence.push(`${fmtA(ibatA)} was flowing at the peak (set point ${fmtA(profile.chargeCurrentA)})`);
  }
  if (firstC >= topC - 5) {
    evidence.push(
      `the pack was already at ${fmtC(firstC)} at the start: a hot place, not only the charge, heated it`,
    );
  }
  if (ctx.alarms.some((a) => a.code === 'overtemp')) score += 0.1;
  return result(score, evidence, ctx);
}

function sampleNear(samples: readonly TimedSample[], end: number, t: number): TimedSample | null {
  let lo = 0;
  let hi = end;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (samples[mid].t < t) lo = mid + 1;
    else hi = mid;
  }
  for (let i = lo; i < end; i++) if (samples[i].tempC !== undefined) return samples[i];
  return null;
}

function result(score: number, evidence: string[], ctx: DiagnosisContext): Cause {
  return {
    code: 'overtemperature',
    confidence: clamp01(Math.min(0.95, score)),
    evidence: score > 0 ? evidence : evidence.filter((e) => e.includes('impossible')),
    next: [
      'Stop charging and let the pack cool to room temperature; do not charge it while it is above the window.',
      'Check where the pack sits: direct sun, a closed box or a warm board next to it all add heat.',
      // Common practice: halving the charge current roughly quarters the I²R heat in the pack.
      `Lower the charge current (for example to ${(ctx.profile.chargeCurrentA / 2).toFixed(2)} A) and watch whether the rise slows.`,
      'If one pack heats while identical ones do not, suspect a damaged cell; confirm the reading with a thermometer.',
    ],
  };
}

/**
 * timer-expired: the safety timer ran out while current still flowed. It explains the fault;
 * the reason the charge was slow is either a pack bigger than the profile says or a current
 * below the set point (then look at weak-source too).
 */
import { PhaseCursor, type DiagnosisContext } from '../context';
import { clamp01, fmtA, fmtAh, fmtDuration, fmtT, fmtV } from '../format';
import { deliveredAh } from '../measures';
import type { Cause } from '../types';

export function scoreTimerExpired(ctx: DiagnosisContext): Cause {
  const { profile, samples, end } = ctx;
  const evidence: string[] = [];
  const timerAlarm = ctx.alarms.find((a) => a.code === 'timer');
  const chargingS = chargingSeconds(ctx);
  const timerS = profile.timerMin === null ? null : profile.timerMin * 60;
  const ranOut =
    timerAlarm !== undefined || (timerS !== null && ctx.fault !== null && chargingS >= 0.95 * timerS);
  if (!ranOut) return result(0, evidence, ctx);
  evidence.push(
    timerAlarm
      ? `the timer alarm was raised at ${fmtT(timerAlarm.t)} after ${fmtDuration(chargingS)} of charging` +
          (profile.timerMin !== null ? ` (timer ${profile.timerMin} min)` : '')
      : `charging had lasted ${fmtDuration(chargingS)}, reaching the ${profile.timerMin} min safety timer, when the fault came`,
  );
  const lastA = meanCurrentBefore(ctx, 60);
  const lastV = lastVoltage(ctx);
  const regulationV = profile.regulationVPerCell * profile.cells;
  const flowA = Math.max(0.005, 0.01 * profile.chargeCurrentA);
  const belowRegulation = lastV !== null && lastV < regulationV - 0.05 * profile.cells;
  let score: number;
  if (lastA !== null && (lastA > profile.terminationA || (belowRegulation && lastA > flowA))) {
    score = 0.5;
    evidence.push(
      lastA > profile.terminationA
        ? `current still flowed when it ran out: ${fmtA(lastA)}, above the ${fmtA(profile.terminationA)} termination`
        : `current still flowed when it ran out: ${fmtA(lastA)} with the pack at ${fmtV(lastV as number)}, below its ${fmtV(regulationV)} regulation voltage`,
    );
  } else {
    score = 0.35;
    if (lastA !== null) evidence.push(`current had fallen to ${fmtA(lastA)} but the charge never terminated`);
  }
  const ah = deliveredAh(samples, end, Math.max(5, 3 * ctx.typicalDtS));
  if (profile.capacityAh > 0 && ah >= 0.9 * profile.capacityAh) {
    score += 0.35;
    evidence.push(
      `${fmtAh(ah)} went in, ${ah >= profile.capacityAh ? 'more than' : 'close to'} the profile's ${fmtAh(profile.capacityAh)}: ` +
        'the pack is likely bigger than the profile says, so the timer is too short for it',
    );
  }
  const ccA = meanCcCurrent(ctx);
  if (ccA !== null && ccA < 0.8 * profile.chargeCurrentA) {
    score += 0.15;
    evidence.push(
      `mean current in CC was ${fmtA(ccA)}, below the ${fmtA(profile.chargeCurrentA)} set point, so the charge needed longer than the timer`,
    );
  }
  return result(score, evidence, ctx);
}

/**
 * Time spent charging up to the diagnosed time: a charging phase, or current flowing while the
 * engine called the phase idle (a weak source still trickles, and a charger's timer keeps counting).
 */
function chargingSeconds(ctx: DiagnosisContext): number {
  const { samples, end } = ctx;
  const cursor = new PhaseCursor(ctx.phases);
  const flowA = Math.max(0.005, 0.01 * ctx.profile.chargeCurrentA);
  const maxDtS = Math.max(5, 3 * ctx.typicalDtS);
  let total = 0;
  for (let i = 1; i < end; i++) {
    const s = samples[i];
    const dt = s.t - samples[i - 1].t;
    if (dt <= 0 || dt > maxDtS) continue;
    const phase = cursor.at(s.t);
    if (
      phase === 'precondition' ||
      phase === 'cc' ||
      phase === 'cv' ||
      (phase !== 'done' && (s.ibatA ?? 0) > flowA)
    )
      total += dt;
  }
  return total;
}

function meanCurrentBefore(ctx: DiagnosisContext, windowS: number): number | null {
  let sum = 0;
  let n = 0;
  for (let i = ctx.end - 1; i >= 0 && ctx.samples[i].t >= ctx.t - windowS; i--) {
    const a = ctx.samples[i].ibatA;
    if (a === undefined) continue;
    sum += a;
    n++;
  }
  return n ? sum / n : null;
}

function meanCcCurrent(ctx: DiagnosisContext): number | null {
  const cursor = new PhaseCursor(ctx.phases);
  let sum = 0;
  let n = 0;
  for (let i = 0; i < ctx.end; i++) {
    const s = ctx.samples[i];
    if (s.ibatA === undefined || cursor.at(s.t) !== 'cc') continue;
    sum += s.ibatA;
    n++;
  }
  return n ? sum / n : null;
}

function result(score: number, evidence: string[], ctx: DiagnosisContext): Cause {
  const p = ctx.profile;
  // Common practice: size the safety timer to about 1.5 x (capacity / current) to cover the CV taper.
  const suggestedMin =
    p.chargeCurrentA > 0 ? Math.ceil(((1.5 * p.capacityAh) / p.chargeCurrentA) * 60) : null;
  return {
    code: 'timer-expired',
    confidence: clamp01(Math.min(0.95, score)),
    evidence,
    next: [
      "Check the pack's real capacity (its label, or a measured discharge) against capacityAh in the profile.",
      suggestedMin !== null
        ? `Size timerMin to cover capacity ÷ current plus the CV taper: about ${suggestedMin} min for this profile (common practice: 1.5 × capacity ÷ current).`
        : 'Size timerMin to cover capacity ÷ current plus the CV taper (common practice: 1.5 ×).',
      'If the current stayed under the set point, find out why first (source, input set point, thermal foldback).',
    ],
  };
}

function lastVoltage(ctx: DiagnosisContext): number | null {
  for (let i = ctx.end - 1; i >= 0; i--) {
    const v = ctx.samples[i].vbatV;
    if (v !== undefined) return v;
  }
  return null;
}

/**
 * weak-source: the panel or adapter cannot deliver what the charger asks. Signs: source voltage
 * at or under the MPPT / input set point, source power below what the set current needs, and
 * current held under the set point for long stretches (often ending in a timer fault).
 */
import { PhaseCursor, type DiagnosisContext } from '../context';
import { clamp01, fmtA, fmtDuration, fmtV } from '../format';
import type { Cause } from '../types';

/** Conversion efficiency assumed for a switching charger when judging source power (common practice: 85 %). */
const ASSUMED_EFFICIENCY = 0.85;

export function scoreWeakSource(ctx: DiagnosisContext): Cause {
  const { profile, samples, end } = ctx;
  const cursor = new PhaseCursor(ctx.phases);
  const ceilingV = (profile.regulationVPerCell - 0.05) * profile.cells;
  const maxDtS = Math.max(5, 3 * ctx.typicalDtS);
  let wantS = 0; // time the charger wanted to charge at full current (precondition excluded)
  let sourceS = 0; // ... of which the source was reported
  let atSetpointS = 0;
  let shortPowerS = 0;
  let limitedS = 0;
  let minVin = Infinity;
  let sumLimitedA = 0;
  let sumVinAtSetpoint = 0;
  let longestLimitedS = 0;
  let limitedRunS = 0;
  for (let i = 1; i < end; i++) {
    const s = samples[i];
    const dt = s.t - samples[i - 1].t;
    if (dt <= 0 || dt > maxDtS) continue;
    const phase = cursor.at(s.t);
    const wants = phase === 'cc' || phase === 'idle' || (phase === null && s.chg === true);
    if (!wants || s.vbatV === undefined || s.vbatV >= ceilingV) {
      limitedRunS = 0;
      continue;
    }
    wantS += dt;
    const ibatA = s.ibatA ?? 0;
    const limited = ibatA < 0.8 * profile.chargeCurrentA;
    if (limited) {
      limitedS += dt;
      sumLimitedA += ibatA * dt;
      limitedRunS += dt;
      if (limitedRunS > longestLimitedS) longestLimitedS = limitedRunS;
    } else limitedRunS = 0;
    if (s.vinV === undefined) continue;
    sourceS += dt;
    if (s.vinV < minVin) minVin = s.vinV;
    const floorV = profile.inputSetpointV ?? s.vbatV + 0.3;
    if (s.vinV <= floorV + 0.1) {
      atSetpointS += dt;
      sumVinAtSetpoint += s.vinV * dt;
    }
    if (s.iinA !== undefined && limited) {
      const neededW = (s.vbatV * profile.chargeCurrentA) / ASSUMED_EFFICIENCY;
      if (s.vinV * s.iinA < 0.9 * neededW) shortPowerS += dt;
    }
  }
  const evidence: string[] = [];
  let score = 0;
  if (wantS < 60) return empty(evidence);
  const fracSetpoint = sourceS > 0 ? atSetpointS / sourceS : 0;
  const fracShort = sourceS > 0 ? shortPowerS / sourceS : 0;
  const fracLimited = limitedS / wantS;
  if (fracSetpoint >= 0.1) {
    score += 0.35 * fracSetpoint;
    const meanV = sumVinAtSetpoint / atSetpointS;
    evidence.push(
      profile.inputSetpointV !== null
        ? `source voltage sat at or under the ${fmtV(profile.inputSetpointV)} input set point for ${fmtDuration(atSetpointS)} ` +
            `(${pct(fracSetpoint)} of the charging time; mean ${fmtV(meanV)}, lowest ${fmtV(minVin)})`
        : `source voltage had no headroom over the pack for ${fmtDuration(atSetpointS)} (${pct(fracSetpoint)} of the charging time; lowest ${fmtV(minVin)})`,
    );
  }
  if (fracShort >= 0.1) {
    score += 0.25 * fracShort;
    evidence.push(
      `source power was below what ${fmtA(profile.chargeCurrentA)} into the pack needs (at ${pct(ASSUMED_EFFICIENCY)} conversion) ` +
        `for ${fmtDuration(shortPowerS)}`,
    );
  }
  if (fracLimited >= 0.2 && (fracSetpoint >= 0.1 || fracShort >= 0.1 || hasInputLow(ctx))) {
    score += 0.25 * fracLimited;
    evidence.push(
      `current stayed under 80 % of the ${fmtA(profile.chargeCurrentA)} set point for ${fmtDuration(limitedS)} ` +
        `(mean ${fmtA(sumLimitedA / limitedS)}; longest stretch ${fmtDuration(longestLimitedS)})`,
    );
  }
  const inputLow = ctx.alarms.filter((a) => a.code === 'input-low');
  if (inputLow.length > 0 && score > 0) {
    score += 0.1;
    evidence.push(`the input-low alarm was raised ${inputLow.length} time(s)`);
  }
  const timerAlarm = ctx.alarms.some((a) => a.code === 'timer');
  if (timerAlarm && fracLimited >= 0.3 && score > 0) {
    score += 0.15;
    evidence.push('the safety timer ran out because the limited current could not finish the charge in time');
  }
  if (ctx.fault === null && ctx.phases.some((p) => p.phase === 'done') && score > 0.3) {
    // The source was short at times, but the charge still finished: worth knowing, not a fault's cause.
    score = 0.3;
    evidence.push('the charge still reached done, so the weak source only slowed it');
  }
  return { ...empty(evidence), confidence: clamp01(Math.min(0.95, score)) };
}

function hasInputLow(ctx: DiagnosisContext): boolean {
  return ctx.alarms.some((a) => a.code === 'input-low');
}

const pct = (f: number): string => `${Math.round(f * 100)} %`;

function empty(evidence: string[]): Cause {
  return {
    code: 'weak-source',
    confidence: 0,
    evidence,
    next: [
      'Measure the source voltage and current at the charger input under load; compare with the panel or adapter rating.',
      'For a panel: check orientation, shade and dirt, and that its maximum-power voltage sits above the input set point.',
      'For an adapter: use one rated for the charge current plus margin, and check the cable drop.',
      'Lower the charge current to what the source can give, or lengthen the safety timer to match it.',
    ],
  };
}

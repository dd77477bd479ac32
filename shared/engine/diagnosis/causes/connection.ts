/**
 * connection: a loose or corroded contact between charger and pack, or a flaky telemetry link.
 * Signs: sudden pack-voltage steps with no current step, apparent resistance that rises over the
 * run, and gaps or dropouts in the telemetry.
 */
import { CONTACT_OPENING, CONTACT_STEP, ContactWatch, contactLimits } from '../../contact-watch';
import type { DiagnosisContext } from '../context';
import { clamp01, fmtDuration, fmtOhm, fmtT, fmtV } from '../format';
import { median, minResistanceStepA, resistanceSteps } from '../measures';
import type { Cause } from '../types';

export function scoreConnection(ctx: DiagnosisContext): Cause {
  const evidence: string[] = [];
  let score = 0;
  const found = contactEvidence(ctx);
  score += voltageSteps(ctx, found, evidence);
  score += risingResistance(ctx, evidence);
  score += dropouts(ctx, evidence);
  score += contactOpenings(found, evidence);
  return {
    code: 'connection',
    confidence: clamp01(Math.min(0.95, score)),
    evidence,
    next: [
      'Check crimps, screw terminals and the pack connector for looseness, corrosion or heat; wiggle each while watching the Line feed.',
      // Common practice: a good contact drops well under 50 mV at a few amps.
      'Measure the voltage drop across each connector at charge current: more than about 50 mV per contact points at a bad one (common practice).',
      'If telemetry stopped while the charger kept working, check the USB or serial cable and the port too.',
    ],
  };
}

/** Contact evidence of the history, from the same detector as the live `contact` alarm. */
interface ContactEvidence {
  steps: { t: number; dV: number }[];
  openings: { t: number; rose: boolean }[];
}

function contactEvidence(ctx: DiagnosisContext): ContactEvidence {
  const { samples, end } = ctx;
  const watch = new ContactWatch(contactLimits(ctx.profile));
  const maxDtS = Math.max(5, 3 * ctx.typicalDtS);
  const out: ContactEvidence = { steps: [], openings: [] };
  for (let i = 0; i < end; i++) {
    const s = samples[i];
    const vbatV = s.vbatV ?? NaN;
    const absent = s.src === 'none' || (s.vinV !== undefined && vbatV === vbatV && s.vinV < vbatV);
    const seen = watch.feed(s.t, vbatV, s.ibatA ?? NaN, maxDtS, absent);
    if (seen === CONTACT_STEP) out.steps.push({ t: s.t, dV: watch.stepDv });
    else if (seen === CONTACT_OPENING) out.openings.push({ t: watch.openingT, rose: watch.openingRose });
  }
  return out;
}

/** Pack-voltage steps between neighbouring samples while the current stayed put. */
function voltageSteps(ctx: DiagnosisContext, found: ContactEvidence, evidence: string[]): number {
  const lim = contactLimits(ctx.profile);
  const count = found.steps.length;
  if (count === 0) return 0;
  let reversals = 0;
  let lastSign = 0;
  let lastStepT = -Infinity;
  let largest = { dV: 0, t: 0 };
  for (const step of found.steps) {
    const sign = Math.sign(step.dV);
    // A step back within a minute: the contact opened and closed again.
    if (sign === -lastSign && step.t - lastStepT <= 60) reversals++;
    lastSign = sign;
    lastStepT = step.t;
    if (Math.abs(step.dV) > Math.abs(largest.dV)) largest = step;
  }
  evidence.push(
    `pack voltage stepped ${count} time(s) by more than ${fmtV(lim.stepV)} between neighbouring samples while the current ` +
      `stayed within ${lim.steadyA.toFixed(2)} A (largest ${largest.dV > 0 ? '+' : ''}${largest.dV.toFixed(2)} V at ${fmtT(largest.t)})`,
  );
  let score = count >= 2 ? Math.min(0.55, 0.12 * count) : 0.08;
  if (reversals >= 2) {
    score += 0.15;
    evidence.push(`${reversals} of those steps came back within a minute: a contact opening and closing`);
  }
  return score;
}

/** Resistance from current steps in the first and second half of the history. */
function risingResistance(ctx: DiagnosisContext, evidence: string[]): number {
  const steps = resistanceSteps(
    ctx.samples,
    ctx.end,
    minResistanceStepA(ctx.profile),
    Math.max(5, 3 * ctx.typicalDtS),
  );
  if (steps.length < 4) return 0;
  const half = steps.length >> 1;
  const early = median(steps.slice(0, half).map((s) => s.ohm)) as number;
  const late = median(steps.slice(half).map((s) => s.ohm)) as number;
  if (late < 1.5 * early) return 0;
  evidence.push(
    `apparent resistance rose from ${fmtOhm(early)} to ${fmtOhm(late)} over ${steps.length} current steps ` +
      `(${fmtT(steps[0].t)} to ${fmtT(steps[steps.length - 1].t)})`,
  );
  return 0.15;
}

/** Gap events, silence alarms, holes in the sample times and samples missing their core fields. */
function dropouts(ctx: DiagnosisContext, evidence: string[]): number {
  const { samples, end } = ctx;
  const holeS = Math.max(ctx.profile.silenceS, 5 * ctx.typicalDtS);
  let holes = 0;
  let longestS = 0;
  let longestT = 0;
  let missing = 0;
  for (let i = 1; i < end; i++) {
    const dt = samples[i].t - samples[i - 1].t;
    if (dt > holeS) {
      holes++;
      if (dt > longestS) {
        longestS = dt;
        longestT = samples[i - 1].t;
      }
    }
    if (samples[i].vbatV === undefined && samples[i].ibatA === undefined) missing++;
  }
  const gapEvents = ctx.gaps.length;
  const silences = ctx.alarms.filter((a) => a.code === 'silence').length;
  const interruptions = Math.max(holes, gapEvents, silences);
  let score = 0;
  if (interruptions > 0) {
    score += Math.min(0.3, 0.1 * interruptions);
    evidence.push(
      `telemetry stopped ${interruptions} time(s)` +
        (longestS > 0 ? ` (longest ${fmtDuration(longestS)}, from ${fmtT(longestT)})` : '') +
        (gapEvents > 0 ? `; ${gapEvents} gap(s) recorded` : ''),
    );
  }
  if (missing > 0) {
    score += Math.min(0.15, 0.03 * missing);
    evidence.push(`${missing} sample(s) arrived without pack voltage or current`);
  }
  return score;
}

/**
 * Brief openings: the current falls to nothing for under a minute and comes back, with the
 * pack voltage jumping up meanwhile (the charger sees its own set point, not the pack).
 */
function contactOpenings(found: ContactEvidence, evidence: string[]): number {
  const openings = found.openings.length;
  if (openings < 2) return 0;
  const rises = found.openings.filter((o) => o.rose).length;
  evidence.push(
    `the current dropped to zero and came back within a minute ${openings} time(s) from ${fmtT(found.openings[0].t)}` +
      (rises > openings / 2 ? ', the pack voltage jumping up each time: the contact opened' : ''),
  );
  return Math.min(0.3, 0.05 * openings);
}

/**
 * damaged-cell: a cell that will not take charge. Signs: precondition that does not end, a pack
 * voltage that does not rise (or collapses) while current flows, resistance far above expected.
 */
import type { DiagnosisContext } from '../context';
import { clamp01, fmtA, fmtDuration, fmtOhm, fmtT, fmtV } from '../format';
import {
  expectedPackResistance,
  longestStretch,
  median,
  minResistanceStepA,
  resistanceSteps,
} from '../measures';
import type { Cause } from '../types';

export function scoreDamagedCell(ctx: DiagnosisContext): Cause {
  const evidence: string[] = [];
  let score = 0;
  score += stuckPrecondition(ctx, evidence);
  score += collapse(ctx, evidence);
  score += flatUnderCurrent(ctx, evidence);
  score += highResistance(ctx, evidence);
  return {
    code: 'damaged-cell',
    confidence: clamp01(Math.min(0.95, score)),
    evidence,
    next: [
      // Common practice: a Li-ion cell left under about 2.5 V for long is usually not recoverable.
      "Disconnect the pack and measure each cell's voltage; a lithium cell under 2.5 V is usually not recoverable (common practice).",
      'Feel or image each cell while charging at low current: a cell that warms while the others stay cool has an internal short.',
      'Replace the damaged cell or pack; do not keep charging a pack that will not leave precondition.',
    ],
  };
}

/**
 * The precondition timer itself expired: the engine held the pack in precondition until its
 * precondition-timeout alarm. That verdict is the evidence (the time criterion is met by
 * definition), so it is scored from the engine's precondition span rather than re-derived
 * from a threshold crossing, which a pack hovering at the threshold breaks into pieces.
 */
function expiredPrecondition(ctx: DiagnosisContext, evidence: string[]): number | null {
  const { profile, samples, end } = ctx;
  const alarm = ctx.alarms.find((a) => a.code === 'precondition-timeout');
  if (alarm === undefined) return null;
  let span: { startT: number; endT: number } | null = null;
  for (const p of ctx.phases) if (p.phase === 'precondition' && p.startT <= alarm.t) span = p;
  if (span === null) return null;
  const timeoutS = profile.preconditionTimeoutMin * 60;
  const heldS = Math.min(alarm.t, span.endT) - span.startT;
  // Raised by the fault output in precondition rather than the timer: judged by the stretch rule.
  if (heldS < 0.95 * timeoutS) return null;
  let firstV = NaN;
  let lastV = NaN;
  let maxA = 0;
  for (let i = 0; i < end; i++) {
    const s = samples[i];
    if (s.t < span.startT || s.t > alarm.t) continue;
    if (s.vbatV !== undefined) {
      if (firstV !== firstV) firstV = s.vbatV;
      lastV = s.vbatV;
    }
    if ((s.ibatA ?? 0) > maxA) maxA = s.ibatA ?? 0;
  }
  const exitV = profile.preconditionVPerCell * profile.cells;
  evidence.push(
    `the precondition timer expired: the pack stayed in precondition for ${fmtDuration(heldS)} from ${fmtT(span.startT)} ` +
      `(limit ${profile.preconditionTimeoutMin} min) under at most ${fmtA(maxA)} and did not pass the ${fmtV(exitV)} precondition threshold`,
  );
  let score = 0.45;
  const lastPhase = ctx.phases.length ? ctx.phases[ctx.phases.length - 1].phase : null;
  if (lastPhase === 'precondition' || lastPhase === 'fault') {
    score += 0.1;
    evidence.push(`the pack never left precondition before ${fmtT(ctx.t)}`);
  }
  const riseVPerCell = (lastV - firstV) / profile.cells;
  if (riseVPerCell === riseVPerCell) {
    // A healthy deeply discharged cell lifts by tenths of a volt within minutes at C/10 (common practice).
    if (riseVPerCell < 0.05) {
      score += 0.25;
      evidence.push(
        `over that time the voltage changed by ${(riseVPerCell * 1000).toFixed(0)} mV per cell (${fmtV(firstV)} to ${fmtV(lastV)}): the charge is not being stored`,
      );
    } else {
      score += 0.05;
      evidence.push(
        `the voltage rose ${(riseVPerCell * 1000).toFixed(0)} mV per cell (${fmtV(firstV)} to ${fmtV(lastV)}) yet did not clear the threshold in the whole precondition time`,
      );
    }
  }
  return score;
}

/** Precondition (pack under its threshold with a small current) that lasted and did not lift the voltage. */
function stuckPrecondition(ctx: DiagnosisContext, evidence: string[]): number {
  const byStretch: string[] = [];
  const stretchScore = preconditionStretch(ctx, byStretch);
  const byTimer: string[] = [];
  const timerScore = expiredPrecondition(ctx, byTimer);
  if (timerScore !== null && timerScore > stretchScore) {
    evidence.push(...byTimer);
    return timerScore;
  }
  evidence.push(...byStretch);
  return stretchScore;
}

/** The longest stretch under the precondition threshold with current flowing, from the samples. */
function preconditionStretch(ctx: DiagnosisContext, evidence: string[]): number {
  const { profile, samples, end } = ctx;
  const thresholdV = profile.preconditionVPerCell * profile.cells;
  const minFlowA = Math.max(0.005, 0.01 * profile.chargeCurrentA);
  const stretch = longestStretch(
    samples,
    end,
    (s) => s.vbatV !== undefined && s.vbatV < thresholdV && (s.ibatA ?? 0) > minFlowA,
  );
  if (!stretch || stretch.durationS < 60) return 0;
  const timeoutS = profile.preconditionTimeoutMin * 60;
  let minV = Infinity;
  let maxV = -Infinity;
  let maxA = 0;
  for (let i = stretch.from; i <= stretch.to; i++) {
    const s = samples[i];
    const v = s.vbatV as number;
    if (v < minV) minV = v;
    if (v > maxV) maxV = v;
    if ((s.ibatA ?? 0) > maxA) maxA = s.ibatA ?? 0;
  }
  const firstV = samples[stretch.from].vbatV as number;
  const lastV = samples[stretch.to].vbatV as number;
  const riseVPerCell = (lastV - firstV) / profile.cells;
  const level =
    maxV - minV < 0.05 ? `stayed at ${fmtV(lastV)}` : `stayed between ${fmtV(minV)} and ${fmtV(maxV)}`;
  const reachesEnd = stretch.to === end - 1;
  let score = 0;
  if (stretch.durationS >= timeoutS) score += 0.45;
  else if (stretch.durationS >= 0.5 * timeoutS) score += 0.25;
  else if (stretch.durationS >= 600) score += 0.1;
  if (score === 0) return 0;
  evidence.push(
    `pack ${level}, below the ${fmtV(thresholdV)} precondition threshold, for ${fmtDuration(stretch.durationS)} under ${fmtA(maxA)}` +
      ` (from ${fmtT(samples[stretch.from].t)}; the precondition limit is ${profile.preconditionTimeoutMin} min)`,
  );
  if (reachesEnd) {
    score += 0.1;
    evidence.push(`precondition had still not ended at ${fmtT(ctx.t)}`);
  }
  // A healthy deeply discharged cell lifts by tenths of a volt within minutes at C/10 (common practice).
  if (riseVPerCell < 0.05 && stretch.durationS >= 600) {
    score += 0.25;
    evidence.push(
      `over that time the voltage changed by ${(riseVPerCell * 1000).toFixed(0)} mV per cell: the charge is not being stored`,
    );
  }
  return score;
}

/** A drop of several tenths of a volt per cell within a minute, with the current held, that stays down. */
function collapse(ctx: DiagnosisContext, evidence: string[]): number {
  const { profile, samples, end } = ctx;
  const minA = 0.2 * profile.chargeCurrentA;
  const minDropV = 0.3 * profile.cells;
  let best: { i: number; j: number; dropV: number } | null = null;
  let j = 0;
  for (let i = 1; i < end; i++) {
    const b = samples[i];
    if (b.vbatV === undefined || (b.ibatA ?? 0) < minA) continue;
    while (j < i && b.t - samples[j].t > 60) j++;
    const a = samples[j];
    if (j === i || a.vbatV === undefined || (a.ibatA ?? 0) < minA) continue;
    // The current did not fall with the voltage: not a load or phase change.
    if ((b.ibatA as number) < 0.7 * (a.ibatA as number)) continue;
    const dropV = a.vbatV - b.vbatV;
    if (dropV >= minDropV && (!best || dropV > best.dropV)) best = { i, j, dropV };
  }
  if (!best) return 0;
  const beforeV = samples[best.j].vbatV as number;
  const afterV = samples[best.i].vbatV as number;
  const lastV = lastVoltage(ctx);
  // It stays down: a contact that opens and closes comes back, a shorted cell does not.
  if (lastV === null || lastV > beforeV - 0.5 * best.dropV) return 0;
  evidence.push(
    `pack voltage collapsed from ${fmtV(beforeV)} to ${fmtV(afterV)} near ${fmtT(samples[best.i].t)} while ${fmtA(
      samples[best.i].ibatA as number,
    )} still flowed, and stayed down (${fmtV(lastV)} at ${fmtT(ctx.t)})`,
  );
  const cellDrops = best.dropV / (profile.regulationVPerCell * 0.8);
  if (cellDrops >= 0.8)
    evidence.push(`the drop is about ${cellDrops.toFixed(1)} cells' worth of voltage: one cell shorted`);
  return 0.5;
}

/** Long constant-current stretch during which the voltage hardly rose. */
function flatUnderCurrent(ctx: DiagnosisContext, evidence: string[]): number {
  const { profile, samples, end } = ctx;
  const ceilingV = (profile.regulationVPerCell - 0.05) * profile.cells;
  const stretch = longestStretch(
    samples,
    end,
    (s) => s.vbatV !== undefined && s.vbatV < ceilingV && (s.ibatA ?? 0) >= 0.5 * profile.chargeCurrentA,
  );
  if (!stretch || stretch.durationS < 1800) return 0;
  const first = samples[stretch.from];
  const last = samples[stretch.to];
  const riseVPerCell = ((last.vbatV as number) - (first.vbatV as number)) / profile.cells;
  if (riseVPerCell >= 0.02) return 0;
  evidence.push(
    `for ${fmtDuration(stretch.durationS)} at ${fmtA(last.ibatA as number)} or more the pack voltage changed by only ` +
      `${(riseVPerCell * 1000).toFixed(0)} mV per cell (${fmtV(first.vbatV as number)} to ${fmtV(last.vbatV as number)})`,
  );
  return 0.3;
}

function highResistance(ctx: DiagnosisContext, evidence: string[]): number {
  const { profile, samples, end } = ctx;
  const steps = resistanceSteps(samples, end, minResistanceStepA(profile), Math.max(5, 3 * ctx.typicalDtS));
  const packOhm = median(steps.map((s) => s.ohm));
  if (packOhm === null) return 0;
  const expected = expectedPackResistance(profile);
  const ratio = packOhm / expected;
  if (ratio < 3) return 0;
  evidence.push(
    `internal resistance from ${steps.length} current step(s) is ${fmtOhm(packOhm)}, ${ratio.toFixed(1)} times the ` +
      `${fmtOhm(expected)} expected for a healthy ${profile.cells}-cell ${profile.capacityAh} Ah pack`,
  );
  return ratio >= 5 ? 0.3 : 0.15;
}

function lastVoltage(ctx: DiagnosisContext): number | null {
  for (let i = ctx.end - 1; i >= 0; i--) {
    const v = ctx.samples[i].vbatV;
    if (v !== undefined) return v;
  }
  return null;
}

/**
 * overvoltage: the charger regulated the pack above what the chemistry allows. Looks for a
 * sustained stretch above the chemistry's upper limit (a lone spike is a contact, not a
 * regulator) and for a regulation voltage that drifts upward in CV.
 */
import { chemistryHasCv } from '../../../chemistry/defaults';
import { PhaseCursor, type DiagnosisContext } from '../context';
import { clamp01, fmtDuration, fmtT, fmtV } from '../format';
import { longestStretch, median } from '../measures';
import type { Cause } from '../types';

/** How far back a climb to the limit is followed, and how fast it may rise to count as smooth. */
const CLIMB_WINDOW_S = 120;
const SMOOTH_V_PER_CELL = 0.03;
const DRIFT_WINDOW_S = 10 * 60;

export function scoreOvervoltage(ctx: DiagnosisContext): Cause {
  const { profile, samples, end } = ctx;
  const cells = profile.cells;
  const limitV = profile.overvoltageVPerCell * cells;
  const evidence: string[] = [];
  const charging = (s: { ibatA?: number }) => (s.ibatA ?? 0) >= 0;
  const overLimit = longestStretch(
    samples,
    end,
    (s) => s.vbatV !== undefined && s.vbatV > limitV && charging(s),
  );
  const sustained = (st: { from: number; to: number; durationS: number } | null) =>
    st !== null && st.to - st.from >= 2 && st.durationS >= 10;
  // A healthy charger holds the pack within its regulation tolerance; 20 mV/cell over the set
  // point for minutes while current still flows means it is not regulating there.
  const heldAboveV = (profile.regulationVPerCell + 0.02) * cells;
  // NiMH has no CV set point (its regulation figure is only what a full charge reaches).
  const aboveRegulation = !chemistryHasCv(profile.chemistry)
    ? null
    : longestStretch(
        samples,
        end,
        (s) => s.vbatV !== undefined && s.vbatV > heldAboveV && (s.ibatA ?? 0) > profile.terminationA,
      );
  const climb = smoothClimb(ctx, limitV);
  const drift = regulationDrift(ctx);
  const drifting = drift !== null && drift.riseVPerCell >= 0.02;
  const alarm = ctx.alarms.find((a) => a.code === 'overvoltage');
  let score = 0;
  if (climb) {
    score += 0.35;
    evidence.push(
      `pack climbed steadily from ${fmtV(climb.fromV)} to ${fmtV(climb.toV)} (${(climb.toV / cells).toFixed(3)} V/cell) by ` +
        `${fmtT(climb.t)}, past the ${profile.overvoltageVPerCell.toFixed(2)} V/cell upper limit (${fmtV(limitV)}): a regulator, not a spike`,
    );
  }
  if (sustained(overLimit) && overLimit) {
    score += 0.2;
    evidence.push(
      `pack held above ${fmtV(limitV)} for ${fmtDuration(overLimit.durationS)} from ${fmtT(samples[overLimit.from].t)}, ` +
        `peak ${fmtV(peakV(ctx, overLimit))} (${(peakV(ctx, overLimit) / cells).toFixed(3)} V/cell)`,
    );
  } else if (overLimit && !climb) {
    score += 0.1;
    evidence.push(
      `pack voltage went above ${fmtV(limitV)} (${profile.overvoltageVPerCell.toFixed(2)} V/cell) in ` +
        `${overLimit.to - overLimit.from + 1} sample(s) at ${fmtT(samples[overLimit.from].t)}, peak ${fmtV(peakV(ctx, overLimit))}`,
    );
  }
  const heldLong = aboveRegulation !== null && aboveRegulation.durationS >= 120;
  if (heldLong && aboveRegulation) {
    score += 0.2;
    evidence.push(
      `pack stayed above ${fmtV(heldAboveV)} (regulation ${profile.regulationVPerCell.toFixed(2)} V/cell + 20 mV) for ` +
        `${fmtDuration(aboveRegulation.durationS)} from ${fmtT(samples[aboveRegulation.from].t)} while current still flowed: ` +
        `the charger was not holding its ${fmtV(profile.regulationVPerCell * cells)} set point`,
    );
  }
  if (drift && drifting) {
    score += 0.25;
    evidence.push(
      `in CV the regulation rose from ${fmtV(drift.fromV)} to ${fmtV(drift.toV)} (+${(drift.riseVPerCell * 1000).toFixed(0)} mV/cell) ` +
        `over ${fmtDuration(drift.overS)}: the set point or its feedback is drifting`,
    );
  }
  if (alarm && score > 0) {
    score += 0.15;
    evidence.push(`the overvoltage alarm was raised at ${fmtT(alarm.t)}`);
  }
  if (!climb && !heldLong && !drifting) {
    // Only brief excursions: a contact that bounces, not a regulator set too high.
    score = Math.min(score, 0.2);
    if (overLimit)
      evidence.push('the excursion was brief, more like a contact bouncing than a regulator set too high');
  }
  return {
    code: 'overvoltage',
    confidence: clamp01(Math.min(0.95, score)),
    evidence,
    next: [
      'Stop charging and measure the pack voltage at its terminals with a calibrated meter, to rule out a measurement offset.',
      "Check the charger's voltage feedback divider and reference: resistor tolerance, a cracked joint, a wrong part.",
      `Measure each cell: any lithium cell above ${profile.overvoltageVPerCell.toFixed(2)} V is overcharged; a pack without balancing can push one cell high.`,
      "Compare the charger's set point with the cell maker's datasheet before charging again.",
    ],
  };
}

function peakV(ctx: DiagnosisContext, st: { from: number; to: number }): number {
  let max = -Infinity;
  for (let i = st.from; i <= st.to; i++) max = Math.max(max, ctx.samples[i].vbatV as number);
  return max;
}

/** Median pack voltage in the first and last minutes of CV before the diagnosed time. */
function regulationDrift(
  ctx: DiagnosisContext,
): { fromV: number; toV: number; riseVPerCell: number; overS: number } | null {
  const inCv = (cursor: PhaseCursor, i: number) =>
    ctx.samples[i].vbatV !== undefined && cursor.at(ctx.samples[i].t) === 'cv';
  let firstT: number | null = null;
  let lastT = 0;
  let cursor = new PhaseCursor(ctx.phases);
  for (let i = 0; i < ctx.end; i++) {
    if (!inCv(cursor, i)) continue;
    if (firstT === null) firstT = ctx.samples[i].t;
    lastT = ctx.samples[i].t;
  }
  if (firstT === null || lastT - firstT < 2 * DRIFT_WINDOW_S) return null;
  // Second pass keeps only the two windows (not the whole CV history).
  const early: number[] = [];
  const late: number[] = [];
  cursor = new PhaseCursor(ctx.phases);
  for (let i = 0; i < ctx.end; i++) {
    if (!inCv(cursor, i)) continue;
    const t = ctx.samples[i].t;
    if (t <= firstT + DRIFT_WINDOW_S) early.push(ctx.samples[i].vbatV as number);
    if (t >= lastT - DRIFT_WINDOW_S) late.push(ctx.samples[i].vbatV as number);
  }
  const start = median(early);
  const stop = median(late);
  if (start === null || stop === null) return null;
  return { fromV: start, toV: stop, riseVPerCell: (stop - start) / ctx.profile.cells, overS: lastT - firstT };
}

/**
 * The first crossing of the limit, when the pack got there slowly: within 30 mV/cell of the
 * limit for the two minutes before (a contact spike jumps there from well below).
 */
function smoothClimb(
  ctx: DiagnosisContext,
  limitV: number,
): { t: number; fromV: number; toV: number } | null {
  const { samples, end, profile } = ctx;
  let cross = -1;
  for (let i = 0; i < end; i++) {
    const v = samples[i].vbatV;
    if (v !== undefined && v > limitV && (samples[i].ibatA ?? 0) >= 0) {
      cross = i;
      break;
    }
  }
  if (cross < 0) return null;
  const crossT = samples[cross].t;
  let minV = Infinity;
  let fromV: number | null = null;
  for (let i = cross; i >= 0 && samples[i].t >= crossT - CLIMB_WINDOW_S; i--) {
    const v = samples[i].vbatV;
    if (v === undefined) continue;
    if (v < minV) minV = v;
    fromV = v;
  }
  if (fromV === null || limitV - minV > SMOOTH_V_PER_CELL * profile.cells) return null;
  // Start of the climb for the evidence: the voltage ten minutes earlier.
  let startV = fromV;
  for (let i = cross; i >= 0 && samples[i].t >= crossT - 600; i--)
    if (samples[i].vbatV !== undefined) startV = samples[i].vbatV as number;
  return { t: crossT, fromV: startV, toV: samples[cross].vbatV as number };
}

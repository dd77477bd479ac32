/**
 * unknown: a fault that no cause module explains well. Carries what is known about the moment
 * so a person can start from there.
 */
import type { DiagnosisContext } from '../context';
import { fmtA, fmtC, fmtT, fmtV } from '../format';
import type { Cause } from '../types';

/** Below this best score a fault counts as unexplained. */
export const EXPLAINED_SCORE = 0.5;

export function scoreUnknown(ctx: DiagnosisContext, bestScore: number): Cause | null {
  if (!ctx.fault || bestScore >= EXPLAINED_SCORE) return null;
  const evidence = [`at ${fmtT(ctx.t)} ${ctx.fault.what.join('; ')}`];
  const phase = ctx.phases.length ? ctx.phases[ctx.phases.length - 1].phase : null;
  if (phase) evidence.push(`the phase was ${phase}`);
  const last = ctx.end > 0 ? ctx.samples[ctx.end - 1] : null;
  if (last) {
    const parts: string[] = [];
    if (last.vbatV !== undefined) parts.push(`pack ${fmtV(last.vbatV)}`);
    if (last.ibatA !== undefined) parts.push(`current ${fmtA(last.ibatA)}`);
    if (last.tempC !== undefined && Number.isFinite(last.tempC))
      parts.push(`temperature ${fmtC(last.tempC)}`);
    if (last.vinV !== undefined) parts.push(`source ${fmtV(last.vinV)}`);
    if (parts.length) evidence.push(`last reading: ${parts.join(', ')}`);
  }
  const recent = ctx.alarms
    .filter((a) => a.t >= ctx.t - 600)
    .map((a) => `${a.code} (${a.level}) at ${fmtT(a.t)}`);
  if (recent.length) evidence.push(`alarms in the 10 min before: ${recent.slice(-5).join(', ')}`);
  evidence.push('no cause module found a clear pattern in the history before this moment');
  return {
    code: 'unknown',
    confidence: Math.round(Math.max(0.1, 0.6 - bestScore) * 100) / 100,
    evidence,
    next: [
      'Read the Line feed around this moment: firmware messages (lines starting with #) often name the fault.',
      "Look up what the charger's fault output means in its datasheet: some chargers raise it for conditions no telemetry shows.",
      'Repeat the charge with the same pack and watch the Bench view; record it so the run can be compared.',
    ],
  };
}

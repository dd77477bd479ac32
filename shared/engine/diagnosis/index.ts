/**
 * Diagnosis: why the fault output lit. Pure: takes a run's samples and events, returns causes
 * ranked by confidence, each with evidence in numbers and next steps (docs/codes.md).
 * Every cause module reads only the history up to the diagnosed time.
 */
import { buildContext, type DiagnosisContext } from './context';
import { scoreConnection } from './causes/connection';
import { scoreDamagedCell } from './causes/damaged-cell';
import { scoreOvertemperature } from './causes/overtemperature';
import { scoreOvervoltage } from './causes/overvoltage';
import { scoreThermistorFault } from './causes/thermistor-fault';
import { scoreTimerExpired } from './causes/timer-expired';
import { scoreUnknown } from './causes/unknown';
import { scoreWeakSource } from './causes/weak-source';
import { CAUSE_CODES, type Cause, type Diagnosis, type DiagnosisInput } from './types';

export type { Cause, CauseCode, Diagnosis, DiagnosisInput } from './types';
export { CAUSE_CODES } from './types';
export { findFirstFault } from './context';
export { deliveredAh, expectedPackResistance } from './measures';

const CAUSE_MODULES: readonly ((ctx: DiagnosisContext) => Cause)[] = [
  scoreDamagedCell,
  scoreWeakSource,
  scoreOvertemperature,
  scoreThermistorFault,
  scoreTimerExpired,
  scoreOvervoltage,
  scoreConnection,
];

export function diagnose(input: DiagnosisInput): Diagnosis {
  const ctx = buildContext(input);
  const causes = CAUSE_MODULES.map((score) => score(ctx))
    .map((c) => ({ ...c, confidence: round2(c.confidence) }))
    .filter((c) => c.confidence > 0);
  const best = causes.reduce((m, c) => Math.max(m, c.confidence), 0);
  const unknown = scoreUnknown(ctx, best);
  if (unknown) causes.push(unknown);
  causes.sort(
    (a, b) => b.confidence - a.confidence || CAUSE_CODES.indexOf(a.code) - CAUSE_CODES.indexOf(b.code),
  );
  return { t: round3(ctx.t), causes };
}

const round2 = (x: number): number => Math.round(x * 100) / 100;
const round3 = (x: number): number => Math.round(x * 1000) / 1000;

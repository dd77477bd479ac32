/**
 * Board checks: each `expect` key of the profile measured from the run the way a test engineer
 * would (one module per key under keys/), compared with its `[min, max]`, and the run's verdict:
 * fail if a check fails or the charger faulted, incomplete if a check could not be measured,
 * else pass. Pure: samples and engine events in, the `taperline check --json` object out.
 */
import type { ExpectKey } from '../../chemistry/types';
import { buildCheckContext, fmtMin, type CheckContext } from './context';
import { measureChargeCurrent } from './keys/charge-current';
import { measureChargeTime } from './keys/charge-time';
import { measureEfficiency } from './keys/efficiency';
import { measureInputVoltage } from './keys/input-voltage';
import { measurePrecondition } from './keys/precondition';
import { measureRegulation } from './keys/regulation';
import { measureTempRise } from './keys/temp-rise';
import { measureTermination } from './keys/termination';
import { measureTimer } from './keys/timer';
import type { Check, CheckInput, CheckReport, Measurement, Verdict } from './types';

export type { Check, CheckBasis, CheckInput, CheckReport, CheckResult, Verdict } from './types';
export { VERDICTS } from './types';
export { nominalRange, DEFAULT_TOLERANCES } from './tolerances';
export { parseBoardLine, type BoardLine } from './board-line';

interface KeyModule {
  unit: string;
  measure: (ctx: CheckContext, limits: [number, number]) => Measurement;
}

/** In the order of the contract's key list; the order of the checks in every output. */
export const CHECK_MODULES: Readonly<Record<ExpectKey, KeyModule>> = {
  chargeCurrentA: { unit: 'A', measure: measureChargeCurrent },
  regulationV: { unit: 'V', measure: measureRegulation },
  terminationA: { unit: 'A', measure: measureTermination },
  preconditionA: { unit: 'A', measure: measurePrecondition },
  timerMin: { unit: 'min', measure: measureTimer },
  efficiency: { unit: '', measure: measureEfficiency },
  tempRiseC: { unit: '°C', measure: measureTempRise },
  inputV: { unit: 'V', measure: measureInputVoltage },
  chargeTimeMin: { unit: 'min', measure: measureChargeTime },
};

export const CHECK_CODES = Object.keys(CHECK_MODULES) as ExpectKey[];

export function runChecks(input: CheckInput): CheckReport {
  const ctx = buildCheckContext(input.profile, input.samples, input.events);
  const expect = input.profile.expect ?? {};
  const checks: Check[] = [];
  for (const code of CHECK_CODES) {
    const limits = expect[code];
    if (!limits) continue;
    checks.push(judge(code, limits, CHECK_MODULES[code].unit, CHECK_MODULES[code].measure(ctx, limits)));
  }
  return {
    verdict: verdictOf(checks, ctx.fault !== null),
    checks,
    board: input.board ?? null,
    fault: ctx.fault,
  };
}

function judge(code: ExpectKey, [min, max]: [number, number], unit: string, m: Measurement): Check {
  // Keys in the order of the contract's JSON: code, measured, min, max, unit, result, note.
  const check = (measured: number | null, result: Check['result'], note: string): Check => ({
    code,
    measured,
    min,
    max,
    unit,
    result,
    note,
    basis: m.basis,
  });
  if ('judged' in m) return check(null, m.judged, m.note);
  if (m.measured === null) return check(null, 'not-measured', m.note);
  const inside = m.measured >= min && m.measured <= max;
  const where = inside ? 'within' : m.measured < min ? 'below' : 'above';
  const shown = unit === 'min' ? fmtMin(m.measured * 60) : `${m.measured}${unit ? ' ' + unit : ''}`;
  return check(
    m.measured,
    inside ? 'pass' : 'fail',
    `${shown} ${where} [${min}, ${max}]${unit ? ' ' + unit : ''}: ${m.note}`,
  );
}

export function verdictOf(checks: readonly Pick<Check, 'result'>[], faulted: boolean): Verdict {
  if (faulted || checks.some((c) => c.result === 'fail')) return 'fail';
  if (checks.some((c) => c.result === 'not-measured')) return 'incomplete';
  return 'pass';
}

/** The first failing check, or the charger's fault, in words (batch tables, Runs view). */
export function firstFailure(report: CheckReport): string | null {
  const failed = report.checks.find((c) => c.result === 'fail');
  if (failed) return failed.code;
  return report.fault ? `charger fault at ${fmtMin(report.fault.t)}` : null;
}

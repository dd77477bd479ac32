/**
 * timerMin: time from the start of charging to the charger's safety-timer fault, the value the
 * timing capacitor sets. A charger fault is read as its timer when Taperline's timer alarm is
 * raised, or when the charger stopped while charging with nothing else to explain it (the
 * temperature inside the window, no over-voltage, not stuck in precondition).
 * With no timer fault the timer could not be timed; the check then only says whether the
 * timer acted too early or too late: a charge that ended before the lower limit without a
 * timer fault passes (the timer did not cut it short), one that charged past the upper limit
 * without a timer fault fails (the timer did not act).
 */
import { fmtMin, round, type CheckContext } from '../context';
import type { Measurement } from '../types';
import type { Phase } from '../../types';

const CHARGING: readonly Phase[] = ['precondition', 'cc', 'cv'];
/** Alarms that explain a fault other than the timer. */
const OTHER_CAUSES = new Set([
  'overtemp',
  'undertemp',
  'overvoltage',
  'precondition-timeout',
  'sensor-fault',
]);

export function measureTimer(ctx: CheckContext, limits: [number, number]): Measurement {
  const start = ctx.phases.find((s) => CHARGING.includes(s.phase));
  if (!start) return { measured: null, basis: null, note: 'the charger never started charging' };
  // The board's own timer shows on its fault output; Taperline's timer alarm (the profile's
  // timerMin) also puts the run in the fault phase, so the phase is used only without a pin.
  const reportsPin = ctx.samples.some((x) => x.flt !== undefined);
  const pinT = ctx.samples.find((x) => x.flt === true)?.t;
  const faultT = reportsPin ? pinT : ctx.fault?.t;
  if (faultT !== undefined) {
    const before = ctx.alarms.filter((a) => a.t <= faultT + 2 * ctx.typicalDtS);
    const timerAlarm = before.some((a) => a.code === 'timer');
    const other = before.find((a) => OTHER_CAUSES.has(a.code));
    const phaseAtFault = [...ctx.phases].reverse().find((x) => x.startT < faultT && x.phase !== 'fault');
    if (!timerAlarm && (other || phaseAtFault?.phase === 'precondition')) {
      return {
        measured: null,
        basis: null,
        note: `the charger faulted at ${fmtMin(faultT)} for another reason (${other ? other.code : 'stuck in precondition'}), not its timer`,
      };
    }
    const spanS = faultT - start.startT;
    return {
      measured: round(spanS / 60, 2),
      basis: { fromT: start.startT, toT: faultT, samples: countBetween(ctx, start.startT, faultT) },
      note:
        `from the start of charging at ${fmtMin(start.startT)} to the charger's ${reportsPin ? 'fault output' : 'fault'} at ${fmtMin(faultT)}` +
        (timerAlarm ? ' (timer alarm raised)' : ' (stopped while charging, nothing else to explain it)'),
    };
  }
  const done = ctx.phases.find((s) => s.phase === 'done');
  const chargedS = (done ? done.startT : ctx.endT) - start.startT;
  const basis = {
    fromT: start.startT,
    toT: start.startT + chargedS,
    samples: countBetween(ctx, start.startT, start.startT + chargedS),
  };
  if (chargedS / 60 > limits[1])
    return {
      measured: null,
      basis,
      judged: 'fail',
      note: `charged for ${fmtMin(chargedS)}, past the ${limits[1]} min upper limit, and the timer never acted`,
    };
  if (done && chargedS / 60 < limits[0])
    return {
      measured: null,
      basis,
      judged: 'pass',
      note: `no timer fault: the charge ended at ${fmtMin(chargedS)}, before the timer's ${limits[0]} min lower limit`,
    };
  return {
    measured: null,
    basis: null,
    note: done
      ? `the charge ended at ${fmtMin(chargedS)}, inside the timer's range, so the timer could not be timed`
      : `the run ended after ${fmtMin(chargedS)} of charging, before the charge ended or the timer ran out`,
  };
}

function countBetween(ctx: CheckContext, fromT: number, toT: number): number {
  let n = 0;
  for (const s of ctx.samples) if (s.t >= fromT && s.t <= toT) n++;
  return n;
}

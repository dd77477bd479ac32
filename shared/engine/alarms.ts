/**
 * Alarm bookkeeping (docs/codes.md): each code has a level, a raise delay and a clear
 * delay. A condition must hold for its raise delay of sample time before the alarm is raised,
 * once per episode; the clear condition (with hysteresis, decided by the caller) must hold for
 * the clear delay before `alarm-clear`. The engine decides the conditions; this only debounces.
 */
import { ALARM_CODES, type AlarmCode, type AlarmEvent, type AlarmLevel } from './types';

interface AlarmRule {
  level: AlarmLevel;
  raiseAfterS: number;
  clearAfterS: number;
}

/**
 * Levels from docs/codes.md: critical = someone must act now. A fading source
 * (input-low) and a lost line (silence) are warnings. Delays: 3 s filters a noisy reading of a
 * sensor (common practice); pins and timers need none; input-low waits 10 s so a passing cloud
 * does not raise it.
 */
export const ALARM_RULES: Readonly<Record<AlarmCode, AlarmRule>> = {
  overtemp: { level: 'critical', raiseAfterS: 3, clearAfterS: 10 },
  undertemp: { level: 'warn', raiseAfterS: 3, clearAfterS: 10 },
  overvoltage: { level: 'critical', raiseAfterS: 2, clearAfterS: 5 },
  stall: { level: 'warn', raiseAfterS: 0, clearAfterS: 5 },
  'precondition-timeout': { level: 'critical', raiseAfterS: 0, clearAfterS: 5 },
  timer: { level: 'critical', raiseAfterS: 0, clearAfterS: 0 },
  'input-low': { level: 'warn', raiseAfterS: 10, clearAfterS: 10 },
  silence: { level: 'warn', raiseAfterS: 0, clearAfterS: 0 },
  'fault-pin': { level: 'critical', raiseAfterS: 0, clearAfterS: 3 },
  'reverse-current': { level: 'warn', raiseAfterS: 5, clearAfterS: 5 },
  // A blind temperature sensor while charging: critical, after the same 3 s noise filter as overtemp.
  'sensor-fault': { level: 'critical', raiseAfterS: 3, clearAfterS: 10 },
  // Raised as a warning on repeated contact evidence, escalated to critical when it keeps
  // repeating within minutes (see CONTACT_* in run-engine); cleared after a quiet window.
  contact: { level: 'warn', raiseAfterS: 0, clearAfterS: 0 },
};

export const ALARM_INDEX: Readonly<Record<AlarmCode, number>> = Object.fromEntries(
  ALARM_CODES.map((code, i) => [code, i]),
) as Record<AlarmCode, number>;

/** What `step` asks the engine to do. */
export const KEEP = 0;
export const RAISE = 1;
export const CLEAR = -1;

export class AlarmBook {
  private readonly active: (AlarmEvent | null)[] = ALARM_CODES.map(() => null);
  private readonly raiseSince = new Float64Array(ALARM_CODES.length).fill(NaN);
  private readonly clearSince = new Float64Array(ALARM_CODES.length).fill(NaN);
  private readonly raiseAfter = Float64Array.from(ALARM_CODES, (c) => ALARM_RULES[c].raiseAfterS);
  private readonly clearAfter = Float64Array.from(ALARM_CODES, (c) => ALARM_RULES[c].clearAfterS);
  /**
   * Bit i set while alarm i is raised or its raising condition waits out its delay. An alarm
   * that is neither has nothing to step while its raising condition is false, so the engine
   * skips it (most alarms, most samples).
   */
  private engaged = 0;
  /** Bit i set while alarm i is raised. */
  private activeBits = 0;

  /** Alarm i must be stepped: its raising condition holds, or it is raised or pending. */
  needsStep(i: number, raise: boolean): boolean {
    return raise || (this.engaged & (1 << i)) !== 0;
  }

  /**
   * One evaluation of alarm i at time t. `raise`: the raising condition holds; `clear`: the
   * clearing condition holds (both false = not enough data to tell, nothing changes).
   */
  step(i: number, t: number, raise: boolean, clear: boolean): number {
    if (this.active[i] === null) {
      if (!raise) {
        this.raiseSince[i] = NaN;
        this.engaged &= ~(1 << i);
        return KEEP;
      }
      if (this.raiseSince[i] !== this.raiseSince[i]) {
        this.raiseSince[i] = t;
        this.engaged |= 1 << i;
      }
      return t - this.raiseSince[i] >= this.raiseAfter[i] ? RAISE : KEEP;
    }
    if (!clear) {
      this.clearSince[i] = NaN;
      return KEEP;
    }
    if (this.clearSince[i] !== this.clearSince[i]) this.clearSince[i] = t;
    return t - this.clearSince[i] >= this.clearAfter[i] ? CLEAR : KEEP;
  }

  /** The raised alarm i, or null. */
  get(i: number): AlarmEvent | null {
    return this.active[i];
  }

  /** The raising condition of alarm i holds and waits out its raise delay. */
  isPending(i: number): boolean {
    return this.active[i] === null && this.raiseSince[i] === this.raiseSince[i];
  }

  isActive(i: number): boolean {
    return (this.activeBits & (1 << i)) !== 0;
  }

  /** Any of the alarms whose bits (1 << i) are set in mask is raised. */
  anyActive(mask: number): boolean {
    return (this.activeBits & mask) !== 0;
  }

  raised(i: number, event: AlarmEvent): void {
    this.active[i] = event;
    this.raiseSince[i] = NaN;
    this.clearSince[i] = NaN;
    this.engaged |= 1 << i;
    this.activeBits |= 1 << i;
  }

  cleared(i: number): void {
    this.active[i] = null;
    this.raiseSince[i] = NaN;
    this.clearSince[i] = NaN;
    this.engaged &= ~(1 << i);
    this.activeBits &= ~(1 << i);
  }

  /** The raised alarms, one per code, in code order. */
  list(): AlarmEvent[] {
    const out: AlarmEvent[] = [];
    for (const a of this.active) if (a !== null) out.push(a);
    return out;
  }
}

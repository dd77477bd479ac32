/**
 * Places samples on the run's time axis: seconds since the first sample, on the device
 * clock when lines carry `t`, else on the receive clock (docs/cli.md).
 *
 * The device clock of a board on a long cable is not always right, so each device time is
 * checked against the last accepted one and the typical sample interval (the median of the
 * recent intervals, robust to the odd hole or glitch):
 * - in step (not back, not further ahead than the interval and the receive clock allow):
 *   the sample is placed at its own time;
 * - otherwise the line is a glitch: it is placed at the last time (it adds no elapsed time)
 *   and remembered as a candidate. When the next line continues the candidate's clock
 *   instead of the old one, the device really rebooted (time back near zero or far back) or
 *   its clock really moved on (a hole in a file): the run clock is bridged and the candidate
 *   is no longer counted as a glitch. A single corrupt time, or a line out of order, never
 *   becomes elapsed time.
 *
 * The receive clock: a live port's is the host's (epoch seconds); a replayed file has none,
 * only a line counter (the reader gives `index × interval`, starting at 0). A receive clock
 * that starts before 2001-09-09 (1e9 s) is taken to be such a counter (mode `auto`).
 */

/** How far ahead of the last time a step may go: this many typical intervals (common practice: out-of-order pairs and a few lost lines stay well inside it). */
const JUMP_INTERVALS = 8;
/** Intervals kept for the median. */
const WINDOW = 31;
/** The median is recomputed every this many accepted intervals (it moves slowly; keeps the per-line cost low). */
const RECOMPUTE_EVERY = 32;
/** Before the interval is known (a file's first lines), a longer step must be confirmed by the next line. */
const FIRST_STEP_LIMIT_S = 600;
/** A receive clock below this is a replay's line counter, not epoch seconds. */
const EPOCH_FLOOR_S = 1e9;

export type ReceiveClock = 'host' | 'lines' | 'auto';

/** What the last `place` decided about its line. */
export const PLACED_OK = 0;
export const PLACED_GLITCH = 1;
export const PLACED_RESET = 2;

export class RunTimeBase {
  private started = false;
  private useDeviceClock = false;
  private hostClock = true;
  /** Run time t = deviceS − baseDeviceS + baseT (rebased at each reboot, so a huge corrupt first time cannot cost precision). */
  private baseDeviceS = 0;
  private baseT = 0;
  private firstRxS = 0;
  /** Device time and receive time of the last line in step with the clock. */
  private lastDeviceS = 0;
  private lastDeviceRxS = 0;
  private lastT = 0;
  private lastRxS = 0;
  /** A line that did not fit: if the next one continues its clock, the clock moved. */
  private candidateDeviceS = NaN;
  private candidateRxS = 0;
  private readonly intervals = new Float64Array(WINDOW);
  private readonly scratch = new Float64Array(WINDOW);
  private intervalCount = 0;
  /** Where the next interval goes in the ring. */
  private nextInterval = 0;
  private sinceRecompute = 0;
  private medianS = NaN;

  /** Lines whose device time was out of order or corrupt (placed without elapsed time). */
  glitches = 0;
  /** Reboots the device confirmed (its clock went back and continued from there; bridged). */
  resets = 0;
  /** PLACED_OK, PLACED_GLITCH or PLACED_RESET for the last placed line. */
  lastKind = PLACED_OK;

  constructor(private readonly mode: ReceiveClock = 'auto') {}

  /** Typical interval between samples (median of the recent ones), NaN until known. */
  get typicalIntervalS(): number {
    return this.medianS;
  }

  /** Run time of a sample received at rxS, carrying deviceS when the line had `t`. */
  place(rxS: number, deviceS: number | undefined): number {
    this.lastKind = PLACED_OK;
    if (!this.started) {
      this.started = true;
      this.hostClock = this.mode === 'host' || (this.mode === 'auto' && rxS >= EPOCH_FLOOR_S);
      this.useDeviceClock = deviceS !== undefined && Number.isFinite(deviceS);
      this.baseDeviceS = this.useDeviceClock ? (deviceS as number) : 0;
      this.baseT = 0;
      this.firstRxS = rxS;
      this.lastDeviceS = this.baseDeviceS;
      this.lastDeviceRxS = rxS;
      this.lastRxS = rxS;
      this.lastT = 0;
      return 0;
    }
    let t: number;
    if (!this.useDeviceClock) {
      t = rxS - this.firstRxS;
      if (t > this.lastT) this.learn(t - this.lastT);
    } else if (deviceS === undefined) {
      // A line without `t` in a run on the device clock: what the receive clock saw pass.
      t = this.lastT + Math.max(0, rxS - this.lastRxS);
    } else {
      t = this.placeDevice(rxS, deviceS);
    }
    if (t < this.lastT) t = this.lastT;
    this.lastT = t;
    this.lastRxS = rxS;
    return t;
  }

  private placeDevice(rxS: number, deviceS: number): number {
    const stepS = deviceS - this.lastDeviceS;
    const candS = this.candidateDeviceS;
    if (stepS >= 0 && stepS <= this.allowedStepS(rxS - this.lastDeviceRxS)) {
      this.accept(deviceS, rxS, stepS);
      if (candS === candS) this.candidateDeviceS = NaN;
      return deviceS - this.baseDeviceS + this.baseT;
    }
    const fromCandS = deviceS - candS;
    // A clock that moved on keeps its new pace: a step no larger than the jump itself also continues it.
    const candStepS = Math.abs(candS - this.lastDeviceS);
    if (
      candS === candS &&
      fromCandS >= 0 &&
      fromCandS <= Math.max(this.allowedStepS(rxS - this.candidateRxS), candStepS)
    ) {
      // The device confirmed the candidate's clock: a reboot (back), or its clock moved on (a hole
      // in a file; not counted, the gap says it).
      this.glitches--;
      if (candS < this.lastDeviceS) {
        this.resets++;
        this.lastKind = PLACED_RESET;
      }
      const candT = this.lastT + this.bridgeS(candS, this.candidateRxS);
      this.baseDeviceS = candS;
      this.baseT = candT;
      this.candidateDeviceS = NaN;
      this.accept(deviceS, rxS, fromCandS);
      return deviceS - this.baseDeviceS + this.baseT;
    }
    // Out of order, or far ahead of what the clocks allow: this line's time is a glitch.
    this.glitches++;
    this.lastKind = PLACED_GLITCH;
    this.candidateDeviceS = Number.isFinite(deviceS) ? deviceS : NaN;
    this.candidateRxS = rxS;
    return this.lastT;
  }

  /**
   * Run time between the last line in step and a confirmed new clock's first line. Forward,
   * the device's own clock says how much time passed (a hole; a host clock can lag behind it
   * when lines were buffered or replayed fast). Back (a reboot), a host clock measured the
   * bridge; a file can only assume one typical interval.
   */
  private bridgeS(candS: number, candRxS: number): number {
    if (candS > this.lastDeviceS) return candS - this.lastDeviceS;
    if (this.hostClock) return Math.max(0, candRxS - this.lastDeviceRxS);
    return this.medianS === this.medianS ? this.medianS : 0;
  }

  /** Largest step ahead a line may make, given what the receive clock saw pass. */
  private allowedStepS(rxStepS: number): number {
    const m = this.medianS;
    if (m !== m) return this.hostClock ? Math.max(FIRST_STEP_LIMIT_S, rxStepS + 2) : FIRST_STEP_LIMIT_S;
    const byInterval = JUMP_INTERVALS * m;
    if (!this.hostClock) return byInterval;
    return Math.max(byInterval, Math.max(0, rxStepS) + Math.max(2, 2 * m));
  }

  private accept(deviceS: number, rxS: number, stepS: number): void {
    this.lastDeviceS = deviceS;
    this.lastDeviceRxS = rxS;
    if (stepS > 0) this.learn(stepS);
  }

  private learn(stepS: number): void {
    this.intervals[this.nextInterval] = stepS;
    this.nextInterval = this.nextInterval === WINDOW - 1 ? 0 : this.nextInterval + 1;
    this.intervalCount++;
    if (++this.sinceRecompute < RECOMPUTE_EVERY && this.medianS === this.medianS) return;
    if (this.intervalCount < 3) return;
    this.sinceRecompute = 0;
    const n = Math.min(this.intervalCount, WINDOW);
    // Insertion sort into a reused buffer: no allocation per line.
    const a = this.scratch;
    for (let i = 0; i < n; i++) {
      const x = this.intervals[i];
      let j = i - 1;
      while (j >= 0 && a[j] > x) {
        a[j + 1] = a[j];
        j--;
      }
      a[j + 1] = x;
    }
    this.medianS = a[n >> 1];
  }

  /** Run time of a moment with no sample (silence checks, gaps), from the receive clock. */
  at(rxS: number): number {
    if (!this.started) return 0;
    return this.lastT + Math.max(0, rxS - this.lastRxS);
  }

  get hasStarted(): boolean {
    return this.started;
  }
}

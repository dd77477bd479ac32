/**
 * Internal resistance from current steps: when the current changes by more than a threshold
 * between two adjacent samples, the voltage change over the current change is the pack's
 * resistance (R = ΔV/ΔI, Ohm's law; common practice for DC-step IR measurement). The median of
 * the recent steps rejects a step that coincided with a set-point change.
 */

const KEPT_STEPS = 9;

export class StepResistance {
  private readonly steps = new Float64Array(KEPT_STEPS);
  private readonly scratch = new Float64Array(KEPT_STEPS);
  private count = 0;
  private next = 0;
  /** Median of the recent steps, ohms; NaN until one step was seen. */
  ohm = NaN;

  constructor(
    private readonly minStepA: number,
    private readonly maxDtS: number,
  ) {}

  add(dtS: number, v0V: number, v1V: number, i0A: number, i1A: number): void {
    if (!(dtS > 0) || dtS > this.maxDtS) return;
    const dI = i1A - i0A;
    if (!(Math.abs(dI) >= this.minStepA)) return;
    const r = (v1V - v0V) / dI;
    // A step whose voltage moved against the current is another effect (a set-point change, a load): skip it.
    if (!(r > 0) || !Number.isFinite(r)) return;
    this.steps[this.next] = r;
    this.next = (this.next + 1) % KEPT_STEPS;
    if (this.count < KEPT_STEPS) this.count++;
    this.ohm = this.median();
  }

  private median(): number {
    const n = this.count;
    const a = this.scratch;
    for (let i = 0; i < n; i++) a[i] = this.steps[i];
    a.subarray(0, n).sort();
    return n % 2 === 1 ? a[(n - 1) >> 1] : 0.5 * (a[n / 2 - 1] + a[n / 2]);
  }
}

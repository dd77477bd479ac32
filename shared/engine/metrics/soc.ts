/**
 * State of charge by coulomb counting from an anchor: SOC = SOC0 + Q/C_rated (MathWorks
 * "SOC Estimator (Coulomb Counting)"; Pebble OS fuel-gauge docs; published).
 *
 * A voltage under charge current is not an open-circuit voltage, so no voltage table is used
 * for the start. Two anchors are sound: a pack found below its precondition threshold is empty
 * (0 %; common practice: the threshold sits at or under the discharge cut-off), and a charge
 * that reached termination is full (100 %; BU-409 / Zufek: termination = full). Until an anchor
 * is seen, or without a stated capacity, SoC is unknown.
 */
export class SocEstimator {
  private anchorPct = NaN;
  private anchorAh = 0;

  constructor(
    private readonly capacityAh: number,
    private readonly capacityKnown: boolean,
  ) {}

  anchorEmpty(ah: number): void {
    if (this.anchorPct === this.anchorPct) return;
    this.anchorPct = 0;
    this.anchorAh = ah;
  }

  /** A state of charge known from elsewhere (a rested pack measured by the user). */
  anchorAt(pct: number, ah: number): void {
    this.anchorPct = pct;
    this.anchorAh = ah;
  }

  anchorFull(ah: number): void {
    this.anchorPct = 100;
    this.anchorAh = ah;
  }

  pct(ah: number): number | null {
    if (!this.capacityKnown || this.anchorPct !== this.anchorPct) return null;
    const pct = this.anchorPct + ((ah - this.anchorAh) / this.capacityAh) * 100;
    if (pct !== pct) return null;
    return pct < 0 ? 0 : pct > 100 ? 100 : pct;
  }
}

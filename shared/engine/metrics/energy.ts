/**
 * Charge and energy by trapezoid integration between adjacent samples (coulomb counting:
 * Q = ∫ I dt, Ah = (1/3600)·∫ I[A] dt[s]; MathWorks "SOC Estimator (Coulomb Counting)", Pebble OS
 * fuel-gauge docs, published definition).
 */

const S_PER_H = 3600;

export class EnergyCounter {
  /** Net charge into the pack, Ah (a discharge counts negative). */
  ah = 0;
  /** Net energy into the pack, Wh. */
  wh = 0;
  /** Energy drawn from the source (vin·iin), Wh, over the intervals where it is reported. */
  sourceWh = 0;
  /** Pack energy over those same intervals, for the conversion efficiency. */
  packWhWithSource = 0;
  private sourceSeen = false;

  /** One interval of dtS between two samples (0 = earlier, 1 = later). NaN values skip their part. */
  add(
    dtS: number,
    i0A: number,
    i1A: number,
    v0V: number,
    v1V: number,
    vin0V: number,
    vin1V: number,
    iin0A: number,
    iin1A: number,
  ): void {
    if (!(dtS > 0)) return;
    const dAh = ((i0A + i1A) * 0.5 * dtS) / S_PER_H;
    if (dAh === dAh) this.ah += dAh;
    const dWh = ((v0V * i0A + v1V * i1A) * 0.5 * dtS) / S_PER_H;
    if (dWh === dWh) this.wh += dWh;
    const dSrcWh = ((vin0V * iin0A + vin1V * iin1A) * 0.5 * dtS) / S_PER_H;
    if (dSrcWh === dSrcWh) {
      this.sourceSeen = true;
      this.sourceWh += dSrcWh;
      if (dWh === dWh) this.packWhWithSource += dWh;
    }
  }

  sourceWhOrNull(): number | null {
    return this.sourceSeen ? this.sourceWh : null;
  }

  /** Pack Wh / source Wh over the intervals where both are known; null until the source delivered energy. */
  efficiency(): number | null {
    if (!this.sourceSeen || !(this.sourceWh > 1e-9)) return null;
    const e = this.packWhWithSource / this.sourceWh;
    // A ratio outside 0..1 is not an efficiency (a pack discharging, sensors that disagree): clamp it.
    if (!Number.isFinite(e)) return null;
    return e < 0 ? 0 : e > 1 ? 1 : e;
  }
}

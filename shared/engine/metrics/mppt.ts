/**
 * MPPT tracking error: how far the source voltage sits from the input set point while a panel
 * charges the pack, |vin − inputSetpointV| / inputSetpointV, time-weighted over the run.
 */
export class MpptTracking {
  private errorS = 0;
  private timeS = 0;

  add(dtS: number, vinV: number, setpointV: number): void {
    if (!(dtS > 0) || vinV !== vinV) return;
    this.errorS += (Math.abs(vinV - setpointV) / setpointV) * dtS;
    this.timeS += dtS;
  }

  fraction(): number | null {
    return this.timeS > 0 ? this.errorS / this.timeS : null;
  }
}

/**
 * Places samples on the run's time axis: seconds since the first sample, on the device
 * clock when lines carry `t`, else on the receive clock (docs/cli.md).
 *
 * A device that reboots restarts its clock; the run time must not go backwards, so a
 * reset is bridged with the receive time that passed.
 */
export class RunTimeBase {
  private started = false;
  private useDeviceClock = false;
  private firstDeviceS = 0;
  private firstRxS = 0;
  private deviceOffsetS = 0;
  private lastDeviceS = 0;
  private lastT = 0;
  private lastRxS = 0;

  /** Run time of a sample received at rxS, carrying deviceS when the line had `t`. */
  place(rxS: number, deviceS: number | undefined): number {
    if (!this.started) {
      this.started = true;
      this.useDeviceClock = deviceS !== undefined;
      this.firstDeviceS = deviceS ?? 0;
      this.firstRxS = rxS;
      this.lastDeviceS = deviceS ?? 0;
      this.lastRxS = rxS;
      this.lastT = 0;
      return 0;
    }
    let t: number;
    if (this.useDeviceClock && deviceS !== undefined) {
      if (deviceS < this.lastDeviceS) {
        // The device clock went back: a reboot. Continue from the last time plus what the host saw pass.
        const bridgeS = Math.max(0, rxS - this.lastRxS);
        this.deviceOffsetS = this.lastT + bridgeS - (deviceS - this.firstDeviceS);
      }
      t = deviceS - this.firstDeviceS + this.deviceOffsetS;
      this.lastDeviceS = deviceS;
    } else {
      t = this.useDeviceClock ? this.lastT + Math.max(0, rxS - this.lastRxS) : rxS - this.firstRxS;
    }
    if (t < this.lastT) t = this.lastT;
    this.lastT = t;
    this.lastRxS = rxS;
    return t;
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

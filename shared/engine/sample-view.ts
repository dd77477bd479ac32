/**
 * One sample reduced to plain numbers (NaN = not reported), refilled in place for every
 * sample so the hot path allocates nothing.
 */
import type { TimedSample } from './types';

export const SRC_UNKNOWN = 0;
export const SRC_PANEL = 1;
export const SRC_ADAPTER = 2;
export const SRC_NONE = 3;

/** Tri-state of a 0/1 status pin: not reported, deasserted, asserted. */
export const PIN_UNKNOWN = -1;

export class SampleView {
  t = 0;
  vbatV = NaN;
  vPerCell = NaN;
  ibatA = NaN;
  tempC = NaN;
  /** Raw thermistor reading when the line carried `ntc`. */
  ntcRaw = NaN;
  vinV = NaN;
  iinA = NaN;
  chg = PIN_UNKNOWN;
  flt = PIN_UNKNOWN;
  src = SRC_UNKNOWN;
  /** See sourceAbsent; worked out once per sample, asked several times. */
  private absent = false;

  constructor(private readonly cells: number) {}

  fill(s: TimedSample): void {
    this.t = s.t;
    this.vbatV = s.vbatV ?? NaN;
    this.vPerCell = this.vbatV / this.cells;
    this.ibatA = s.ibatA ?? NaN;
    this.tempC = s.tempC ?? NaN;
    this.ntcRaw = s.ntcRaw ?? NaN;
    this.vinV = s.vinV ?? NaN;
    this.iinA = s.iinA ?? NaN;
    this.chg = s.chg === undefined ? PIN_UNKNOWN : s.chg ? 1 : 0;
    this.flt = s.flt === undefined ? PIN_UNKNOWN : s.flt ? 1 : 0;
    const src = s.src;
    this.src =
      src === undefined
        ? SRC_UNKNOWN
        : src === 'panel'
          ? SRC_PANEL
          : src === 'adapter'
            ? SRC_ADAPTER
            : SRC_NONE;
    this.absent = this.src === SRC_NONE || this.vinV < this.vbatV; // the comparison is false when either is NaN
  }

  /** The source is known to be absent or too weak to charge: src=none, or vin under the pack. */
  sourceAbsent(): boolean {
    return this.absent;
  }

  /** A source is present for all we know (reported present, or not reported at all). */
  sourcePresent(): boolean {
    return !this.absent;
  }
}

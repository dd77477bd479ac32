/** What a trend panel plots: windows of points per quantity, and the phase spans behind them. */
import type { PhaseSpan } from './phase-spans';

/** Plotted quantities: the canonical sample fields plus source power (vin * iin). */
export type PlotField = 'vbatV' | 'ibatA' | 'tempC' | 'vinV' | 'powerW';
export const PLOT_FIELDS: readonly PlotField[] = ['vbatV', 'ibatA', 'tempC', 'vinV', 'powerW'];

export interface PlotPoint {
  x: number;
  y: number | null;
}

export interface TrendSource {
  /** First and last time with data (seconds of run), or null before the first sample. */
  extent(): { t0: number; t1: number } | null;
  /** At most about `maxPoints` points of `field` covering [x0, x1], time-ordered. */
  points(field: PlotField, x0: number, x1: number, maxPoints: number): PlotPoint[];
  spans(): readonly PhaseSpan[];
  /** The panel's window moved; a recorded source may fetch finer data and call `onData`. */
  windowChanged?(x0: number, x1: number): void;
  /** Set by the panel: call when new data arrived that the current window should show. */
  onData?: () => void;
}

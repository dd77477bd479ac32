/** Plotting series: ring buffers for live history and decimation (LTTB, min-max) for drawing. */
export { RingBuffer, type SeriesColumns } from './ring-buffer';
export { lttb, lttbIndices } from './lttb';
export { minMaxDecimate, minMaxIndices } from './min-max';
export type { SeriesInput, XYColumns, XYPoint } from './input';

/** The two forms a series may come in: an array of points, or x and y columns. */
export interface XYPoint {
  x: number;
  y: number;
}

export interface XYColumns {
  x: ArrayLike<number>;
  y: ArrayLike<number>;
}

export type SeriesInput = readonly XYPoint[] | XYColumns;

/** Columns of a series without copying when it already is columns. */
export function columnsOf(data: SeriesInput): XYColumns {
  if (!Array.isArray(data)) return data as XYColumns;
  const points = data as readonly XYPoint[];
  const x = new Float64Array(points.length);
  const y = new Float64Array(points.length);
  for (let i = 0; i < points.length; i++) {
    x[i] = points[i].x;
    y[i] = points[i].y;
  }
  return { x, y };
}

/** Picks the points at `indices`, in the input's own form. */
export function pick<T extends SeriesInput>(
  data: T,
  indices: Uint32Array,
): T extends readonly XYPoint[] ? XYPoint[] : { x: Float64Array; y: Float64Array };
export function pick(
  data: SeriesInput,
  indices: Uint32Array,
): XYPoint[] | { x: Float64Array; y: Float64Array } {
  if (Array.isArray(data)) {
    const points = data as readonly XYPoint[];
    const out: XYPoint[] = new Array(indices.length);
    for (let k = 0; k < indices.length; k++) out[k] = points[indices[k]];
    return out;
  }
  const cols = data as XYColumns;
  const x = new Float64Array(indices.length);
  const y = new Float64Array(indices.length);
  for (let k = 0; k < indices.length; k++) {
    x[k] = cols.x[indices[k]];
    y[k] = cols.y[indices[k]];
  }
  return { x, y };
}

export function lengthOf(data: SeriesInput): number {
  return Array.isArray(data)
    ? data.length
    : Math.min((data as XYColumns).x.length, (data as XYColumns).y.length);
}

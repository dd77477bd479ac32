/** What a sparkline shows, for its caption: the value range and the time it covers. */
export interface SparkBounds {
  lo: number;
  hi: number;
  spanS: number;
}

/**
 * A small pack-voltage trace for a Rack tile, drawn straight on a canvas (no chart library).
 * `minSpan` keeps a few millivolts of noise from filling the height (as the Bench charts do).
 */
export function drawSparkline(
  canvas: HTMLCanvasElement,
  t: Float64Array,
  y: Float32Array | Float64Array,
  ink: string,
  minSpan = 0,
): SparkBounds | null {
  const dpr = window.devicePixelRatio || 1;
  const cssW = canvas.clientWidth || 160;
  const cssH = canvas.clientHeight || 36;
  if (canvas.width !== Math.round(cssW * dpr)) canvas.width = Math.round(cssW * dpr);
  if (canvas.height !== Math.round(cssH * dpr)) canvas.height = Math.round(cssH * dpr);
  const ctx = canvas.getContext('2d');
  if (!ctx) return null;
  ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
  ctx.clearRect(0, 0, cssW, cssH);
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < y.length; i++) {
    const v = y[i];
    if (v !== v) continue;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  if (!Number.isFinite(lo) || t.length < 2) return null;
  const dataLo = lo;
  const dataHi = hi;
  const wanted = Math.max(minSpan, 1e-6);
  if (hi - lo < wanted) {
    const mid = (lo + hi) / 2;
    lo = mid - Math.max(wanted, 0.1) / 2;
    hi = mid + Math.max(wanted, 0.1) / 2;
  }
  const t0 = t[0];
  const span = Math.max(1e-9, t[t.length - 1] - t0);
  // One point per pixel column is all a sparkline can show.
  const step = Math.max(1, Math.floor(y.length / cssW));
  ctx.strokeStyle = ink;
  ctx.lineWidth = 1.4;
  ctx.beginPath();
  let started = false;
  for (let i = 0; i < y.length; i += step) {
    const v = y[i];
    if (v !== v) continue;
    const px = ((t[i] - t0) / span) * (cssW - 2) + 1;
    const py = cssH - 2 - ((v - lo) / (hi - lo)) * (cssH - 4);
    if (started) ctx.lineTo(px, py);
    else ctx.moveTo(px, py);
    started = true;
  }
  ctx.stroke();
  return { lo: dataLo, hi: dataHi, spanS: t[t.length - 1] - t0 };
}

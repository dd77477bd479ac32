/** A small pack-voltage trace for a Rack tile, drawn straight on a canvas (no chart library). */
export function drawSparkline(
  canvas: HTMLCanvasElement,
  t: Float64Array,
  y: Float32Array | Float64Array,
  ink: string,
): void {
  const dpr = window.devicePixelRatio || 1;
  const cssW = canvas.clientWidth || 160;
  const cssH = canvas.clientHeight || 36;
  if (canvas.width !== Math.round(cssW * dpr)) canvas.width = Math.round(cssW * dpr);
  if (canvas.height !== Math.round(cssH * dpr)) canvas.height = Math.round(cssH * dpr);
  const ctx = canvas.getContext('2d');
  if (!ctx) return;
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
  if (!Number.isFinite(lo) || t.length < 2) return;
  if (hi - lo < 1e-6) {
    lo -= 0.05;
    hi += 0.05;
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
}

/**
 * Stacked Chart.js trends on one shared run-time axis, one chart per physical quantity.
 *
 * Kept fast as the Chart.js "Performance" documentation advises: no animation, no parsing, no points, fixed scale bounds
 * set here, data decimated by the source to about two points per pixel column, and at most
 * MAX_REDRAWS_PER_SECOND redraws (requestAnimationFrame plus a time gate). Zoom and pan move
 * the x scale's min/max directly: wheel or drag on a chart, arrow and +/- keys, or the view's
 * buttons.
 */
import {
  Chart,
  LineController,
  LineElement,
  LinearScale,
  PointElement,
  type ChartDataset,
  type Scale,
} from 'chart.js';
import { formatRunTime } from '../format';
import { formatRunClock } from '@shared/engine/time-format';
import { phaseBandsPlugin, type GapSpan, type TimeMarker } from './phase-bands-plugin';
import type { PlotField, PlotPoint, TrendSource } from './trend-source';

Chart.register(LineController, LineElement, PointElement, LinearScale);

export interface SeriesSpec {
  field: PlotField;
  label: string;
  color: string;
  dash?: number[];
}
export interface AxisSpec {
  /** Axis title with its unit, e.g. `Pack voltage [V]`. */
  title: string;
  series: SeriesSpec[];
}
export interface QuantitySpec {
  id: string;
  left: AxisSpec;
  right?: AxisSpec;
}

/** The Bench view's charts, organised by physical quantity, each with its unit on the axis. */
export const BENCH_QUANTITIES: QuantitySpec[] = [
  {
    id: 'vbat',
    left: {
      title: 'Pack voltage [V]',
      series: [{ field: 'vbatV', label: 'Pack voltage', color: '#1f3f6e' }],
    },
  },
  {
    id: 'ibat',
    left: {
      title: 'Charge current [A]',
      series: [{ field: 'ibatA', label: 'Charge current', color: '#8a3a10' }],
    },
  },
  {
    id: 'temp',
    left: {
      title: 'Temperature [°C]',
      series: [{ field: 'tempC', label: 'Pack temperature', color: '#6e1f4a' }],
    },
  },
  {
    id: 'source',
    left: {
      title: 'Source voltage [V]',
      series: [{ field: 'vinV', label: 'Source voltage', color: '#2c5a36' }],
    },
    right: {
      title: 'Source power [W]',
      series: [{ field: 'powerW', label: 'Source power', color: '#6a5614', dash: [5, 3] }],
    },
  },
];

export const MAX_REDRAWS_PER_SECOND = 10;
/** Upper bound of points per dataset handed to Chart.js. */
export const MAX_POINTS_PER_DATASET = 2000;
const MIN_SPAN_S = 30;
const LEFT_AXIS_PX = 64;
const RIGHT_AXIS_PX = 58;

export interface CursorValue {
  field: PlotField;
  label: string;
  unit: string;
  value: number | null;
}
export interface CursorReadout {
  t: number;
  values: CursorValue[];
}

export interface PanelWindow {
  x0: number;
  x1: number;
  follow: boolean;
  paused: boolean;
}

interface ChartEntry {
  spec: QuantitySpec;
  chart: Chart<'line', PlotPoint[]>;
  canvas: HTMLCanvasElement;
  fields: { field: PlotField; axis: 'y' | 'y2' }[];
}

export class TrendPanel {
  private readonly charts: ChartEntry[] = [];
  private source: TrendSource | null = null;
  private x0 = 0;
  private x1 = 3600;
  /** Width of the followed window; null = the whole run. */
  private spanS: number | null = 3600;
  private follow = true;
  private paused = false;
  private dirty = false;
  private rafHandle = 0;
  private lastDrawMs = -Infinity;
  private markers: TimeMarker[] = [];
  private gaps: GapSpan[] = [];
  private pick: TimeMarker | null = null;
  /** The time under the pointer: a crosshair on every chart and a readout of each value. */
  private cursor: TimeMarker | null = null;
  private readonly cursorListeners = new Set<(readout: CursorReadout | null) => void>();
  /** Smallest visible span per quantity, so a few mA of noise never fill a whole chart. */
  private minSpans: Partial<Record<PlotField, number>> = {};
  private readonly windowListeners = new Set<(w: PanelWindow) => void>();

  constructor(
    private readonly root: HTMLElement,
    specs: QuantitySpec[],
    private readonly onPick: (t: number) => void = () => {},
  ) {
    root.classList.add('trend-panel');
    specs.forEach((spec, i) => this.charts.push(this.makeChart(spec, i === specs.length - 1)));
  }

  setSource(source: TrendSource | null): void {
    if (this.source) this.source.onData = undefined;
    this.source = source;
    this.pick = null;
    if (source) source.onData = () => this.requestRedraw('data');
    this.follow = true;
    this.requestRedraw('view');
  }

  /** Show the last `spanS` seconds (null = the whole run) and follow new data. */
  showSpan(spanS: number | null): void {
    this.spanS = spanS;
    this.follow = true;
    this.requestRedraw('view');
  }

  setFollow(follow: boolean): void {
    this.follow = follow;
    this.requestRedraw('view');
  }

  setPaused(paused: boolean): void {
    this.paused = paused;
    this.requestRedraw('view');
  }

  /** Zoom by `factor` (< 1 in, > 1 out) around `centerT` (default: the window's centre). */
  zoom(factor: number, centerT?: number): void {
    const extent = this.source?.extent();
    const fullS = extent ? Math.max(MIN_SPAN_S, extent.t1 - extent.t0) : 3600;
    const span = this.x1 - this.x0;
    const next = Math.min(fullS * 1.02, Math.max(MIN_SPAN_S, span * factor));
    if (this.follow) {
      this.spanS = next;
    } else {
      const c = centerT ?? (this.x0 + this.x1) / 2;
      const ratio = span > 0 ? (c - this.x0) / span : 0.5;
      this.setWindow(c - ratio * next, c - ratio * next + next);
    }
    this.requestRedraw('view');
  }

  /** Move the window by `fraction` of its width (negative = back in time). Stops following. */
  pan(fraction: number): void {
    const span = this.x1 - this.x0;
    this.follow = false;
    this.setWindow(this.x0 + fraction * span, this.x1 + fraction * span);
    this.requestRedraw('view');
  }

  /** Show [x0, x1] (seconds of run) without following. */
  showWindow(x0: number, x1: number): void {
    this.follow = false;
    this.setWindow(x0, x1);
    this.requestRedraw('view');
  }

  setMarkers(markers: TimeMarker[]): void {
    if (JSON.stringify(markers) === JSON.stringify(this.markers)) return;
    this.markers = markers;
    this.requestRedraw('view');
  }

  /** Stretches without telemetry, shaded on every chart. */
  setGaps(gaps: GapSpan[]): void {
    if (JSON.stringify(gaps) === JSON.stringify(this.gaps)) return;
    this.gaps = gaps;
    this.requestRedraw('view');
  }

  /** Minimum y span per field (in its unit); the axis is widened around the data to at least this. */
  setMinSpans(spans: Partial<Record<PlotField, number>>): void {
    this.minSpans = spans;
    this.requestRedraw('view');
  }

  /** Called with the values at the pointer's time as it moves over a chart, null when it leaves. */
  onCursor(cb: (readout: CursorReadout | null) => void): () => void {
    this.cursorListeners.add(cb);
    return () => this.cursorListeners.delete(cb);
  }

  /** Every plotted value at run time t (the nearest drawn point of each series). */
  valuesAt(t: number): CursorReadout {
    const values: CursorValue[] = [];
    for (const entry of this.charts) {
      const axes = [entry.spec.left, entry.spec.right];
      let i = 0;
      for (const axis of axes) {
        for (const s of axis?.series ?? []) {
          const data = entry.chart.data.datasets[i++]?.data ?? [];
          values.push({
            field: s.field,
            label: s.label,
            unit: axis!.title.match(/\[(.*)\]/)?.[1] ?? '',
            value: nearestY(data, t, (this.x1 - this.x0) / 200),
          });
        }
      }
    }
    return { t, values };
  }

  clearPick(): void {
    this.pick = null;
    this.requestRedraw('view');
  }

  window(): PanelWindow {
    return { x0: this.x0, x1: this.x1, follow: this.follow, paused: this.paused };
  }

  onWindow(cb: (w: PanelWindow) => void): () => void {
    this.windowListeners.add(cb);
    return () => this.windowListeners.delete(cb);
  }

  /** Ask for a redraw; data-driven ones wait while paused, view changes never do. */
  requestRedraw(reason: 'data' | 'view'): void {
    if (reason === 'data' && this.paused) return;
    this.dirty = true;
    if (!this.rafHandle) this.rafHandle = requestAnimationFrame(this.frame);
  }

  /** Redraw every chart now; returns the time it took in milliseconds (the benchmark reads it). */
  redrawNow(): number {
    const started = performance.now();
    this.dirty = false;
    this.lastDrawMs = started;
    this.updateWindowFromFollow();
    const { x0, x1 } = this;
    this.source?.windowChanged?.(x0, x1);
    for (const entry of this.charts) this.drawChart(entry, x0, x1);
    for (const cb of this.windowListeners) cb(this.window());
    return performance.now() - started;
  }

  destroy(): void {
    if (this.rafHandle) cancelAnimationFrame(this.rafHandle);
    for (const entry of this.charts) entry.chart.destroy();
    this.charts.length = 0;
    this.root.replaceChildren();
  }

  private readonly frame = (now: number) => {
    this.rafHandle = 0;
    if (!this.dirty) return;
    if (now - this.lastDrawMs < 1000 / MAX_REDRAWS_PER_SECOND) {
      this.rafHandle = requestAnimationFrame(this.frame);
      return;
    }
    this.redrawNow();
  };

  private updateWindowFromFollow(): void {
    const extent = this.source?.extent();
    if (!extent) {
      if (this.follow) this.setWindowRaw(0, this.spanS ?? 3600);
      return;
    }
    if (!this.follow || this.paused) return;
    if (this.spanS === null) {
      this.setWindowRaw(extent.t0, Math.max(extent.t1, extent.t0 + MIN_SPAN_S));
    } else if (extent.t1 - extent.t0 < this.spanS) {
      // A run shorter than the window grows from the left edge.
      this.setWindowRaw(extent.t0, extent.t0 + this.spanS);
    } else {
      this.setWindowRaw(extent.t1 - this.spanS, extent.t1);
    }
  }

  /** Clamp a window to the run (with a little room past the ends). */
  private setWindow(x0: number, x1: number): void {
    const extent = this.source?.extent();
    const span = Math.max(MIN_SPAN_S, x1 - x0);
    if (!extent) return this.setWindowRaw(x0, x0 + span);
    const lo = extent.t0 - span * 0.02;
    const hi = Math.max(extent.t1, extent.t0 + span) + span * 0.02;
    let a = x0;
    if (a < lo) a = lo;
    if (a + span > hi) a = Math.max(lo, hi - span);
    this.setWindowRaw(a, a + span);
  }

  private setWindowRaw(x0: number, x1: number): void {
    this.x0 = x0;
    this.x1 = x1 > x0 ? x1 : x0 + MIN_SPAN_S;
  }

  private drawChart(entry: ChartEntry, x0: number, x1: number): void {
    const { chart } = entry;
    const widthPx = Math.max(
      100,
      chart.chartArea ? chart.chartArea.right - chart.chartArea.left : chart.width,
    );
    const maxPoints = Math.min(MAX_POINTS_PER_DATASET, Math.ceil(widthPx * 2));
    const bounds = { y: [Infinity, -Infinity], y2: [Infinity, -Infinity] } as Record<
      'y' | 'y2',
      [number, number]
    >;
    entry.fields.forEach(({ field, axis }, i) => {
      const points = this.source ? this.source.points(field, x0, x1, maxPoints) : [];
      chart.data.datasets[i].data = points;
      const b = bounds[axis];
      for (const p of points) {
        if (p.y === null) continue;
        if (p.y < b[0]) b[0] = p.y;
        if (p.y > b[1]) b[1] = p.y;
      }
    });
    const scales = chart.options.scales!;
    scales.x!.min = x0;
    scales.x!.max = x1;
    for (const axis of ['y', 'y2'] as const) {
      const scale = scales[axis];
      if (!scale) continue;
      const minSpan = Math.max(
        0,
        ...entry.fields.filter((f) => f.axis === axis).map((f) => this.minSpans[f.field] ?? 0),
      );
      const [lo, hi] = paddedBounds(widenToSpan(bounds[axis], minSpan));
      scale.min = lo;
      scale.max = hi;
      // The drawn bounds, readable by tests and assistive tools without reaching into Chart.js.
      entry.canvas.dataset[axis === 'y' ? 'yMin' : 'y2Min'] = String(lo);
      entry.canvas.dataset[axis === 'y' ? 'yMax' : 'y2Max'] = String(hi);
    }
    chart.update('none');
  }

  private makeChart(spec: QuantitySpec, showTimeLabels: boolean): ChartEntry {
    const figure = document.createElement('figure');
    figure.className = 'trend-chart';
    const box = document.createElement('div');
    box.className = 'trend-chart-box';
    const canvas = document.createElement('canvas');
    canvas.tabIndex = 0;
    canvas.dataset.quantity = spec.id;
    canvas.setAttribute('role', 'img');
    const titles = [spec.left.title, spec.right?.title].filter(Boolean).join(' and ');
    canvas.setAttribute(
      'aria-label',
      `${titles} over run time. Arrow keys pan, plus and minus zoom, Enter marks the middle of the window.`,
    );
    box.append(canvas);
    const caption = document.createElement('figcaption');
    caption.className = 'trend-caption';
    for (const axis of [spec.left, spec.right]) {
      if (!axis) continue;
      for (const s of axis.series) {
        const key = document.createElement('span');
        key.className = `series-key${s.dash ? ' dashed' : ''}`;
        const stroke = document.createElement('span');
        stroke.className = 'series-stroke';
        stroke.style.borderTopColor = s.color;
        key.append(
          stroke,
          document.createTextNode(`${s.label} (${axis.title.match(/\[(.*)\]/)?.[1] ?? ''})`),
        );
        caption.append(key);
      }
    }
    figure.append(caption, box);
    this.root.append(figure);

    const fields: ChartEntry['fields'] = [];
    const datasets: ChartDataset<'line', PlotPoint[]>[] = [];
    const addSeries = (axis: AxisSpec | undefined, id: 'y' | 'y2') => {
      for (const s of axis?.series ?? []) {
        fields.push({ field: s.field, axis: id });
        datasets.push({
          label: s.label,
          data: [],
          yAxisID: id,
          borderColor: s.color,
          backgroundColor: s.color,
          borderWidth: 1.6,
          borderDash: s.dash ?? [],
          pointRadius: 0,
          pointHoverRadius: 0,
          tension: 0,
          spanGaps: true,
          normalized: true,
        } as ChartDataset<'line', PlotPoint[]>);
      }
    };
    addSeries(spec.left, 'y');
    addSeries(spec.right, 'y2');

    const fixWidth = (px: number) => (scale: Scale) => {
      scale.width = px;
    };
    const grid = { color: 'rgba(40, 44, 38, 0.10)' };
    const tickFont = { family: 'system-ui, sans-serif', size: 11 };
    const scales: Record<string, object> = {
      x: {
        type: 'linear',
        min: this.x0,
        max: this.x1,
        grid,
        // Ticks on whole clock steps (10 min, 1 h, 6 h, 1 d...) rather than Chart.js's even split.
        afterBuildTicks: (scale: Scale) => {
          scale.ticks = clockTicks(scale.min, scale.max);
        },
        ticks: {
          display: showTimeLabels,
          maxRotation: 0,
          autoSkipPadding: 24,
          font: tickFont,
          color: '#3b4038',
          // Steps under a minute need seconds, or neighbouring labels would read the same.
          callback: runTimeTickLabel,
        },
        title: { display: showTimeLabels, text: 'Run time [h:mm]', font: tickFont, color: '#3b4038' },
      },
      y: {
        type: 'linear',
        position: 'left',
        grid,
        afterFit: fixWidth(LEFT_AXIS_PX),
        ticks: { font: tickFont, color: '#3b4038', maxTicksLimit: 5, includeBounds: false },
        // The caption above names the quantity; the axis carries its unit, short enough for a low chart.
        title: { display: true, text: unitOf(spec.left.title), font: tickFont, color: '#3b4038' },
      },
    };
    if (spec.right) {
      scales.y2 = {
        type: 'linear',
        position: 'right',
        grid: { drawOnChartArea: false },
        afterFit: fixWidth(RIGHT_AXIS_PX),
        ticks: { font: tickFont, color: '#3b4038', maxTicksLimit: 5, includeBounds: false },
        title: { display: true, text: unitOf(spec.right.title), font: tickFont, color: '#3b4038' },
      };
    }
    const chart = new Chart<'line', PlotPoint[]>(canvas, {
      type: 'line',
      data: { datasets },
      options: {
        animation: false,
        parsing: false,
        normalized: true,
        responsive: true,
        maintainAspectRatio: false,
        // Pointer input is handled below (zoom, pan, pick); Chart.js needs no events at all.
        events: [],
        spanGaps: true,
        // Chart.js plugins are registered globally (the Sweep view adds Legend and Tooltip):
        // the trend charts carry their own legend line above each chart.
        plugins: { legend: { display: false }, tooltip: { enabled: false } },
        elements: { point: { radius: 0, hitRadius: 0 }, line: { tension: 0 } },
        layout: { padding: { top: 6, right: spec.right ? 4 : RIGHT_AXIS_PX + 4, left: 0, bottom: 0 } },
        scales,
      },
      plugins: [
        phaseBandsPlugin({
          spans: () => this.source?.spans() ?? [],
          gaps: () => this.gaps,
          markers: () => [
            ...this.markers,
            ...(this.pick ? [this.pick] : []),
            ...(this.cursor ? [this.cursor] : []),
          ],
        }),
      ],
    });
    const entry: ChartEntry = { spec, chart, canvas, fields };
    this.wireInput(entry);
    return entry;
  }

  private wireInput(entry: ChartEntry): void {
    const { canvas, chart } = entry;
    const valueAt = (clientX: number) => {
      const rect = canvas.getBoundingClientRect();
      return chart.scales.x.getValueForPixel(clientX - rect.left) ?? (this.x0 + this.x1) / 2;
    };
    canvas.addEventListener(
      'wheel',
      (e) => {
        e.preventDefault();
        this.zoom(e.deltaY > 0 ? 1.25 : 0.8, valueAt(e.clientX));
      },
      { passive: false },
    );
    let drag: { startX: number; x0: number; x1: number; moved: boolean; id: number } | null = null;
    canvas.addEventListener('pointerdown', (e) => {
      if (e.button !== 0) return;
      drag = { startX: e.clientX, x0: this.x0, x1: this.x1, moved: false, id: e.pointerId };
      canvas.setPointerCapture(e.pointerId);
    });
    canvas.addEventListener('pointermove', (e) => {
      if (!drag) this.moveCursor(valueAt(e.clientX));
      if (!drag || e.pointerId !== drag.id) return;
      const dx = e.clientX - drag.startX;
      if (!drag.moved && Math.abs(dx) < 4) return;
      drag.moved = true;
      const areaPx = Math.max(1, chart.chartArea.right - chart.chartArea.left);
      const shiftS = (-dx / areaPx) * (drag.x1 - drag.x0);
      this.follow = false;
      this.setWindow(drag.x0 + shiftS, drag.x1 + shiftS);
      this.requestRedraw('view');
    });
    const end = (e: PointerEvent) => {
      if (!drag || e.pointerId !== drag.id) return;
      const wasClick = !drag.moved;
      drag = null;
      if (wasClick && e.type === 'pointerup') this.setPick(valueAt(e.clientX));
    };
    canvas.addEventListener('pointerleave', () => this.moveCursor(null));
    canvas.addEventListener('pointerup', end);
    canvas.addEventListener('pointercancel', end);
    canvas.addEventListener('keydown', (e) => {
      const handled = (() => {
        switch (e.key) {
          case 'ArrowLeft':
            this.pan(-0.1);
            return true;
          case 'ArrowRight':
            this.pan(0.1);
            return true;
          case '+':
          case '=':
            this.zoom(0.8);
            return true;
          case '-':
            this.zoom(1.25);
            return true;
          case 'Enter':
            this.setPick((this.x0 + this.x1) / 2);
            return true;
          default:
            return false;
        }
      })();
      if (handled) e.preventDefault();
    });
  }

  private moveCursor(t: number | null): void {
    if (t === null) {
      if (!this.cursor) return;
      this.cursor = null;
      for (const cb of this.cursorListeners) cb(null);
    } else {
      this.cursor = { t, kind: 'cursor' };
      for (const cb of this.cursorListeners) cb(this.valuesAt(t));
    }
    // Only the crosshair moved: draw the charts again without asking the source for new data.
    for (const entry of this.charts) entry.chart.draw();
  }

  private setPick(rawT: number): void {
    // A mark outside the run (the margin past its ends) means its nearest end.
    const extent = this.source?.extent();
    const t = extent ? Math.min(extent.t1, Math.max(extent.t0, rawT)) : Math.max(0, rawT);
    this.pick = { t, kind: 'pick', label: formatRunTime(t) };
    this.requestRedraw('view');
    this.onPick(t);
  }
}

/** Tick steps a person reads on a clock: minutes, quarter hours, hours, days. */
const TIME_STEPS_S = [
  10, 30, 60, 120, 300, 600, 900, 1800, 3600, 7200, 10800, 21600, 43200, 86400, 172800, 604800,
];

/** Ticks on whole clock steps (10 min, 1 h, 6 h, 1 d...) across [minS, maxS]; the Run report uses them too. */
export function clockTicks(minS: number, maxS: number): { value: number }[] {
  const step = niceTimeStep((maxS - minS) / 8);
  const ticks = [];
  for (let v = Math.ceil(minS / step) * step; v <= maxS; v += step) ticks.push({ value: v });
  return ticks;
}

/** A run-time tick label: `h:mm` (days past 24 h), with seconds when steps are under a minute. */
export function runTimeTickLabel(v: number | string, _i: number, ticks: { value: number }[]): string {
  return ticks.length > 1 && ticks[1].value - ticks[0].value < 60
    ? formatRunClock(Number(v))
    : formatRunTime(Number(v));
}

export function niceTimeStep(roughS: number): number {
  return TIME_STEPS_S.find((s) => s >= roughS) ?? Math.ceil(roughS / 604800) * 604800;
}

/** `Pack voltage [V]` -> `V`. */
function unitOf(title: string): string {
  return title.match(/\[(.*)\]/)?.[1] ?? title;
}

/** Widen [lo, hi] around its middle to at least minSpan (no change when it is already wider). */
export function widenToSpan([lo, hi]: [number, number], minSpan: number): [number, number] {
  if (!Number.isFinite(lo) || !Number.isFinite(hi) || !(minSpan > 0) || hi - lo >= minSpan) return [lo, hi];
  const mid = (lo + hi) / 2;
  return [mid - minSpan / 2, mid + minSpan / 2];
}

/** The y of the drawn point nearest to t (points sorted by x), or null beyond maxGap. */
function nearestY(data: readonly PlotPoint[], t: number, maxGap: number): number | null {
  if (data.length === 0) return null;
  let lo = 0;
  let hi = data.length - 1;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (data[mid].x < t) lo = mid + 1;
    else hi = mid;
  }
  const candidates = [data[lo], data[lo - 1]].filter((p): p is PlotPoint => p !== undefined);
  let best: PlotPoint | null = null;
  for (const p of candidates) if (!best || Math.abs(p.x - t) < Math.abs(best.x - t)) best = p;
  return best && Math.abs(best.x - t) <= Math.max(maxGap, 1) ? best.y : null;
}

function paddedBounds([lo, hi]: [number, number]): [number, number] {
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) return [0, 1];
  const range = hi - lo;
  const pad = range > 1e-9 ? range * 0.08 : Math.max(Math.abs(hi) * 0.05, 0.05);
  return [lo - pad, hi + pad];
}

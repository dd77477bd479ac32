/**
 * The Run report's charts, drawn by the dashboard's own chart modules: the phase bands plugin
 * (wash + hatch per phase, gap bands, alarm markers), min-max window decimation (a one-sample spike stays
 * visible) and the run-time axis format. build/build.mjs bundles this entry to
 * dist/report-charts.js and the report inlines that file, so report and app cannot drift.
 */
import {
  Chart,
  Legend,
  LineController,
  LineElement,
  LinearScale,
  PointElement,
  type ChartDataset,
  type Scale,
} from 'chart.js';
import type { EngineEvent } from '@shared/engine/types';
import { decimateWindow } from './decimate';
import { gapSpans } from './gap-spans';
import { PHASE_BANDS_PLUGIN_ID, phaseBandsPlugin, type TimeMarker } from './phase-bands-plugin';
import type { PhaseSpan } from './phase-spans';
import { clockTicks, MAX_POINTS_PER_DATASET, runTimeTickLabel } from './trend-panel';
import type { PlotPoint } from './trend-source';

Chart.register(LineController, LineElement, PointElement, LinearScale, Legend);

/** What the report embeds as JSON (built by main/report/build-report.ts). */
export interface ReportChartData {
  startT: number;
  endT: number;
  phases: { phase: PhaseSpan['phase']; startT: number; endT: number }[];
  markers?: TimeMarker[];
  /** The run's gap events, drawn as the app draws them. */
  gapEvents?: EngineEvent[];
  charts: {
    id: string;
    axes: { id: string; title: string }[];
    series: {
      label: string;
      axis: string;
      color: string;
      dash?: number[];
      /** x0, y0, x1, y1, ...; a null y breaks the line (telemetry stopped). */
      xy: (number | null)[];
    }[];
  }[];
}

/** Flat x/y pairs to points, min-max decimated per unbroken run, with a null point at each break. */
export function seriesPoints(xy: readonly (number | null)[], maxPoints: number): PlotPoint[] {
  const runs: { t: number[]; y: number[] }[] = [{ t: [], y: [] }];
  for (let i = 0; i + 1 < xy.length; i += 2) {
    const x = xy[i];
    const y = xy[i + 1];
    if (x === null) continue;
    if (y === null) {
      if (runs[runs.length - 1].t.length) runs.push({ t: [], y: [] });
      continue;
    }
    runs[runs.length - 1].t.push(x);
    runs[runs.length - 1].y.push(y);
  }
  const total = runs.reduce((n, r) => n + r.t.length, 0) || 1;
  const out: PlotPoint[] = [];
  runs.forEach((r, k) => {
    if (!r.t.length) return;
    if (k > 0 && out.length) out.push({ x: r.t[0], y: null });
    const share = Math.max(4, Math.round((maxPoints * r.t.length) / total));
    out.push(...decimateWindow(Float64Array.from(r.t), Float64Array.from(r.y), 0, r.t.length, share));
  });
  return out;
}

/** Draws every chart of `data` into the canvases of the same id; returns how many were drawn. */
export function drawReportCharts(data: ReportChartData, doc: Document = document): number {
  const spans: PhaseSpan[] = data.phases.map((p) => ({ phase: p.phase, t0: p.startT, t1: p.endT }));
  const markers = data.markers ?? [];
  const gaps = gapSpans(data.gapEvents ?? []);
  let drawn = 0;
  for (const spec of data.charts) {
    const canvas = doc.getElementById(spec.id);
    if (!(canvas instanceof HTMLCanvasElement)) continue;
    const scales: Record<string, object> = {
      x: {
        type: 'linear',
        min: data.startT,
        max: data.endT,
        title: { display: true, text: 'Run time [h:mm]' },
        // The dashboard's own time axis: whole clock steps, h:mm, days past 24 h.
        afterBuildTicks: (scale: Scale) => {
          scale.ticks = clockTicks(scale.min, scale.max);
        },
        ticks: { callback: runTimeTickLabel, maxRotation: 0 },
      },
    };
    spec.axes.forEach((axis, i) => {
      scales[axis.id] = {
        type: 'linear',
        position: i === 0 ? 'left' : 'right',
        title: { display: true, text: axis.title },
        grid: { drawOnChartArea: i === 0 },
      };
    });
    const datasets: ChartDataset<'line', PlotPoint[]>[] = spec.series.map((s) => ({
      label: s.label,
      data: seriesPoints(s.xy, MAX_POINTS_PER_DATASET),
      yAxisID: s.axis,
      borderColor: s.color,
      backgroundColor: s.color,
      borderDash: s.dash ?? [],
      borderWidth: 1.5,
      pointRadius: 0,
      spanGaps: false,
    }));
    new Chart<'line', PlotPoint[]>(canvas, {
      type: 'line',
      data: { datasets },
      options: {
        animation: false,
        normalized: true,
        parsing: false,
        responsive: true,
        maintainAspectRatio: false,
        devicePixelRatio: 2,
        events: [],
        elements: { point: { radius: 0, hitRadius: 0 }, line: { tension: 0 } },
        plugins: { legend: { display: true, position: 'top' } },
        scales,
      },
      plugins: [phaseBandsPlugin({ spans: () => spans, markers: () => markers, gaps: () => gaps })],
    });
    canvas.setAttribute('data-rendered', 'true');
    drawn++;
  }
  return drawn;
}

/** Read by the report tests: the same id is in the dashboard's bundle. */
export const CHART_MODULE_MARK = PHASE_BANDS_PLUGIN_ID;

// In the report page: draw from the embedded JSON once the bundle runs.
if (typeof document !== 'undefined') {
  const dataEl = document.getElementById('run-data');
  if (dataEl?.textContent) {
    const drawn = drawReportCharts(JSON.parse(dataEl.textContent) as ReportChartData);
    document.body.setAttribute('data-charts-drawn', String(drawn));
    document.body.setAttribute('data-chart-module', CHART_MODULE_MARK);
  }
}

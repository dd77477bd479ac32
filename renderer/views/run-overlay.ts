/**
 * Runs laid over each other on the same axes: a known good board against a suspect one, or the
 * same pack month by month. Aligned at the start of each run or at its cc→cv change. Each run
 * has its own colour and dash pattern (never colour alone) and a legend that names it.
 */
import { Chart, LinearScale, LineController, LineElement, PointElement, type ChartDataset } from 'chart.js';
import type { Api } from '../api';
import { h } from '../dom';
import { formatClock, formatRunTime } from '../format';
import { errorText, readBuckets, readEvents, type RunListRow } from '../wire';

Chart.register(LineController, LineElement, PointElement, LinearScale);

export type OverlayAlign = 'start' | 'cv';

/** Distinct inks with distinct dashes, in order. */
const RUN_STYLES: { color: string; dash: number[] }[] = [
  { color: '#1f3f6e', dash: [] },
  { color: '#a4572a', dash: [6, 3] },
  { color: '#3f6b2a', dash: [2, 2] },
  { color: '#6e1f4a', dash: [8, 3, 2, 3] },
  { color: '#23767d', dash: [10, 4] },
  { color: '#7d7a70', dash: [3, 5] },
];

const QUANTITIES: { field: 'vbatV' | 'ibatA' | 'tempC'; title: string; unit: string }[] = [
  { field: 'vbatV', title: 'Pack voltage', unit: 'V' },
  { field: 'ibatA', title: 'Charge current', unit: 'A' },
  { field: 'tempC', title: 'Temperature', unit: '°C' },
];

const BUCKETS = 600;

/** Where a run's time axis starts in the overlay: 0, or its first change into cv; null = none. */
export function alignOffset(
  events: readonly { type: string; phase?: string; t: number }[],
  align: OverlayAlign,
): number | null {
  if (align === 'start') return 0;
  const cv = events.find((e) => e.type === 'phase' && e.phase === 'cv');
  return cv ? cv.t : null;
}

export class RunOverlay {
  readonly root = h('section', { class: 'run-overlay', 'aria-label': 'Runs overlaid', hidden: true });
  private charts: Chart<'line', { x: number; y: number }[]>[] = [];

  constructor(private readonly api: Api) {}

  close(): void {
    for (const c of this.charts) c.destroy();
    this.charts = [];
    this.root.hidden = true;
    this.root.replaceChildren();
  }

  async show(runs: RunListRow[], align: OverlayAlign): Promise<void> {
    this.close();
    this.root.hidden = false;
    this.root.append(h('p', { class: 'quiet' }, `Loading ${runs.length} runs…`));
    const loaded: { run: RunListRow; offset: number; buckets: ReturnType<typeof readBuckets> }[] = [];
    const skipped: string[] = [];
    try {
      for (const run of runs) {
        const events = readEvents(await this.api.request('runs.events', { runId: run.id }));
        const offset = alignOffset(events, align);
        if (offset === null) {
          skipped.push(`run ${run.id} (no cc→cv change)`);
          continue;
        }
        const buckets = readBuckets(
          await this.api.request('runs.overview', {
            runId: run.id,
            fields: QUANTITIES.map((q) => q.field),
            fromT: 0,
            toT: Math.max(1, run.durationS),
            buckets: BUCKETS,
          }),
        );
        loaded.push({ run, offset, buckets });
      }
    } catch (err) {
      this.root.replaceChildren(
        h('p', { class: 'error-text' }, `The runs could not be read: ${errorText(err)}`),
      );
      return;
    }
    const legend = h(
      'ul',
      { class: 'overlay-legend', 'aria-label': 'Runs in the overlay' },
      ...loaded.map(({ run }, i) => {
        const style = RUN_STYLES[i % RUN_STYLES.length];
        const stroke = h('span', { class: 'series-stroke' });
        stroke.style.borderTopColor = style.color;
        stroke.style.borderTopStyle = style.dash.length ? 'dashed' : 'solid';
        return h(
          'li',
          { 'data-run': run.id },
          stroke,
          ` Run ${run.id} · ${run.stationLabel || run.stationId} · ${run.profileName} · ${formatClock(run.startRxS)} · ${run.ah.toFixed(3)} Ah`,
        );
      }),
    );
    const head = h(
      'div',
      { class: 'overlay-head' },
      h(
        'h3',
        {},
        `${loaded.length} runs overlaid, aligned at ${align === 'start' ? 'the start' : 'the cc→cv change'}`,
      ),
      skipped.length ? h('p', { class: 'quiet' }, `Left out: ${skipped.join(', ')}.`) : null,
      legend,
    );
    this.root.replaceChildren(head);
    for (const q of QUANTITIES) {
      const canvas = h('canvas', {
        role: 'img',
        'aria-label': `${q.title} of ${loaded.length} runs against time since ${align === 'start' ? 'start' : 'the cc→cv change'}`,
        'data-quantity': q.field,
      });
      this.root.append(
        h(
          'figure',
          { class: 'overlay-chart' },
          h('figcaption', {}, `${q.title} (${q.unit})`),
          h('div', { class: 'overlay-box' }, canvas),
        ),
      );
      const datasets: ChartDataset<'line', { x: number; y: number }[]>[] = loaded.map(
        ({ run, offset, buckets }, i) => {
          const style = RUN_STYLES[i % RUN_STYLES.length];
          const data: { x: number; y: number }[] = [];
          for (const b of buckets) {
            const v = b.values[q.field];
            if (v) data.push({ x: (b.t0S + b.t1S) / 2 - offset, y: v.mean });
          }
          return {
            label: `Run ${run.id}`,
            data,
            borderColor: style.color,
            borderDash: style.dash,
            borderWidth: 1.6,
            pointRadius: 0,
            tension: 0,
          };
        },
      );
      this.charts.push(
        new Chart<'line', { x: number; y: number }[]>(canvas, {
          type: 'line',
          data: { datasets },
          options: {
            animation: false,
            parsing: false,
            responsive: true,
            maintainAspectRatio: false,
            events: [],
            scales: {
              x: {
                type: 'linear',
                ticks: { callback: (v) => formatRunTime(Number(v)), maxTicksLimit: 10 },
                title: {
                  display: true,
                  text: align === 'start' ? 'Time since start [h:mm]' : 'Time since cc→cv [h:mm]',
                },
              },
              y: { type: 'linear', title: { display: true, text: q.unit } },
            },
          },
        }),
      );
    }
    this.root.dataset.runs = loaded.map((l) => l.run.id).join(',');
  }
}

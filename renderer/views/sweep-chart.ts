/**
 * The Sweep view's chart: source power against source voltage (Chart.js scatter). The newest
 * points are drawn larger and darker, older ones fade; the engine's fitted curve runs through
 * them; the maximum power point and the present operating point are marked. It only draws what
 * the backend computed.
 */
import { Chart, Legend, LineElement, LinearScale, PointElement, ScatterController, Tooltip } from 'chart.js';
import type { SweepPayload } from '@shared/ipc/payloads';

Chart.register(ScatterController, LineElement, PointElement, LinearScale, Legend, Tooltip);

/** Points newer than this are emphasised; the rest fade with age over the kept window. */
const NEWEST_S = 20;
const POINTS_RGB = '164, 87, 42';

type XY = { x: number; y: number };

export class SweepChart {
  private readonly chart: Chart<'scatter', XY[]>;

  constructor(canvas: HTMLCanvasElement) {
    this.chart = new Chart<'scatter', XY[]>(canvas, {
      type: 'scatter',
      data: {
        datasets: [
          {
            label: 'Samples (newest darkest)',
            data: [],
            pointRadius: [],
            pointBackgroundColor: [],
            pointBorderWidth: 0,
            order: 1,
          },
          {
            label: 'Fitted curve',
            data: [],
            showLine: true,
            pointRadius: 0,
            borderColor: 'rgba(35, 38, 31, 0.75)',
            borderWidth: 1.5,
            order: 3,
          },
          {
            label: 'Maximum power point',
            data: [],
            pointStyle: 'triangle',
            pointRadius: 10,
            pointBackgroundColor: '#3f6b2a',
            pointBorderColor: '#23261f',
            order: 0,
          },
          {
            label: 'Operating point now',
            data: [],
            pointStyle: 'crossRot',
            pointRadius: 10,
            pointBorderWidth: 3,
            pointBorderColor: '#0d5fa6',
            order: 0,
          },
        ],
      },
      options: {
        animation: false,
        responsive: true,
        maintainAspectRatio: false,
        scales: {
          x: { type: 'linear', title: { display: true, text: 'Source voltage (V)' } },
          y: { type: 'linear', min: 0, title: { display: true, text: 'Source power (W)' } },
        },
        plugins: { legend: { position: 'bottom' } },
      },
    });
  }

  show(p: SweepPayload): void {
    const { tS, vV, pW } = p.points;
    const newestS = tS.length ? tS[tS.length - 1] : 0;
    const oldestS = tS.length ? tS[0] : 0;
    const spanS = Math.max(1, newestS - NEWEST_S - oldestS);
    const radius: number[] = [];
    const colour: string[] = [];
    const data: XY[] = [];
    for (let k = 0; k < tS.length; k++) {
      data.push({ x: vV[k], y: pW[k] });
      const ageS = newestS - tS[k];
      if (ageS <= NEWEST_S) {
        radius.push(4);
        colour.push(`rgba(${POINTS_RGB}, 0.95)`);
      } else {
        radius.push(2.5);
        colour.push(`rgba(${POINTS_RGB}, ${(0.08 + 0.5 * (1 - (ageS - NEWEST_S) / spanS)).toFixed(3)})`);
      }
    }
    const [samples, curve, mpp, operating] = this.chart.data.datasets;
    samples.data = data;
    samples.pointRadius = radius;
    samples.pointBackgroundColor = colour;
    const r = p.report;
    curve.data = r.curve.map((c) => ({ x: c.vV, y: c.pW }));
    mpp.data = r.ok && r.mppV !== null && r.mppW !== null ? [{ x: r.mppV, y: r.mppW }] : [];
    const opV = r.operatingV;
    const opW = tS.length ? median(pW.slice(-10)) : null;
    operating.data = opV !== null && opW !== null ? [{ x: opV, y: opW }] : [];
    const xs = [...vV, ...r.curve.map((c) => c.vV)];
    const ys = [...pW, ...r.curve.map((c) => c.pW)];
    const scales = this.chart.options.scales as {
      x: { min?: number; max?: number };
      y: { suggestedMax?: number };
    };
    if (xs.length) {
      scales.x.min = Math.floor(Math.min(...xs) - 0.5);
      scales.x.max = Math.ceil(Math.max(...xs) + 0.5);
      scales.y.suggestedMax = Math.max(...ys, 1) * 1.08;
    }
    this.chart.update('none');
  }

  destroy(): void {
    this.chart.destroy();
  }
}

function median(values: number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/**
 * A Chart.js plugin that shades the phases behind the data (wash + hatch per phase) and draws
 * time markers (the picked point, a diagnosed time, alarms) in front of it.
 */
import type { Chart, Plugin } from 'chart.js';
import { hatchTile } from './phase-style';
import type { PhaseSpan } from './phase-spans';
import { layoutLabelRows, type LabelBox } from './label-rows';

/**
 * The plugin's Chart.js id. It also marks the bundles: the dashboard's app.js and the Run
 * report's inlined chart bundle both carry it, which the report tests check.
 */
export const PHASE_BANDS_PLUGIN_ID = 'taperlinePhaseBands';

const LABEL_FONT = '600 11px system-ui, sans-serif';
const LABEL_ROW_PX = 14;
const MAX_LABEL_ROWS = 3;

export interface TimeMarker {
  t: number;
  kind: 'pick' | 'cursor' | 'diagnosed' | 'alarm-warn' | 'alarm-critical';
  /** Drawn at the top of the line (short: "Diagnosed", "overtemp"). */
  label?: string;
}

/** A stretch with no telemetry (unplug, silence): nothing was measured or integrated there. */
export interface GapSpan {
  t0: number;
  /** null while the gap lasts: drawn to the right edge. */
  t1: number | null;
}

export interface BandSource {
  spans(): readonly PhaseSpan[];
  markers(): readonly TimeMarker[];
  gaps?(): readonly GapSpan[];
}

const GAP_FILL = 'rgba(60, 64, 72, 0.16)';
const GAP_INK = '#4a4f58';

const MARKER_INK: Record<TimeMarker['kind'], string> = {
  pick: '#2b2f36',
  cursor: 'rgba(43, 47, 54, 0.55)',
  diagnosed: '#a8322a',
  'alarm-warn': '#8a6200',
  'alarm-critical': '#a8322a',
};

/** One plugin instance per chart: it reads the spans and markers of its own panel. */
export function phaseBandsPlugin(source: BandSource): Plugin<'line'> {
  const patterns = new Map<string, CanvasPattern>();
  const patternFor = (chart: Chart, phase: PhaseSpan['phase']) => {
    let p = patterns.get(phase);
    if (!p) {
      p = chart.ctx.createPattern(hatchTile(phase), 'repeat')!;
      patterns.set(phase, p);
    }
    return p;
  };
  return {
    id: PHASE_BANDS_PLUGIN_ID,
    beforeDatasetsDraw(chart) {
      const { ctx, chartArea } = chart;
      const x = chart.scales.x;
      if (!x || !chartArea) return;
      ctx.save();
      ctx.beginPath();
      ctx.rect(
        chartArea.left,
        chartArea.top,
        chartArea.right - chartArea.left,
        chartArea.bottom - chartArea.top,
      );
      ctx.clip();
      for (const span of source.spans()) {
        if (span.t1 < x.min || span.t0 > x.max) continue;
        const left = Math.max(chartArea.left, x.getPixelForValue(span.t0));
        const right = Math.min(chartArea.right, x.getPixelForValue(span.t1));
        if (right - left < 0.5) continue;
        ctx.fillStyle = patternFor(chart, span.phase);
        ctx.fillRect(left, chartArea.top, right - left, chartArea.bottom - chartArea.top);
      }
      drawGaps(ctx, chart, source.gaps?.() ?? []);
      ctx.restore();
    },
    afterDatasetsDraw(chart) {
      const { ctx, chartArea } = chart;
      const x = chart.scales.x;
      if (!x || !chartArea) return;
      ctx.save();
      ctx.font = LABEL_FONT;
      const labelled: { marker: TimeMarker; box: LabelBox }[] = [];
      for (const marker of source.markers()) {
        if (marker.t < x.min || marker.t > x.max) continue;
        const px = Math.round(x.getPixelForValue(marker.t)) + 0.5;
        ctx.strokeStyle = MARKER_INK[marker.kind];
        ctx.lineWidth = marker.kind === 'pick' || marker.kind === 'cursor' ? 1 : 2;
        ctx.setLineDash(marker.kind === 'pick' ? [4, 3] : marker.kind === 'alarm-warn' ? [2, 2] : []);
        ctx.beginPath();
        ctx.moveTo(px, chartArea.top);
        ctx.lineTo(px, chartArea.bottom);
        ctx.stroke();
        if (marker.label) {
          const w = ctx.measureText(marker.label).width;
          const lx = px + 4 + w > chartArea.right ? px - 4 - w : px + 4;
          labelled.push({ marker, box: { x: lx, widthPx: w } });
        }
      }
      // Labels in rows along the top, so close markers never print over each other.
      const rowsFit = Math.max(
        1,
        Math.min(MAX_LABEL_ROWS, Math.floor((chartArea.bottom - chartArea.top) / 3 / LABEL_ROW_PX)),
      );
      const layout = layoutLabelRows(
        labelled.map((l) => l.box),
        rowsFit,
      );
      ctx.setLineDash([]);
      labelled.forEach(({ marker, box }, i) => {
        const row = layout.rows[i];
        if (row < 0) return;
        const y = chartArea.top + 2 + row * LABEL_ROW_PX;
        // A paper-coloured plate behind the text keeps it legible over the trace.
        ctx.fillStyle = 'rgba(251, 249, 243, 0.85)';
        ctx.fillRect(box.x - 2, y, box.widthPx + 4, LABEL_ROW_PX - 1);
        ctx.fillStyle = MARKER_INK[marker.kind];
        ctx.fillText(marker.label!, box.x, y + LABEL_ROW_PX - 3);
      });
      if (layout.hidden > 0) {
        const note = `+${layout.hidden} more`;
        const w = ctx.measureText(note).width;
        const y = chartArea.top + 2 + rowsFit * LABEL_ROW_PX;
        ctx.fillStyle = 'rgba(251, 249, 243, 0.85)';
        ctx.fillRect(chartArea.right - w - 6, y, w + 4, LABEL_ROW_PX - 1);
        ctx.fillStyle = MARKER_INK['alarm-warn'];
        ctx.fillText(note, chartArea.right - w - 4, y + LABEL_ROW_PX - 3);
      }
      ctx.restore();
    },
  };
}

/** Gaps are drawn over the phase wash in grey, edged and labelled, so a hole never reads as data. */
function drawGaps(ctx: CanvasRenderingContext2D, chart: Chart, gaps: readonly GapSpan[]): void {
  const x = chart.scales.x;
  const area = chart.chartArea;
  for (const gap of gaps) {
    const t1 = gap.t1 ?? x.max;
    if (t1 < x.min || gap.t0 > x.max) continue;
    const left = Math.max(area.left, x.getPixelForValue(gap.t0));
    const right = Math.min(area.right, x.getPixelForValue(t1));
    const widthPx = Math.max(2, right - left);
    ctx.fillStyle = GAP_FILL;
    ctx.fillRect(left, area.top, widthPx, area.bottom - area.top);
    ctx.strokeStyle = GAP_INK;
    ctx.setLineDash([3, 3]);
    ctx.beginPath();
    ctx.moveTo(Math.round(left) + 0.5, area.top);
    ctx.lineTo(Math.round(left) + 0.5, area.bottom);
    if (gap.t1 !== null) {
      ctx.moveTo(Math.round(left + widthPx) - 0.5, area.top);
      ctx.lineTo(Math.round(left + widthPx) - 0.5, area.bottom);
    }
    ctx.stroke();
    ctx.setLineDash([]);
    if (widthPx >= 40) {
      ctx.fillStyle = GAP_INK;
      ctx.font = '600 11px system-ui, sans-serif';
      ctx.fillText('no data', left + 4, area.bottom - 6);
    }
  }
}

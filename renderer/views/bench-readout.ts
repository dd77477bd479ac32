/**
 * Two small jobs of the Bench view's charts: the smallest span each quantity's axis shows (so
 * 5 mA of noise on a 1 A charge stays a thin line, not a full-height band), and the readout of
 * every chart's value at one time (the crosshair under the pointer, or the marked time).
 */
import type { ResolvedProfile } from '@shared/chemistry/types';
import type { CursorReadout } from '../charts/trend-panel';
import type { PlotField } from '../charts/trend-source';
import { h } from '../dom';
import { formatRunTime } from '../format';

/**
 * Minimum axis spans: 1 % of the pack's regulation voltage, 5 % of the charge current, 1 °C,
 * 0.5 V and 0.5 W on the source (chosen here to sit above typical ADC noise of bench boards).
 */
export function minSpansFor(profile: ResolvedProfile | null): Partial<Record<PlotField, number>> {
  if (!profile) return { vbatV: 0.1, ibatA: 0.05, tempC: 1, vinV: 0.5, powerW: 0.5 };
  return {
    vbatV: 0.01 * profile.regulationVPerCell * profile.cells,
    ibatA: 0.05 * profile.chargeCurrentA,
    tempC: 1,
    vinV: 0.5,
    powerW: 0.5,
  };
}

const DIGITS: Record<PlotField, number> = { vbatV: 3, ibatA: 3, tempC: 1, vinV: 2, powerW: 2 };
/** Short names, so the readout stays one line at 1280 px (the chart captions carry the long ones). */
const SHORT: Record<PlotField, string> = {
  vbatV: 'Pack',
  ibatA: 'Current',
  tempC: 'Temp.',
  vinV: 'Source',
  powerW: 'Source power',
};

/** "At 1:23 — Pack voltage 12.412 V · Charge current 0.981 A · …" as a definition list. */
export function renderReadout(
  target: HTMLElement,
  readout: CursorReadout | null,
  what: 'pointer' | 'mark',
): void {
  if (!readout) {
    target.replaceChildren(
      h('span', { class: 'quiet' }, 'Point at a chart to read every value at that time.'),
    );
    return;
  }
  const items = readout.values.map((v) =>
    h(
      'span',
      { class: 'readout-item', 'data-field': v.field },
      h('span', { class: 'readout-label', title: v.label }, `${SHORT[v.field]} `),
      h('strong', {}, v.value === null ? '–' : `${v.value.toFixed(DIGITS[v.field])} ${v.unit}`),
    ),
  );
  target.replaceChildren(
    h('span', { class: 'readout-time' }, `${what === 'mark' ? 'Marked' : 'At'} ${formatRunTime(readout.t)}`),
    ...items,
  );
}

/**
 * Rack view: one tile per station (phase, V, A, °C, Ah, a pack-voltage sparkline, alarm
 * state), a station in trouble first. A tile is a button: click or Enter opens its Bench view.
 */
import { drawSparkline } from '../charts/sparkline';
import { hatchSwatch } from '../charts/phase-style';
import { h } from '../dom';
import { formatNumber, phaseWords } from '../format';
import type { Navigator, View } from '../router';
import type { StationModel, Store } from '../store';
import {
  heldOrder,
  sparkCaption,
  tileAlarmLine,
  tileAlarmState,
  tileAlarmWords,
  tileClassName,
} from './rack-tile-state';

const RACK_REDRAW_MS = 500;

export class RackView implements View {
  private visible = false;
  private timer = 0;
  private readonly grid = h('div', {
    class: 'rack-grid',
    role: 'list',
    'aria-label': 'Stations, most urgent first',
  });
  /** Ids in the order last drawn, kept while the pointer is over the rack or a tile has focus. */
  private drawnOrder: string[] = [];
  private pointerInside = false;
  private readonly tiles = new Map<
    string,
    { tile: HTMLButtonElement; spark: HTMLCanvasElement; sparkLabel: HTMLElement; body: HTMLElement }
  >();

  constructor(
    root: HTMLElement,
    private readonly store: Store,
    private readonly nav: Navigator,
  ) {
    root.append(
      h(
        'div',
        { class: 'view-head' },
        h('h2', {}, 'Rack'),
        h(
          'p',
          { class: 'quiet' },
          'Every station at a glance. A station with a critical alarm or a fault comes first. Enter or click opens its Bench view.',
        ),
      ),
      this.grid,
    );
    this.grid.addEventListener('pointerenter', () => (this.pointerInside = true));
    this.grid.addEventListener('pointerleave', () => {
      this.pointerInside = false;
      this.schedule();
    });
    this.grid.addEventListener('focusout', () => this.schedule());
    store.on('stations', () => this.schedule());
    store.on('samples', () => this.schedule());
  }

  show(): void {
    this.visible = true;
    this.render();
  }

  hide(): void {
    this.visible = false;
  }

  /** Tiles redraw at most twice a second: a rack of burn-in stations changes slowly. */
  private schedule(): void {
    if (!this.visible || this.timer) return;
    this.timer = window.setTimeout(() => {
      this.timer = 0;
      if (this.visible) this.render();
    }, RACK_REDRAW_MS);
  }

  private render(): void {
    const sorted = this.store.sortedStations();
    const hold = this.pointerInside || this.grid.contains(document.activeElement);
    const byId = new Map(sorted.map((m) => [m.view.id, m]));
    this.drawnOrder = heldOrder(this.drawnOrder, [...byId.keys()], hold);
    const models = this.drawnOrder.map((id) => byId.get(id)!);
    if (models.length === 0) {
      this.grid.replaceChildren(
        h('p', { class: 'quiet' }, 'No stations yet: add one in Connect & profile (Alt+5).'),
      );
      this.tiles.clear();
      return;
    }
    const seen = new Set<string>();
    const order: HTMLElement[] = [];
    for (const model of models) {
      seen.add(model.view.id);
      let entry = this.tiles.get(model.view.id);
      if (!entry) {
        const tile = h('button', {
          type: 'button',
          class: 'tile',
          'data-station': model.view.id,
        }) as HTMLButtonElement;
        tile.addEventListener('click', () => this.nav.open({ view: 'bench', stationId: model.view.id }));
        const body = h('span', { class: 'tile-body' });
        const spark = h('canvas', { class: 'tile-spark', 'aria-hidden': 'true' });
        const sparkLabel = h('span', { class: 'tile-spark-label' });
        tile.append(body, spark, sparkLabel);
        entry = { tile, spark, sparkLabel, body };
        this.tiles.set(model.view.id, entry);
      }
      this.fillTile(entry, model);
      order.push(h('div', { role: 'listitem', class: 'tile-cell' }, entry.tile));
    }
    for (const id of [...this.tiles.keys()]) if (!seen.has(id)) this.tiles.delete(id);
    // Keep focus on the same tile when the order changes.
    const focused = document.activeElement;
    this.grid.replaceChildren(...order);
    if (focused instanceof HTMLElement && this.grid.contains(focused)) focused.focus();
    for (const model of models) {
      const entry = this.tiles.get(model.view.id)!;
      const { x, y } = model.spark.toArrays();
      const { profile } = model.view;
      // 1 % of the pack's regulation voltage at least, as on the Bench charts.
      const minSpanV = 0.01 * profile.regulationVPerCell * profile.cells;
      entry.sparkLabel.textContent = sparkCaption(drawSparkline(entry.spark, x, y, '#1f3f6e', minSpanV));
    }
  }

  private fillTile(entry: { tile: HTMLButtonElement; body: HTMLElement }, model: StationModel): void {
    const { view } = model;
    const { state } = view;
    const last = state.last;
    const alarm = tileAlarmState(model);
    entry.tile.className = tileClassName(model, alarm);
    const swatch = hatchSwatch(state.phase, 18, 18);
    swatch.setAttribute('aria-hidden', 'true');
    const alarmLine = tileAlarmLine(alarm);
    const sourceLine =
      view.source.state !== 'open'
        ? h(
            'span',
            { class: `tile-source tile-source-${view.source.state}` },
            `Source ${view.source.state}: ${view.source.detail}`,
          )
        : '';
    entry.body.replaceChildren(
      h(
        'span',
        { class: 'tile-name' },
        view.label || view.id,
        h('span', { class: 'tile-id' }, ` ${view.id}`),
      ),
      h('span', { class: 'tile-phase' }, swatch, phaseWords(state.phase, view.profile.chemistry)),
      h(
        'span',
        { class: 'tile-values' },
        h('span', {}, formatNumber(last?.vbatV, 2, 'V')),
        h('span', {}, formatNumber(last?.ibatA, 2, 'A')),
        h('span', {}, formatNumber(last?.tempC, 1, '°C')),
        h('span', {}, formatNumber(state.metrics.ah, 2, 'Ah')),
      ),
      alarmLine,
      sourceLine,
    );
    const alarmWords = tileAlarmWords(alarm);
    entry.tile.setAttribute(
      'aria-label',
      `${view.label || view.id}: ${phaseWords(state.phase, view.profile.chemistry)}, ${formatNumber(last?.vbatV, 2, 'volts')}, ${formatNumber(last?.ibatA, 2, 'amps')}, ${formatNumber(last?.tempC, 1, 'degrees Celsius')}, ${formatNumber(state.metrics.ah, 2, 'amp-hours')}, ${alarmWords}. Opens the Bench view.`,
    );
  }
}

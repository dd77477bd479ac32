/**
 * Rack view: stations grouped by bench, trouble first, as tiles (phase, V, A, °C, Ah, a
 * pack-voltage sparkline, alarm state) or as a compact table for a rack of 64 and more
 * (sortable by any column, filtered by any word). A bench whose link is down is one stale
 * group. A tile or a row opens the station's Bench view (click or Enter).
 */
import { verdictBadge } from './checks-panel';
import { drawSparkline } from '../charts/sparkline';
import { hatchSwatch } from '../charts/phase-style';
import { button, h } from '../dom';
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
import {
  filterRows,
  groupByBench,
  sortRows,
  tableRows,
  tableColumns,
  type ColumnKey,
  type RackGroup,
} from './rack-groups';

const RACK_REDRAW_MS = 500;

export class RackView implements View {
  private visible = false;
  private timer = 0;
  private readonly grid = h('div', { class: 'rack-groups' });
  private readonly table = h('div', { class: 'rack-table-host' });
  private readonly filter = h('input', {
    id: 'rack-filter',
    type: 'search',
    placeholder: 'bench, station, phase, alarm…',
    spellcheck: 'false',
  });
  private readonly count = h('span', { class: 'quiet rack-count', 'aria-live': 'polite' });
  private mode: 'tiles' | 'table' = 'tiles';
  /** Ids in the order last drawn, kept while the pointer is over the rack or a tile has focus. */
  private drawnOrder: string[] = [];
  private pointerInside = false;
  private sortKey: ColumnKey = 'trouble';
  private descending = true;
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
      this.toolbar(),
      this.grid,
      this.table,
    );
    this.filter.addEventListener('input', () => this.render());
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

  private toolbar(): HTMLElement {
    const modes = h('div', { class: 'kind-group', role: 'radiogroup', 'aria-label': 'Rack layout' });
    for (const [mode, words] of [
      ['tiles', 'Tiles'],
      ['table', 'Table'],
    ] as const) {
      const id = `rack-mode-${mode}`;
      const radio = h('input', {
        type: 'radio',
        name: 'rack-mode',
        id,
        value: mode,
        checked: mode === this.mode,
      });
      radio.addEventListener('change', () => {
        this.mode = mode;
        this.render();
      });
      modes.append(h('label', { for: id, class: 'radio-label' }, radio, ` ${words}`));
    }
    return h(
      'div',
      { class: 'rack-tools' },
      modes,
      h('label', { for: 'rack-filter', class: 'field-label' }, 'Filter'),
      this.filter,
      this.count,
    );
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
    // Tiles do not move under the pointer or away from the focus (the table re-sorts on demand).
    const hold = this.mode === 'tiles' && (this.pointerInside || this.grid.contains(document.activeElement));
    const byId = new Map(sorted.map((m) => [m.view.id, m]));
    this.drawnOrder = heldOrder(this.drawnOrder, [...byId.keys()], hold);
    const models = this.drawnOrder.map((id) => byId.get(id)!);
    this.grid.hidden = this.mode !== 'tiles';
    this.table.hidden = this.mode !== 'table';
    if (models.length === 0) {
      this.count.textContent = '';
      this.grid.replaceChildren(
        h('p', { class: 'quiet' }, 'No stations yet: add one in Connect & profile (Alt+5).'),
      );
      this.table.replaceChildren();
      this.tiles.clear();
      return;
    }
    const groups = groupByBench(models, hold);
    if (this.mode === 'table') this.renderTable(groups);
    else this.renderTiles(groups);
  }

  private staleNote(group: RackGroup): HTMLElement {
    const since =
      group.stale?.sinceRxS && Number.isFinite(group.stale.sinceRxS)
        ? ` since ${new Date(group.stale.sinceRxS * 1000).toLocaleTimeString()}`
        : '';
    return h(
      'div',
      { class: 'rack-stale', role: 'status', 'data-bench': group.bench },
      h('strong', {}, `${group.bench}: link down${since}`),
      ` — ${group.models.length} station${group.models.length === 1 ? '' : 's'}, values are stale. ${group.stale?.detail ?? ''}`,
      h(
        'span',
        { class: 'rack-stale-ids quiet' },
        ` (${group.models.map((m) => m.view.id.slice(group.bench.length + 1)).join(', ')})`,
      ),
    );
  }

  private renderTiles(groups: RackGroup[]): void {
    const wanted = new Set(filterRows(tableRows(groups), this.filter.value).map((row) => row.model.view.id));
    this.count.textContent = `${wanted.size} of ${groups.reduce((n, g) => n + g.models.length, 0)} stations`;
    const seen = new Set<string>();
    const sections: HTMLElement[] = [];
    const drawn: StationModel[] = [];
    for (const group of groups) {
      const models = group.models.filter((m) => wanted.has(m.view.id));
      if (models.length === 0) continue;
      const head = h(
        'h3',
        { class: 'rack-bench' },
        group.bench,
        h('span', { class: 'quiet' }, ` · ${models.length} station${models.length === 1 ? '' : 's'}`),
      );
      if (group.stale) {
        sections.push(
          h(
            'section',
            { class: 'rack-group rack-group-stale', 'aria-label': group.bench },
            head,
            this.staleNote(group),
          ),
        );
        continue;
      }
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
        drawn.push(model);
        order.push(h('div', { role: 'listitem', class: 'tile-cell' }, entry.tile));
      }
      sections.push(
        h(
          'section',
          { class: 'rack-group', 'aria-label': group.bench },
          head,
          h(
            'div',
            { class: 'rack-grid', role: 'list', 'aria-label': `${group.bench}: stations, most urgent first` },
            ...order,
          ),
        ),
      );
    }
    for (const id of [...this.tiles.keys()]) if (!seen.has(id)) this.tiles.delete(id);
    // Keep focus on the same tile when the order changes.
    const focused = document.activeElement;
    this.grid.replaceChildren(...sections);
    if (focused instanceof HTMLElement && this.grid.contains(focused)) focused.focus();
    for (const model of drawn) {
      const entry = this.tiles.get(model.view.id)!;
      const { x, y } = model.spark.toArrays();
      const { profile } = model.view;
      // 1 % of the pack's regulation voltage at least, as on the Bench charts.
      const minSpanV = 0.01 * profile.regulationVPerCell * profile.cells;
      entry.sparkLabel.textContent = sparkCaption(drawSparkline(entry.spark, x, y, '#1f3f6e', minSpanV));
    }
  }

  private renderTable(groups: RackGroup[]): void {
    this.tiles.clear();
    const all = tableRows(groups);
    const rows = sortRows(filterRows(all, this.filter.value), this.sortKey, this.descending);
    this.count.textContent = `${rows.length} of ${all.length} stations`;
    const columns = tableColumns(all);
    const headCells = columns.map((c) => {
      const active = this.sortKey === c.key;
      const sortButton = button(
        c.title,
        () => {
          if (this.sortKey === c.key) this.descending = !this.descending;
          else {
            this.sortKey = c.key;
            this.descending = c.numeric;
          }
          this.render();
        },
        { class: 'sort-button', 'data-sort': c.key },
      );
      return h(
        'th',
        {
          scope: 'col',
          class: c.numeric ? 'num' : '',
          'aria-sort': active ? (this.descending ? 'descending' : 'ascending') : 'none',
        },
        sortButton,
        active ? (this.descending ? ' ▾' : ' ▴') : '',
      );
    });
    const troubleButton = button(
      'Trouble first',
      () => {
        this.sortKey = 'trouble';
        this.descending = true;
        this.render();
      },
      { class: 'btn btn-quiet', id: 'rack-sort-trouble' },
    );
    const body = h('tbody');
    const staleShown = new Set<string>();
    for (const row of rows) {
      if (row.stale) {
        // A bench whose link is down: one row for the whole bench.
        const bench = row.values.bench;
        if (staleShown.has(bench)) continue;
        staleShown.add(bench);
        const group = groups.find((g) => g.bench === bench)!;
        body.append(
          h(
            'tr',
            { class: 'row-stale', 'data-bench': bench },
            h('td', { colspan: String(columns.length) }, this.staleNote(group)),
          ),
        );
        continue;
      }
      const tr = h(
        'tr',
        {
          tabindex: '0',
          class: row.rank >= 40 ? 'row-trouble' : row.rank >= 10 ? 'row-attention' : '',
          'data-station': row.model.view.id,
        },
        ...columns.map((c) =>
          h('td', { class: c.numeric ? 'num' : '' }, row.values[c.key] || (c.key === 'alarms' ? '✓' : '')),
        ),
      );
      const open = () => this.nav.open({ view: 'bench', stationId: row.model.view.id });
      tr.addEventListener('click', open);
      tr.addEventListener('keydown', (e) => {
        if (e.key === 'Enter') open();
      });
      body.append(tr);
    }
    this.table.replaceChildren(
      h('div', { class: 'rack-table-tools' }, troubleButton),
      h(
        'table',
        { class: 'rack-table', 'aria-label': 'Stations' },
        h('thead', {}, h('tr', {}, ...headCells)),
        body,
      ),
    );
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
      verdictBadge(model.checks) ?? '',
    );
    const alarmWords = tileAlarmWords(alarm);
    entry.tile.setAttribute(
      'aria-label',
      `${view.label || view.id}: ${phaseWords(state.phase, view.profile.chemistry)}, ${formatNumber(last?.vbatV, 2, 'volts')}, ${formatNumber(last?.ibatA, 2, 'amps')}, ${formatNumber(last?.tempC, 1, 'degrees Celsius')}, ${formatNumber(state.metrics.ah, 2, 'amp-hours')}, ${alarmWords}. Opens the Bench view.`,
    );
  }
}

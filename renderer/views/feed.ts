/**
 * Line feed: a station's raw lines as they arrive. Rejected lines carry their reason, firmware
 * `#` messages and sent lines a text marker; pause, text filter, and a send box whose line
 * endings are offered as what they are. Bounded to the last LINE_FEED_LIMIT lines, and new
 * lines reach the DOM once per animation frame.
 */
import type { Api } from '../api';
import { button, h } from '../dom';
import { LINE_FEED_LIMIT } from '../feed-ring';
import { formatTimeOfDay } from '../format';
import type { View, ViewTarget } from '../router';
import type { Store } from '../store';
import { errorText, type FeedRow } from '../wire';

const ENDINGS: { label: string; value: '\n' | '\r\n' | '\r' | '' }[] = [
  { label: '\\n', value: '\n' },
  { label: '\\r\\n', value: '\r\n' },
  { label: '\\r', value: '\r' },
  { label: 'none', value: '' },
];

/** Lines either side of the one at a marked time that are highlighted with it. */
const AROUND_ROWS = 5;

const MARKERS: Record<FeedRow['kind'], string> = {
  sample: '',
  header: 'HEAD',
  firmware: '# FW',
  blank: 'BLANK',
  rejected: 'REJECTED',
  sent: '→ SENT',
};

export class FeedView implements View {
  private stationId: string | null = null;
  private visible = false;
  private paused = false;
  private heldWhilePaused = 0;
  private filter = '';
  private queue: FeedRow[] = [];
  private frame = 0;
  private readonly list = h('ol', {
    class: 'feed-list',
    'aria-label': 'Received lines, oldest first',
    'aria-live': 'off',
  });
  private readonly select = h('select', { id: 'feed-station', 'aria-label': 'Station of the Line feed' });
  private readonly filterInput = h('input', {
    id: 'feed-filter',
    type: 'search',
    placeholder: 'text in the line or reason',
    autocomplete: 'off',
  });
  private readonly pauseBtn = button('Pause', () => this.togglePause(), {
    class: 'btn toggle',
    'aria-pressed': 'false',
    id: 'feed-pause',
  });
  private readonly counts = h('span', { class: 'feed-counts', role: 'status' });
  private readonly aroundNote = h('p', { class: 'feed-around-note', role: 'status', hidden: true });
  private readonly sendInput = h('input', {
    id: 'feed-send-text',
    type: 'text',
    autocomplete: 'off',
    maxlength: 4096,
    placeholder: 'a line for the charger firmware',
  });
  private readonly endingSelect = h('select', { id: 'feed-send-ending' });
  private readonly sendStatus = h('span', { class: 'send-status', role: 'status', 'aria-live': 'polite' });

  constructor(
    root: HTMLElement,
    private readonly store: Store,
    private readonly api: Api,
  ) {
    ENDINGS.forEach((e, i) => this.endingSelect.append(h('option', { value: String(i) }, e.label)));
    this.select.addEventListener('change', () => this.setStation(this.select.value));
    this.filterInput.addEventListener('input', () => {
      this.filter = this.filterInput.value.toLowerCase();
      this.rebuild();
    });
    const form = h(
      'form',
      { class: 'send-box', 'aria-label': 'Send a line to the station' },
      h('label', { for: 'feed-send-text', class: 'field-label' }, 'Send'),
      this.sendInput,
      h('label', { for: 'feed-send-ending', class: 'field-label' }, 'Line ending'),
      this.endingSelect,
      h('button', { type: 'submit', class: 'btn' }, 'Send'),
      this.sendStatus,
    );
    form.addEventListener('submit', (e) => {
      e.preventDefault();
      void this.send();
    });
    root.append(
      h(
        'div',
        { class: 'view-head feed-head' },
        h('h2', {}, 'Line feed'),
        h('label', { for: 'feed-station', class: 'field-label' }, 'Station'),
        this.select,
        h('label', { for: 'feed-filter', class: 'field-label' }, 'Filter'),
        this.filterInput,
        this.pauseBtn,
        this.counts,
      ),
      this.aroundNote,
      h('div', { class: 'feed-scroller', tabindex: '0', 'aria-label': 'Line feed lines' }, this.list),
      form,
    );
    store.on('lines', (id, rows) => {
      if (id !== this.stationId) return;
      if (rows.length === 0) {
        this.rebuild();
        return;
      }
      if (this.paused) {
        this.heldWhilePaused += rows.length;
        this.updateCounts();
        return;
      }
      this.queue.push(...rows);
      this.scheduleFlush();
    });
    store.on('stations', () => {
      if (this.visible && (!this.stationId || !this.store.stations.has(this.stationId))) {
        const first = this.store.sortedStations()[0];
        if (first) {
          this.setStation(first.view.id);
          return;
        }
      }
      this.fillSelect();
      this.updateCounts();
    });
  }

  show(target: ViewTarget): void {
    this.visible = true;
    this.fillSelect();
    const wanted = target.view === 'feed' ? target.stationId : undefined;
    this.aroundNote.hidden = true;
    if (wanted) this.setStation(wanted);
    else if (!this.stationId || !this.store.stations.has(this.stationId)) {
      const first = this.store.sortedStations()[0];
      if (first) this.setStation(first.view.id);
    } else this.rebuild();
    if (target.view === 'feed' && target.samplesBack !== undefined)
      this.showAround(target.samplesBack, target.aroundLabel ?? '');
  }

  /**
   * From a time marked on the Bench charts: pause the feed (so the lines stay put), and scroll
   * to the sample line `samplesBack` samples before the newest, with AROUND_ROWS lines either
   * side highlighted.
   */
  private showAround(samplesBack: number, label: string): void {
    if (!this.paused) this.togglePause();
    if (this.filter) {
      this.filter = '';
      this.filterInput.value = '';
      this.rebuild();
    }
    const rows = [...this.list.querySelectorAll<HTMLLIElement>('li.feed-row')];
    for (const li of rows) li.classList.remove('feed-around', 'feed-focus');
    const samples = rows.filter((li) => li.classList.contains('kind-sample'));
    const target = samples[samples.length - 1 - samplesBack];
    this.aroundNote.hidden = false;
    if (!target) {
      this.aroundNote.textContent = `The lines of ${label} are no longer in the Line feed (it keeps the last ${LINE_FEED_LIMIT} lines). A recorded run keeps them all: open it from the Runs view.`;
      return;
    }
    const at = rows.indexOf(target);
    for (let i = Math.max(0, at - AROUND_ROWS); i <= Math.min(rows.length - 1, at + AROUND_ROWS); i++)
      rows[i].classList.add('feed-around');
    target.classList.add('feed-focus');
    target.tabIndex = -1;
    target.scrollIntoView({ block: 'center' });
    target.focus({ preventScroll: true });
    this.aroundNote.textContent = `Lines around ${label} (received ${formatTimeOfDay(Number(target.dataset.rx))}), highlighted; the feed is paused so they stay put. Resume to follow new lines.`;
  }

  hide(): void {
    this.visible = false;
  }

  private fillSelect(): void {
    const ids = this.store.sortedStations().map((m) => m.view.id);
    const current = [...this.select.options].map((o) => o.value);
    if (JSON.stringify(ids) === JSON.stringify(current) && this.select.value === (this.stationId ?? ''))
      return;
    this.select.replaceChildren(
      ...ids.map((id) => h('option', { value: id, selected: id === this.stationId }, id)),
    );
  }

  private setStation(id: string): void {
    this.stationId = id;
    this.fillSelect();
    this.select.value = id;
    this.heldWhilePaused = 0;
    this.rebuild();
  }

  private togglePause(): void {
    this.paused = !this.paused;
    this.pauseBtn.textContent = this.paused ? 'Resume' : 'Pause';
    this.pauseBtn.setAttribute('aria-pressed', String(this.paused));
    if (!this.paused) {
      this.heldWhilePaused = 0;
      this.rebuild();
    }
    this.updateCounts();
  }

  private matches(row: FeedRow): boolean {
    if (!this.filter) return true;
    return (
      row.text.toLowerCase().includes(this.filter) ||
      (row.reason ?? '').includes(this.filter) ||
      row.kind.includes(this.filter)
    );
  }

  private rebuild(): void {
    this.queue = [];
    const model = this.stationId ? this.store.stations.get(this.stationId) : undefined;
    const rows = (model?.feed.all() ?? []).filter((r) => this.matches(r));
    const frag = document.createDocumentFragment();
    for (const row of rows.slice(-LINE_FEED_LIMIT)) frag.append(this.rowEl(row));
    this.list.replaceChildren(frag);
    this.scrollToEnd();
    this.updateCounts();
  }

  private scheduleFlush(): void {
    if (this.frame || !this.visible) return;
    this.frame = requestAnimationFrame(() => {
      this.frame = 0;
      this.flush();
    });
  }

  /** One DOM update per frame for every line that arrived since the last one. */
  private flush(): void {
    const rows = this.queue.filter((r) => this.matches(r));
    this.queue = [];
    if (rows.length) {
      const frag = document.createDocumentFragment();
      for (const row of rows.slice(-LINE_FEED_LIMIT)) frag.append(this.rowEl(row));
      this.list.append(frag);
      let excess = this.list.childElementCount - LINE_FEED_LIMIT;
      while (excess-- > 0) this.list.firstElementChild?.remove();
      this.scrollToEnd();
    }
    this.updateCounts();
  }

  private scrollToEnd(): void {
    const scroller = this.list.parentElement;
    if (scroller) scroller.scrollTop = scroller.scrollHeight;
  }

  private updateCounts(): void {
    const model = this.stationId ? this.store.stations.get(this.stationId) : undefined;
    if (!model) {
      this.counts.textContent = 'No station';
      return;
    }
    const held = this.paused
      ? ` · paused, ${this.heldWhilePaused} new line${this.heldWhilePaused === 1 ? '' : 's'} held`
      : '';
    this.counts.textContent = `${model.view.lines} lines received, ${model.view.rejected} rejected · showing ${this.list.childElementCount}${held}`;
  }

  private rowEl(row: FeedRow): HTMLLIElement {
    const marker = MARKERS[row.kind];
    const li = h(
      'li',
      { class: `feed-row kind-${row.kind}`, 'data-rx': row.rxS },
      h('span', { class: 'feed-time' }, formatTimeOfDay(row.rxS)),
    );
    li.append(h('span', { class: 'feed-marker' }, marker));
    // A sent line shows a line ending it carries as what it is (\r, \n), not as invisible whitespace.
    const text = row.kind === 'sent' ? row.text.replace(/\r/g, '\\r').replace(/\n/g, '\\n') : row.text;
    li.append(h('span', { class: 'feed-text' }, text === '' ? '(empty line)' : text));
    if (row.kind === 'rejected')
      li.append(
        h(
          'span',
          { class: 'feed-reason' },
          `${row.reason ?? 'rejected'}${row.detail ? `: ${row.detail}` : ''}`,
        ),
      );
    return li;
  }

  private async send(): Promise<void> {
    if (!this.stationId) {
      this.sendStatus.textContent = 'Pick a station first.';
      return;
    }
    const ending = ENDINGS[Number(this.endingSelect.value)]?.value ?? '\n';
    const text = this.sendInput.value;
    try {
      await this.api.request('stations.send', { stationId: this.stationId, text, ending });
      this.sendStatus.textContent = `Sent “${text}” with ${ENDINGS[Number(this.endingSelect.value)]?.label ?? '\\n'}.`;
      this.sendInput.value = '';
    } catch (err) {
      this.sendStatus.textContent = `Not sent: ${errorText(err)}. The text is still in the box.`;
    }
  }
}

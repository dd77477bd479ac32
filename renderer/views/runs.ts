/**
 * Runs view: every recorded run with station, profile, start, duration, end reason and Ah;
 * open one in the Bench view, replay it as a station, export its CSV, save its Run report,
 * delete it (after a confirmation in place); start a burn-in batch and save its Batch report.
 */
import { batchFileStem } from '@shared/display/file-names';
import type { Api } from '../api';
import { button, h } from '../dom';
import { formatClock, formatDuration, formatNumber } from '../format';
import type { Navigator, View } from '../router';
import { errorText, readRuns, readStation, type RunListRow } from '../wire';
import { filterRuns, type RunFilter } from './run-filter';
import { RunOverlay, type OverlayAlign } from './run-overlay';
import { packKeys, renderPackHistory } from './pack-history';

const REPLAY_SPEEDS: { label: string; value: number | 'max' }[] = [
  { label: '1× (as recorded)', value: 1 },
  { label: '60× (a minute per second)', value: 60 },
  { label: '600×', value: 600 },
  { label: 'As fast as possible', value: 'max' },
];

export class RunsView implements View {
  private readonly status = h('p', { class: 'runs-status', role: 'status', 'aria-live': 'polite' });
  private readonly tableHost = h('div', { class: 'runs-table-host' });
  private readonly speed = h('select', { id: 'replay-speed' });
  private readonly verdictFilter = h(
    'select',
    { id: 'runs-verdict-filter' },
    ...[
      ['', 'any verdict'],
      ['pass', 'pass'],
      ['fail', 'fail'],
      ['incomplete', 'incomplete'],
      ['none', 'not judged'],
    ].map(([value, label]) => h('option', { value }, label)),
  );
  private readonly batchInput = h('input', {
    id: 'batch-id',
    type: 'text',
    autocomplete: 'off',
    maxlength: '64',
    placeholder: 'e.g. B7',
  });
  private readonly batchReportSelect = h('select', { id: 'batch-report-id' });
  private readonly batchReportHost: HTMLElement;
  private readonly boardFilter = h('input', {
    id: 'runs-board-filter',
    type: 'search',
    autocomplete: 'off',
    placeholder: 'board id contains…',
  });
  private runs: RunListRow[] = [];
  /** Runs ticked for the overlay. */
  private readonly compare = new Set<number>();
  private readonly overlay: RunOverlay;
  private readonly alignSelect = h('select', { id: 'overlay-align' });
  private readonly overlayBtn: HTMLButtonElement;
  private readonly packSelect = h('select', { id: 'pack-history' });
  private readonly packHost = h('div', { class: 'pack-history-host' });
  private filter: RunFilter = { text: '', from: '', to: '', ended: '' };
  private readonly filterBar = h('div', {
    class: 'runs-filter',
    role: 'search',
    'aria-label': 'Search and filter runs',
  });
  private confirming: number | null = null;
  private filtersWired = false;

  constructor(
    root: HTMLElement,
    private readonly api: Api,
    private readonly nav: Navigator,
  ) {
    REPLAY_SPEEDS.forEach((s, i) => this.speed.append(h('option', { value: String(i) }, s.label)));
    this.overlay = new RunOverlay(api);
    this.alignSelect.append(
      h('option', { value: 'start' }, 'aligned at the start'),
      h('option', { value: 'cv' }, 'aligned at the cc→cv change'),
    );
    this.overlayBtn = button('Overlay ticked runs', () => void this.showOverlay(), {
      class: 'btn',
      id: 'overlay-runs',
    });
    this.overlayBtn.disabled = true;
    this.packSelect.addEventListener('change', () => this.renderPackChoices());
    this.batchReportHost = this.batchReportTools();
    root.append(
      h(
        'div',
        { class: 'view-head' },
        h('h2', {}, 'Runs'),
        h(
          'p',
          { class: 'quiet' },
          'Recorded runs, newest first. Open one to browse it on the Bench view, or replay it through the pipeline as a new station.',
        ),
        h(
          'div',
          { class: 'runs-tools' },
          button('Refresh', () => void this.load(), { class: 'btn' }),
          h('label', { for: 'replay-speed', class: 'field-label' }, 'Replay speed'),
          this.speed,
          h('label', { for: 'runs-verdict-filter', class: 'field-label' }, 'Verdict'),
          this.verdictFilter,
          h('label', { for: 'runs-board-filter', class: 'field-label' }, 'Board'),
          this.boardFilter,
        ),
        this.batchForm(),
        this.batchReportHost,
      ),
      this.filterBar,
      h(
        'div',
        { class: 'runs-tools' },
        this.overlayBtn,
        h('label', { for: 'overlay-align', class: 'field-label' }, 'Overlay'),
        this.alignSelect,
      ),
      this.status,
      this.tableHost,
      this.overlay.root,
      h(
        'section',
        { class: 'pack-history-section', 'aria-labelledby': 'pack-history-title' },
        h('h3', { id: 'pack-history-title' }, 'Pack history'),
        h('label', { for: 'pack-history', class: 'field-label' }, 'Pack (board id, or profile name)'),
        this.packSelect,
        this.packHost,
      ),
    );
    this.buildFilterBar();
  }

  private buildFilterBar(): void {
    const text = h('input', {
      id: 'runs-search',
      type: 'search',
      placeholder: 'station, profile, board, chemistry, alarm…',
      autocomplete: 'off',
    });
    const from = h('input', { id: 'runs-from', type: 'date' });
    const to = h('input', { id: 'runs-to', type: 'date' });
    const ended = h('select', { id: 'runs-ended' });
    for (const [value, words] of [
      ['', 'any end'],
      ['completed', 'completed'],
      ['stopped', 'stopped'],
      ['interrupted', 'interrupted'],
      ['profile-changed', 'profile changed'],
      ['recording', 'still recording'],
    ])
      ended.append(h('option', { value }, words));
    const apply = () => {
      this.filter = { text: text.value, from: from.value, to: to.value, ended: ended.value };
      this.renderTable();
    };
    for (const el of [text, from, to, ended]) el.addEventListener('input', apply);
    this.filterBar.append(
      h('label', { for: 'runs-search', class: 'field-label' }, 'Search'),
      text,
      h('label', { for: 'runs-from', class: 'field-label' }, 'From'),
      from,
      h('label', { for: 'runs-to', class: 'field-label' }, 'To'),
      to,
      h('label', { for: 'runs-ended', class: 'field-label' }, 'End'),
      ended,
    );
  }

  show(): void {
    if (!this.filtersWired) {
      this.filtersWired = true;
      this.verdictFilter.addEventListener('change', () => this.renderTable());
      this.boardFilter.addEventListener('input', () => this.renderTable());
    }
    void this.load();
  }

  hide(): void {
    this.confirming = null;
  }

  async load(): Promise<void> {
    try {
      this.runs = readRuns(await this.api.request('runs.list', {})).sort((a, b) => b.startRxS - a.startRxS);
      this.renderTable();
      this.renderPackChoices();
      this.renderBatchChoices();
    } catch (err) {
      this.tableHost.replaceChildren(
        h('p', { class: 'error-text' }, `The run list could not be read: ${errorText(err)}`),
      );
    }
  }

  private renderPackChoices(): void {
    const keep = this.packSelect.value;
    const keys = packKeys(this.runs);
    this.packSelect.replaceChildren(
      h('option', { value: '' }, keys.length ? 'Pick a pack…' : 'No pack has two runs yet'),
      ...keys.map((k) =>
        h('option', { value: k.key, selected: k.key === keep }, `${k.key} (${k.count} runs)`),
      ),
    );
    if (keep && keys.some((k) => k.key === keep)) renderPackHistory(this.packHost, this.runs, keep);
    else this.packHost.replaceChildren();
  }

  private renderTable(): void {
    if (this.runs.length === 0) {
      this.tableHost.replaceChildren(
        h('p', { class: 'quiet' }, 'No recorded runs yet. A station records a run while it charges.'),
      );
      return;
    }
    const head = h(
      'tr',
      {},
      h('th', { scope: 'col' }, 'Compare'),
      ...[
        'Run',
        'Station',
        'Board',
        'Batch',
        'Verdict',
        'Profile',
        'Started',
        'Duration',
        'End reason',
        'Charge',
        'Lines',
        'Actions',
      ].map((c) => h('th', { scope: 'col' }, c)),
    );
    const body = h('tbody');
    const shown = filterRuns(this.runs, this.filter).filter((run) => this.passesFilters(run));
    for (const run of shown) body.append(this.row(run));
    if (shown.length === 0)
      body.append(
        h('tr', {}, h('td', { colspan: '13', class: 'quiet' }, 'No run matches the search and filters.')),
      );
    this.tableHost.replaceChildren(
      h(
        'table',
        { class: 'runs-table' },
        h('caption', { class: 'sr-only' }, 'Recorded runs'),
        h('thead', {}, head),
        body,
      ),
    );
  }

  private row(run: RunListRow): HTMLTableRowElement {
    const actions = h('div', { class: 'run-actions' });
    if (this.confirming === run.id) {
      actions.append(
        h(
          'span',
          { class: 'confirm-text' },
          `Delete run ${run.id} and all its samples? This cannot be undone.`,
        ),
        button('Yes, delete', () => void this.remove(run), { class: 'btn btn-small btn-danger' }),
        button('Keep it', () => this.cancelDelete(run.id), { class: 'btn btn-small btn-keep' }),
      );
      // Escape anywhere in the question keeps the run, as "Keep it" does.
      actions.addEventListener('keydown', (e) => {
        if (e.key === 'Escape') {
          e.preventDefault();
          this.cancelDelete(run.id);
        }
      });
    } else {
      const label = (what: string) => `${what} run ${run.id}`;
      actions.append(
        button('Open', () => this.nav.open({ view: 'bench', runId: run.id }), {
          class: 'btn btn-small',
          'aria-label': label('Open'),
        }),
        button('Replay', () => void this.replay(run), {
          class: 'btn btn-small',
          'aria-label': label('Replay'),
        }),
        button('CSV', () => void this.exportCsv(run), {
          class: 'btn btn-small',
          'aria-label': label('Export CSV of'),
        }),
        button('Report', () => void this.report(run), {
          class: 'btn btn-small',
          'aria-label': label('Save the Run report of'),
        }),
        button('PDF', () => void this.reportPdf(run), {
          class: 'btn btn-small',
          'aria-label': label('Save the Run report as PDF of'),
        }),
        button(
          'Delete…',
          () => {
            this.confirming = run.id;
            this.renderTable();
            // Focus the safe choice: Enter or Space right after "Delete…" keeps the run.
            (this.tableHost.querySelector('.btn-keep') as HTMLButtonElement | null)?.focus();
          },
          { class: 'btn btn-small btn-quiet btn-delete', 'aria-label': label('Delete') },
        ),
      );
    }
    const tick = h('input', {
      type: 'checkbox',
      class: 'compare-box',
      'aria-label': `Compare run ${run.id}`,
      checked: this.compare.has(run.id),
    });
    tick.addEventListener('change', () => {
      if (tick.checked) this.compare.add(run.id);
      else this.compare.delete(run.id);
      this.overlayBtn.disabled = this.compare.size < 2;
      this.overlayBtn.textContent = `Overlay ticked runs (${this.compare.size})`;
    });
    return h(
      'tr',
      { 'data-run': run.id },
      h('td', {}, tick),
      h('th', { scope: 'row' }, String(run.id)),
      h('td', {}, run.stationLabel || run.stationId),
      h('td', { class: 'run-board' }, run.boardId ?? '–'),
      h('td', { class: 'run-batch' }, run.batchId ?? '–'),
      h(
        'td',
        { class: `run-verdict verdict-${run.verdict ?? 'none'}`, 'data-verdict': run.verdict ?? 'none' },
        run.verdict ?? 'not judged',
      ),
      h('td', {}, `${run.profileName} (${run.chemistry})`),
      h('td', {}, formatClock(run.startRxS)),
      h('td', { class: 'num' }, formatDuration(run.durationS)),
      h('td', {}, run.endReason ?? 'recording'),
      h('td', { class: 'num' }, formatNumber(run.ah, 3, 'Ah')),
      h('td', { class: 'num' }, `${run.lines}${run.rejected ? ` (${run.rejected} rejected)` : ''}`),
      h('td', {}, actions),
    );
  }

  private async showOverlay(): Promise<void> {
    const runs = this.runs.filter((r) => this.compare.has(r.id)).sort((a, b) => a.startRxS - b.startRxS);
    await this.overlay.show(runs, this.alignSelect.value as OverlayAlign);
    this.overlay.root.scrollIntoView({ block: 'start' });
  }

  /** A burn-in batch: every live station ends its run and begins a run of the batch at once. */
  private batchForm(): HTMLFormElement {
    const form = h(
      'form',
      { class: 'runs-tools batch-form' },
      h('label', { for: 'batch-id', class: 'field-label' }, 'Start a burn-in batch'),
      this.batchInput,
      h('button', { type: 'submit', class: 'btn' }, 'Start batch on every station'),
    );
    form.addEventListener('submit', (e) => {
      e.preventDefault();
      void this.startBatch();
    });
    return form;
  }

  /** The Batch report of a recorded batch: every run of it judged against its design values. */
  private batchReportTools(): HTMLElement {
    return h(
      'div',
      { class: 'runs-tools batch-report-tools' },
      h('label', { for: 'batch-report-id', class: 'field-label' }, 'Batch report'),
      this.batchReportSelect,
      button('Batch report', () => void this.batchReport(false), { class: 'btn', id: 'batch-report' }),
      button('Batch CSV', () => void this.batchReport(true), { class: 'btn', id: 'batch-csv' }),
    );
  }

  /** The batches of the recorded runs, newest first, as choices for the Batch report. */
  private renderBatchChoices(): void {
    const keep = this.batchReportSelect.value;
    const ids: string[] = [];
    for (const run of this.runs) if (run.batchId && !ids.includes(run.batchId)) ids.push(run.batchId);
    this.batchReportSelect.replaceChildren(
      ...(ids.length
        ? ids.map((id) => h('option', { value: id, selected: id === keep }, id))
        : [h('option', { value: '' }, 'No recorded batch yet')]),
    );
    this.batchReportSelect.disabled = ids.length === 0;
    for (const id of ['batch-report', 'batch-csv'])
      (this.batchReportHost.querySelector(`#${id}`) as HTMLButtonElement | null)?.toggleAttribute(
        'disabled',
        ids.length === 0,
      );
  }

  private async batchReport(csv: boolean): Promise<void> {
    const batchId = this.batchReportSelect.value;
    if (!batchId) {
      this.status.textContent = 'No batch is chosen: start a burn-in batch first, then judge it here.';
      return;
    }
    const stem = batchFileStem(batchId);
    await this.deliver(
      `batch ${batchId}`,
      csv ? 'Batch CSV' : 'Batch report',
      () => this.api.request('batches.report', { batchId, csv }),
      csv ? `${stem}.csv` : `${stem}.html`,
      csv ? 'batch-csv-link' : 'batch-report-link',
    );
  }

  private async startBatch(): Promise<void> {
    const batchId = this.batchInput.value.trim();
    if (!/^[!-~]{1,64}$/.test(batchId)) {
      this.status.textContent = 'A batch id is 1–64 characters without spaces; nothing was started.';
      return;
    }
    try {
      const started = (await this.api.request('stations.startBatch', { batchId })) as unknown[];
      this.status.textContent = `Batch ${batchId} started on ${started.length} station(s): each began a new run.`;
      this.batchInput.value = '';
    } catch (err) {
      this.status.textContent = `Batch ${batchId} was not started: ${errorText(err)}`;
    }
    await this.load();
  }

  /** Filter by verdict (or "not judged") and by a part of the board id, case-insensitive. */
  private passesFilters(run: RunListRow): boolean {
    const verdict = this.verdictFilter.value;
    if (verdict === 'none' ? run.verdict : verdict && run.verdict !== verdict) return false;
    const board = this.boardFilter.value.trim().toLowerCase();
    return !board || (run.boardId ?? '').toLowerCase().includes(board);
  }

  private cancelDelete(runId: number): void {
    this.confirming = null;
    this.renderTable();
    this.status.textContent = `Run ${runId} was kept.`;
    (
      this.tableHost.querySelector(`tr[data-run="${runId}"] .btn-delete`) as HTMLButtonElement | null
    )?.focus();
  }

  private async remove(run: RunListRow): Promise<void> {
    this.confirming = null;
    try {
      await this.api.request('runs.delete', { runId: run.id });
      this.status.textContent = `Run ${run.id} was deleted.`;
    } catch (err) {
      this.status.textContent = `Run ${run.id} was not deleted: ${errorText(err)}`;
    }
    await this.load();
  }

  private async replay(run: RunListRow): Promise<void> {
    const speed = REPLAY_SPEEDS[Number(this.speed.value)]?.value ?? 'max';
    this.status.textContent = `Starting a replay of run ${run.id}…`;
    try {
      const station = readStation(await this.api.request('runs.replay', { runId: run.id, speed }));
      this.status.textContent = `Run ${run.id} is replaying as station ${station.id}.`;
      this.nav.open({ view: 'bench', stationId: station.id });
    } catch (err) {
      this.status.textContent = `The replay of run ${run.id} did not start: ${errorText(err)}`;
    }
  }

  private async exportCsv(run: RunListRow): Promise<void> {
    await this.deliver(
      `run ${run.id}`,
      'CSV',
      () => this.api.request('runs.exportCsv', { runId: run.id }),
      `taperline-run-${run.id}.csv`,
      'csv-link',
    );
  }

  private async report(run: RunListRow): Promise<void> {
    await this.deliver(
      `run ${run.id}`,
      'Run report',
      () => this.api.request('runs.report', { runId: run.id }),
      `taperline-run-${run.id}-report.html`,
      'report-link',
    );
  }

  private async reportPdf(run: RunListRow): Promise<void> {
    await this.deliver(
      `run ${run.id}`,
      'Run report PDF',
      () => this.api.request('runs.report', { runId: run.id, pdf: true }),
      `taperline-run-${run.id}-report.pdf`,
      'pdf-link',
    );
  }

  /**
   * Web mode answers with a URL (offered as a download link); Electron saves and says where.
   * `subject` names what the file is of ("run 12", "batch B7").
   */
  private async deliver(
    subject: string,
    what: string,
    ask: () => Promise<unknown>,
    fileName: string,
    linkId: string,
  ): Promise<void> {
    this.status.textContent = `Preparing the ${what} of ${subject}…`;
    try {
      const result = (await ask()) as { url?: string; savedTo?: string; cancelled?: boolean };
      if (result.url) {
        const href = this.withToken(result.url);
        const link = h(
          'a',
          { href, download: fileName, class: 'download-link', id: linkId },
          `Download the ${what} of ${subject}`,
        );
        this.status.replaceChildren(link);
        link.focus();
      } else if (result.savedTo) {
        this.status.textContent = `The ${what} of ${subject} was saved to ${result.savedTo}.`;
      } else {
        this.status.textContent = `The ${what} of ${subject} was not saved (cancelled).`;
      }
    } catch (err) {
      this.status.textContent = `The ${what} of ${subject} could not be made: ${errorText(err)}`;
    }
  }

  private withToken(url: string): string {
    if (!this.api.token) return url;
    return `${url}${url.includes('?') ? '&' : '?'}token=${encodeURIComponent(this.api.token)}`;
  }
}

/**
 * Bench view: one station (live) or one recorded run. A phase plate readable from across the
 * bench, trends by physical quantity on one time axis with the phases shaded behind, metrics,
 * alarms with Acknowledge, follow-live / pause, and zoom and pan over the whole run.
 */
import { gapSpans } from '../charts/gap-spans';
import type { AlarmEvent, EngineEvent } from '@shared/engine/types';
import type { Api } from '../api';
import { LiveStationSource, RecordedRunSource } from '../charts/sources';
import { hatchSwatch } from '../charts/phase-style';
import { BENCH_QUANTITIES, TrendPanel, type PanelWindow } from '../charts/trend-panel';
import type { TimeMarker } from '../charts/phase-bands-plugin';
import { button, h } from '../dom';
import {
  formatClock,
  formatDuration,
  formatNumber,
  formatPercent,
  formatRunTime,
  phaseWords,
} from '../format';
import type { Navigator, View, ViewTarget } from '../router';
import type { StationModel, Store } from '../store';
import { errorText, readChecks, readEvents, readRun, type ChecksView, type RunListRow } from '../wire';
import { renderAlarmList, type AlarmRow } from './alarm-list';
import { minSpansFor, renderReadout } from './bench-readout';
import { outlookRows } from './charge-outlook-view';
import { phaseLegend } from './phase-legend';
import { ChecksPanel } from './checks-panel';
import { recordingBadge, sourceBadge } from './station-status';

const SPANS: { label: string; spanS: number | null }[] = [
  { label: '1 h', spanS: 3600 },
  { label: '6 h', spanS: 6 * 3600 },
  { label: '24 h', spanS: 24 * 3600 },
  { label: 'All', spanS: null },
];

type Mode =
  | { kind: 'none' }
  | { kind: 'live'; stationId: string }
  | { kind: 'run'; run: RunListRow; source: RecordedRunSource; checks: ChecksView | null };

export class BenchView implements View {
  private mode: Mode = { kind: 'none' };
  private readonly panel: TrendPanel;
  private pickT: number | null = null;
  private activeSpan: number | null = 3600;
  private renderQueued = false;
  private visible = false;

  private readonly head = h('div', { class: 'bench-head' });
  private readonly plate = h('div', {
    class: 'phase-plate',
    role: 'status',
    'aria-live': 'polite',
    'aria-atomic': 'true',
  });
  private readonly readouts = h('dl', { class: 'readouts' });
  private readonly metrics = h('dl', { class: 'metrics' });
  private readonly alarms = h('div', { class: 'alarms', 'aria-live': 'polite' });
  private readonly toolbar = h('div', {
    class: 'chart-toolbar',
    role: 'toolbar',
    'aria-label': 'Chart window',
  });
  private readonly windowLabel = h('span', { class: 'window-label', 'aria-live': 'off' });
  private readonly pickBar = h('div', { class: 'pick-bar' });
  private readonly cursorBar = h('div', { class: 'cursor-readout', 'aria-live': 'off' });
  private readonly legendSlot = h('div', { class: 'legend-slot' });
  private readonly followBtn: HTMLButtonElement;
  private readonly pauseBtn: HTMLButtonElement;
  private readonly spanBtns: HTMLButtonElement[] = [];
  private readonly checksPanel: ChecksPanel;

  constructor(
    private readonly root: HTMLElement,
    private readonly store: Store,
    private readonly api: Api,
    private readonly nav: Navigator,
  ) {
    this.checksPanel = new ChecksPanel(api);
    const chartsHost = h('div', { class: 'trend-host' });
    this.panel = new TrendPanel(chartsHost, BENCH_QUANTITIES, (t) => this.onPick(t));
    this.panel.onWindow((w) => this.onWindow(w));
    this.panel.onCursor((r) =>
      r
        ? renderReadout(this.cursorBar, r, 'pointer')
        : renderReadout(this.cursorBar, this.pickT === null ? null : this.panel.valuesAt(this.pickT), 'mark'),
    );
    renderReadout(this.cursorBar, null, 'pointer');

    this.followBtn = button('Follow live', () => this.panel.setFollow(!this.panel.window().follow), {
      class: 'btn toggle',
      'aria-pressed': 'true',
    });
    this.pauseBtn = button('Pause', () => this.panel.setPaused(!this.panel.window().paused), {
      class: 'btn toggle',
      'aria-pressed': 'false',
    });
    const spanGroup = h('span', { class: 'btn-group', role: 'group', 'aria-label': 'Window width' });
    for (const s of SPANS) {
      const b = button(s.label, () => this.showSpan(s.spanS), {
        class: 'btn toggle',
        'aria-pressed': String(s.spanS === this.activeSpan),
        'aria-label': s.spanS === null ? 'Show the whole run' : `Show the last ${s.label}`,
      });
      this.spanBtns.push(b);
      spanGroup.append(b);
    }
    const zoomGroup = h(
      'span',
      { class: 'btn-group', role: 'group', 'aria-label': 'Zoom and pan' },
      button('◀', () => this.panel.pan(-0.25), { class: 'btn', 'aria-label': 'Pan back in time' }),
      button('−', () => this.panel.zoom(1.5), { class: 'btn', 'aria-label': 'Zoom out' }),
      button('+', () => this.panel.zoom(1 / 1.5), { class: 'btn', 'aria-label': 'Zoom in' }),
      button('▶', () => this.panel.pan(0.25), { class: 'btn', 'aria-label': 'Pan forward in time' }),
    );
    this.toolbar.append(this.followBtn, this.pauseBtn, spanGroup, zoomGroup, this.windowLabel);

    const side = h(
      'aside',
      { class: 'bench-side', 'aria-label': 'Phase, readings, metrics and alarms' },
      this.plate,
      this.readouts,
      h('h3', { class: 'side-title' }, 'Metrics'),
      this.metrics,
      h('h3', { class: 'side-title' }, 'Alarms'),
      this.alarms,
      h('h3', { class: 'side-title' }, 'Board and checks'),
      this.checksPanel.el,
    );
    const main = h(
      'div',
      { class: 'bench-main' },
      this.toolbar,
      this.legendSlot,
      this.pickBar,
      this.cursorBar,
      chartsHost,
    );
    root.append(this.head, h('div', { class: 'bench-body' }, side, main));

    store.on('stations', () => this.queueRender());
    store.on('samples', (id) => {
      if (this.visible && this.mode.kind === 'live' && this.mode.stationId === id)
        this.panel.requestRedraw('data');
    });
    store.on('checks', (id) => {
      if (this.mode.kind === 'live' && this.mode.stationId === id) this.queueRender();
    });
    store.on('events', (id) => {
      if (this.mode.kind === 'live' && this.mode.stationId === id) {
        this.panel.requestRedraw('data');
        this.queueRender();
      }
    });
  }

  show(target: ViewTarget): void {
    this.visible = true;
    if (target.view !== 'bench') return;
    if (target.runId !== undefined) void this.openRun(target.runId);
    else if (target.stationId) this.openStation(target.stationId);
    else if (this.mode.kind === 'none') {
      const first = this.store.sortedStations()[0];
      if (first) this.openStation(first.view.id);
    }
    this.queueRender();
    this.panel.requestRedraw('view');
  }

  hide(): void {
    this.visible = false;
  }

  /** Show the last `spanS` seconds (null = the whole run), following new data. */
  showSpan(spanS: number | null): void {
    this.activeSpan = spanS;
    this.panel.showSpan(spanS);
  }

  /** For the benchmark hook and tests. */
  get trendPanel(): TrendPanel {
    return this.panel;
  }

  openStation(stationId: string): void {
    const model = this.store.stations.get(stationId);
    if (!model) return;
    this.mode = { kind: 'live', stationId };
    this.pickT = null;
    this.panel.setSource(new LiveStationSource(this.api, model));
    this.panel.showSpan(this.activeSpan);
    this.panel.setMinSpans(minSpansFor(model.view.profile));
    this.legendSlot.replaceChildren(phaseLegend(model.view.profile.chemistry));
    this.queueRender();
    // The latest checks at once; the next ones arrive as pushes.
    void this.api
      .request('stations.checks', { stationId })
      .then((raw) => {
        const checks = readChecks(raw);
        if (checks) {
          model.checks = checks;
          this.queueRender();
        }
      })
      .catch(() => {});
  }

  async openRun(runId: number): Promise<void> {
    this.head.replaceChildren(h('p', { class: 'quiet' }, `Opening run ${runId}…`));
    try {
      const run = readRun(await this.api.request('runs.get', { runId }));
      const events = readEvents(await this.api.request('runs.events', { runId }));
      const source = await RecordedRunSource.open(this.api, runId, run.durationS, run.lines, events);
      const checks = readChecks(await this.api.request('runs.checks', { runId }));
      this.mode = { kind: 'run', run, source, checks };
      this.pickT = null;
      this.activeSpan = null;
      this.panel.setSource(source);
      this.panel.showSpan(null);
      this.panel.setFollow(false);
      this.panel.setMinSpans(minSpansFor(null));
      this.legendSlot.replaceChildren(phaseLegend(run.chemistry));
      this.queueRender();
    } catch (err) {
      this.head.replaceChildren(
        h(
          'p',
          { class: 'error-text', role: 'alert' },
          `Run ${runId} could not be opened: ${errorText(err)}. Nothing was changed; pick it again from the Runs view.`,
        ),
      );
    }
  }

  private onPick(t: number): void {
    this.pickT = t;
    this.renderPickBar();
    renderReadout(this.cursorBar, this.panel.valuesAt(t), 'mark');
  }

  private onWindow(w: PanelWindow): void {
    const extent =
      this.mode.kind === 'run'
        ? this.mode.source.extent()
        : this.mode.kind === 'live'
          ? this.liveModel()?.series.lastT
          : null;
    const end = typeof extent === 'number' ? extent : extent?.t1;
    this.windowLabel.textContent = `Showing ${formatRunTime(w.x0)} – ${formatRunTime(w.x1)}${end !== undefined && end !== null ? ` of ${formatRunTime(end)}` : ''}`;
    this.followBtn.setAttribute('aria-pressed', String(w.follow));
    this.pauseBtn.setAttribute('aria-pressed', String(w.paused));
    this.pauseBtn.textContent = w.paused ? 'Resume' : 'Pause';
    this.followBtn.disabled = this.mode.kind === 'run';
    this.pauseBtn.disabled = this.mode.kind === 'run';
    this.spanBtns.forEach((b, i) =>
      b.setAttribute('aria-pressed', String(w.follow && SPANS[i].spanS === this.activeSpan)),
    );
  }

  private liveModel(): StationModel | null {
    return this.mode.kind === 'live' ? (this.store.stations.get(this.mode.stationId) ?? null) : null;
  }

  private queueRender(): void {
    if (this.renderQueued) return;
    this.renderQueued = true;
    requestAnimationFrame(() => {
      this.renderQueued = false;
      if (this.visible) this.render();
    });
  }

  private render(): void {
    if (this.mode.kind === 'none' && this.store.stations.size > 0) {
      this.openStation(this.store.sortedStations()[0].view.id);
      return;
    }
    this.renderHead();
    if (this.mode.kind === 'live') {
      const model = this.liveModel();
      if (!model) {
        this.plate.replaceChildren(h('p', {}, 'This station was removed. Its run stays in the Runs view.'));
        return;
      }
      this.renderLive(model);
    } else if (this.mode.kind === 'run') {
      this.renderRun(this.mode.run, this.mode.source.events());
    } else {
      this.plate.replaceChildren(
        h('p', { class: 'phase-word' }, 'No station yet'),
        h(
          'p',
          { class: 'quiet' },
          'Add one in Connect & profile (Alt+5), or open a recorded run in the Runs view (Alt+3).',
        ),
      );
      this.readouts.replaceChildren();
      this.metrics.replaceChildren();
      this.alarms.replaceChildren();
    }
    this.renderPickBar();
  }

  private headKey = '';
  private plateKey = '';
  private alarmsKey = '';
  private sinceEl: HTMLElement | null = null;

  private renderHead(): void {
    const key = JSON.stringify([
      this.mode.kind === 'live' ? this.mode.stationId : this.mode.kind === 'run' ? this.mode.run.id : null,
      this.store
        .sortedStations()
        .map((m) => [m.view.id, m.view.label, m.view.source, m.view.recording, m.view.runId]),
    ]);
    if (key === this.headKey) return;
    this.headKey = key;
    const select = h('select', { id: 'bench-station', 'aria-label': 'Station shown in the Bench view' });
    for (const m of this.store.sortedStations()) {
      const opt = h('option', { value: m.view.id }, `${m.view.label || m.view.id} (${m.view.id})`);
      if (this.mode.kind === 'live' && this.mode.stationId === m.view.id) opt.selected = true;
      select.append(opt);
    }
    if (this.mode.kind === 'run')
      select.prepend(h('option', { value: '', selected: true }, `Recorded run ${this.mode.run.id}`));
    select.addEventListener('change', () => {
      if (select.value) this.openStation(select.value);
    });
    const parts: (Node | string)[] = [
      h('label', { for: 'bench-station', class: 'field-label' }, 'Station'),
      select,
    ];
    if (this.mode.kind === 'live') {
      const m = this.liveModel();
      if (m) {
        parts.push(
          sourceBadge(m.view),
          recordingBadge(m.view),
          button('Line feed', () => this.nav.open({ view: 'feed', stationId: m.view.id }), {
            class: 'btn btn-quiet',
          }),
          button('Profile', () => this.nav.open({ view: 'connect', stationId: m.view.id }), {
            class: 'btn btn-quiet',
          }),
        );
      }
    } else if (this.mode.kind === 'run') {
      const r = this.mode.run;
      parts.push(
        h(
          'span',
          { class: 'run-title' },
          `Run ${r.id} · ${r.stationLabel || r.stationId} · ${r.profileName} · started ${formatClock(r.startRxS)}`,
        ),
      );
      parts.push(button('Back to Runs', () => this.nav.open({ view: 'runs' }), { class: 'btn btn-quiet' }));
    }
    this.head.replaceChildren(...parts);
  }

  private renderPlate(
    phase: Parameters<typeof phaseWords>[0],
    chemistry: string,
    sinceS: number | null,
    caption: string,
    whyAtT: number | null,
  ): void {
    const key = JSON.stringify([phase, chemistry, caption, whyAtT]);
    if (key === this.plateKey && this.sinceEl) {
      this.sinceEl.textContent = sinceS === null ? '' : `for ${formatDuration(sinceS)}`;
      return;
    }
    this.plateKey = key;
    const swatch = hatchSwatch(phase, 56, 56);
    swatch.classList.add('plate-swatch');
    swatch.setAttribute('aria-hidden', 'true');
    const kids: Node[] = [
      swatch,
      h(
        'div',
        { class: 'plate-text' },
        h('p', { class: 'plate-caption' }, caption),
        h('p', { class: 'phase-word', 'data-phase': phase }, phaseWords(phase, chemistry)),
        (this.sinceEl = h(
          'p',
          { class: 'phase-since' },
          sinceS === null ? '' : `for ${formatDuration(sinceS)}`,
        )),
      ),
    ];
    if (whyAtT !== null)
      kids.push(
        button('Why?', () => this.openDiagnosis(whyAtT), {
          class: 'btn btn-why',
          'aria-label': 'Why is the charger in fault? Open the diagnosis',
        }),
      );
    this.plate.className = `phase-plate phase-${phase}`;
    this.plate.replaceChildren(...kids);
  }

  private renderLive(model: StationModel): void {
    const { state, profile } = model.view;
    const faultAlarm = state.activeAlarms.find((a) => a.level === 'critical');
    this.renderPlate(
      state.phase,
      profile.chemistry,
      state.t - state.phaseSinceT,
      `${model.view.label || model.view.id} · ${profile.name}`,
      state.phase === 'fault' || faultAlarm ? (faultAlarm?.t ?? state.t) : null,
    );
    this.checksPanel.showLive(model.view.id, model.view.board, model.checks);
    const last = state.last;
    this.readouts.replaceChildren(
      ...readout('Pack', formatNumber(last?.vbatV, 3, 'V')),
      ...readout('Current', formatNumber(last?.ibatA, 3, 'A')),
      ...readout('Temp.', formatNumber(last?.tempC, 1, '°C')),
      ...readout('Source', formatNumber(last?.vinV, 2, 'V')),
    );
    const m = state.metrics;
    const outlook = outlookRows(model);
    const mppt =
      profile.inputSetpointV === null
        ? 'no set point in the profile'
        : `set point ${formatNumber(profile.inputSetpointV, 1, 'V')}, mean error ${formatPercent(m.mpptErrorFraction, 1)}`;
    this.metrics.replaceChildren(
      ...metric('Charge in', formatNumber(m.ah, 3, 'Ah')),
      ...metric('Energy in', formatNumber(m.wh, 2, 'Wh')),
      ...metric('From source', formatNumber(m.sourceWh, 2, 'Wh')),
      ...metric('Efficiency', formatPercent(m.efficiency, 1)),
      ...metric('Charge level (est.)', outlook.level),
      ...metric('Time to full (est.)', outlook.full),
      ...metric('Next', outlook.next),
      ...metric(
        'Internal resistance',
        m.internalResistanceOhm === null ? '–' : `${(m.internalResistanceOhm * 1000).toFixed(0)} mΩ`,
      ),
      ...metric('MPPT tracking', mppt),
      ...metric('Run time', formatDuration(state.t)),
      ...metric('Lines', `${model.view.lines} (${model.view.rejected} rejected)`),
    );
    this.panel.setMarkers(alarmMarkers(model.events));
    this.panel.setGaps(gapSpans(model.events));
    const rows = model.alarmHistory();
    const alarmsKey = JSON.stringify(rows);
    if (alarmsKey === this.alarmsKey) return;
    this.alarmsKey = alarmsKey;
    renderAlarmList(this.alarms, rows, {
      ack: (alarm) => void this.ack(model.view.id, alarm),
      why: (alarm) => this.openDiagnosis(alarm.t),
    });
  }

  private renderRun(run: RunListRow, events: readonly EngineEvent[]): void {
    const lastPhase = [...events].reverse().find((e) => e.type === 'phase');
    const firstFault = events.find(
      (e) => (e.type === 'alarm' && e.level === 'critical') || (e.type === 'phase' && e.phase === 'fault'),
    );
    this.renderPlate(
      lastPhase?.type === 'phase' ? lastPhase.phase : 'idle',
      run.chemistry,
      null,
      run.endReason
        ? `Recorded run ${run.id} · ended: ${run.endReason} · last phase`
        : `Recorded run ${run.id} · still recording · latest phase`,
      firstFault ? firstFault.t : null,
    );
    this.readouts.replaceChildren();
    if (this.mode.kind === 'run')
      this.checksPanel.showRun(
        { boardId: run.boardId ?? null, operator: run.operator ?? null, firmware: run.firmware ?? null },
        this.mode.checks,
      );
    this.metrics.replaceChildren(
      ...metric('Charge in', formatNumber(run.ah, 3, 'Ah')),
      ...metric('Energy in', formatNumber(run.wh, 2, 'Wh')),
      ...metric('Duration', formatDuration(run.durationS)),
      ...metric('Chemistry', run.chemistry),
      ...metric('Lines', `${run.lines} (${run.rejected} rejected)`),
    );
    this.alarmsKey = '';
    renderAlarmList(this.alarms, recordedAlarms(events), { why: (alarm) => this.openDiagnosis(alarm.t) });
    this.panel.setMarkers(alarmMarkers(events));
    this.panel.setGaps(gapSpans(events));
  }

  private pickKey: string | null = null;

  private renderPickBar(): void {
    // Redrawn only when the mark or the mode changes, so its buttons stay put under a click.
    const key = JSON.stringify([this.pickT, this.mode.kind]);
    if (key === this.pickKey) return;
    this.pickKey = key;
    if (this.pickT === null) {
      this.pickBar.replaceChildren(
        h(
          'span',
          { class: 'quiet' },
          'Click a chart (or press Enter on it) to mark a time; wheel or +/− zooms, drag or arrow keys pan.',
        ),
      );
      return;
    }
    const t = this.pickT;
    this.pickBar.replaceChildren(
      h('span', { class: 'pick-text' }, `Marked ${formatRunTime(t)}`),
      button('Diagnose here', () => this.openDiagnosis(t), { class: 'btn btn-small', id: 'diagnose-here' }),
      ...(this.mode.kind === 'live'
        ? [
            button('Lines around here', () => this.openLinesAround(t), {
              class: 'btn btn-small',
              id: 'lines-here',
            }),
          ]
        : []),
      button(
        'Clear mark',
        () => {
          this.pickT = null;
          this.panel.clearPick();
          this.renderPickBar();
        },
        { class: 'btn btn-small btn-quiet' },
      ),
    );
  }

  /** The Line feed at the raw lines received around run time t (live stations only). */
  private openLinesAround(t: number): void {
    const model = this.liveModel();
    if (!model) return;
    // Counted in samples back from the newest: right whatever the clocks (a sped-up simulator too).
    const samplesBack = model.series.samplesAfterNearest(t);
    this.nav.open({ view: 'feed', stationId: model.view.id, samplesBack, aroundLabel: formatDuration(t) });
  }

  private openDiagnosis(atT: number): void {
    if (this.mode.kind === 'live') this.nav.open({ view: 'diagnosis', stationId: this.mode.stationId, atT });
    else if (this.mode.kind === 'run') this.nav.open({ view: 'diagnosis', runId: this.mode.run.id, atT });
  }

  private async ack(stationId: string, alarm: AlarmEvent): Promise<void> {
    try {
      await this.api.request('stations.ackAlarm', { stationId, code: alarm.code, t: alarm.t });
    } catch (err) {
      this.store.addProblem({
        stationId,
        level: 'warn',
        message: `Acknowledging ${alarm.code} failed: ${errorText(err)}. The alarm stays active; try again.`,
      });
    }
  }
}

function readout(label: string, value: string): HTMLElement[] {
  return [h('dt', {}, label), h('dd', {}, value)];
}
const metric = readout;

function alarmMarkers(events: readonly EngineEvent[]): TimeMarker[] {
  const out: TimeMarker[] = [];
  for (const e of events)
    if (e.type === 'alarm')
      out.push({ t: e.t, kind: e.level === 'critical' ? 'alarm-critical' : 'alarm-warn', label: e.code });
  return out.slice(-40);
}

function recordedAlarms(events: readonly EngineEvent[]): AlarmRow[] {
  const rows: AlarmRow[] = [];
  for (const e of events) {
    if (e.type === 'alarm') rows.push({ alarm: e, active: false, clearedT: null, acked: false });
    else if (e.type === 'alarm-clear') {
      const open = [...rows].reverse().find((r) => r.alarm.code === e.code && r.clearedT === null);
      if (open) open.clearedT = e.t;
    }
  }
  return rows.reverse();
}

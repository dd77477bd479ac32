/**
 * Diagnosis: the ranked causes of a fault (or of any moment of a run) with their confidence
 * as a bar and as a number, the evidence, the next steps, and the charts with the diagnosed
 * time marked. Opened from "Why?" on an alarm or from "Diagnose here" on a chart.
 */
import type { EngineEvent } from '@shared/engine/types';
import type { Api } from '../api';
import { LiveStationSource, RecordedRunSource } from '../charts/sources';
import { TrendPanel, BENCH_QUANTITIES } from '../charts/trend-panel';
import { button, h } from '../dom';
import { formatRunTime } from '../format';
import type { Navigator, View, ViewTarget } from '../router';
import type { Store } from '../store';
import { errorText, readDiagnosis, readEvents, readRun, type Diagnosis } from '../wire';
import { phaseLegend } from './phase-legend';

/** Cause codes (docs/codes.md) in words. */
const CAUSE_WORDS: Record<string, string> = {
  'damaged-cell': 'Damaged cell',
  'weak-source': 'Weak source (panel or adapter cannot supply the charger)',
  overtemperature: 'Overtemperature',
  'thermistor-fault': 'Thermistor fault (open or shorted NTC, or a wrong model)',
  'timer-expired': 'Safety timer expired',
  overvoltage: 'Overvoltage',
  connection: 'Connection (contact, wiring or cable)',
  unknown: 'Unknown cause',
};

export class DiagnosisView implements View {
  private readonly headline = h('div', { class: 'diag-head' });
  private readonly causes = h('div', { class: 'diag-causes', 'aria-live': 'polite' });
  private readonly chartHost = h('div', { class: 'trend-host diag-charts' });
  private readonly legendSlot = h('div', { class: 'legend-slot' });
  private readonly panel: TrendPanel;
  private last: ViewTarget | null = null;

  constructor(
    root: HTMLElement,
    private readonly store: Store,
    private readonly api: Api,
    private readonly nav: Navigator,
  ) {
    this.panel = new TrendPanel(this.chartHost, BENCH_QUANTITIES.slice(0, 3), (t) => {
      if (!this.last || this.last.view !== 'diagnosis') return;
      void this.run({ ...this.last, atT: t });
    });
    root.append(
      h(
        'div',
        { class: 'view-head' },
        h('h2', {}, 'Diagnosis'),
        h(
          'p',
          { class: 'quiet' },
          'Why the charger did what it did, ranked by confidence. Click a chart to diagnose another moment.',
        ),
      ),
      this.headline,
      h(
        'div',
        { class: 'diag-body' },
        this.causes,
        h('div', { class: 'diag-chart-col' }, this.legendSlot, this.chartHost),
      ),
    );
  }

  show(target: ViewTarget): void {
    if (target.view === 'diagnosis' && (target.stationId || target.runId !== undefined))
      void this.run(target);
    else if (!this.last) {
      this.headline.replaceChildren(
        h(
          'p',
          {},
          'Nothing diagnosed yet. Press “Why?” on a critical alarm, or mark a time on a Bench view chart and press “Diagnose here”.',
        ),
      );
      this.causes.replaceChildren();
    }
    this.panel.requestRedraw('view');
  }

  hide(): void {}

  private async run(target: ViewTarget): Promise<void> {
    if (target.view !== 'diagnosis') return;
    this.last = target;
    const what = target.runId !== undefined ? `run ${target.runId}` : `station ${target.stationId}`;
    this.headline.replaceChildren(
      h(
        'p',
        { class: 'quiet' },
        `Diagnosing ${what}${target.atT !== undefined ? ` at ${formatRunTime(target.atT)}` : ''}…`,
      ),
    );
    try {
      let diagnosis: Diagnosis;
      let events: readonly EngineEvent[];
      if (target.runId !== undefined) {
        diagnosis = readDiagnosis(
          await this.api.request('runs.diagnose', {
            runId: target.runId,
            ...(target.atT !== undefined ? { atT: target.atT } : {}),
          }),
        );
        const run = readRun(await this.api.request('runs.get', { runId: target.runId }));
        events = readEvents(await this.api.request('runs.events', { runId: target.runId }));
        this.panel.setSource(
          await RecordedRunSource.open(this.api, run.id, run.durationS, run.lines, events),
        );
        this.legendSlot.replaceChildren(phaseLegend(run.chemistry));
      } else {
        const model = this.store.stations.get(target.stationId!);
        if (!model) throw new Error(`station ${target.stationId} is gone; open its run from the Runs view`);
        diagnosis = readDiagnosis(
          await this.api.request('stations.diagnose', {
            stationId: target.stationId!,
            ...(target.atT !== undefined ? { atT: target.atT } : {}),
          }),
        );
        events = model.events;
        this.panel.setSource(new LiveStationSource(this.api, model));
        this.legendSlot.replaceChildren(phaseLegend(model.view.profile.chemistry));
      }
      this.render(what, diagnosis, target);
      const half = Math.max(1800, diagnosis.t * 0.15);
      this.panel.showWindow(Math.max(0, diagnosis.t - half), diagnosis.t + half);
      this.panel.setMarkers([
        { t: diagnosis.t, kind: 'diagnosed', label: `Diagnosed ${formatRunTime(diagnosis.t)}` },
      ]);
    } catch (err) {
      this.headline.replaceChildren(
        h(
          'p',
          { class: 'error-text', role: 'alert' },
          `The diagnosis of ${what} failed: ${errorText(err)}. Nothing was changed; try again, or open the run from the Runs view.`,
        ),
      );
      this.causes.replaceChildren();
    }
  }

  private render(what: string, d: Diagnosis, target: ViewTarget): void {
    const back =
      target.view === 'diagnosis' && target.runId !== undefined
        ? button(
            'Open the run on the Bench view',
            () => this.nav.open({ view: 'bench', runId: target.runId }),
            { class: 'btn btn-quiet' },
          )
        : button(
            'Back to the Bench view',
            () =>
              this.nav.open({
                view: 'bench',
                stationId: target.view === 'diagnosis' ? target.stationId : undefined,
              }),
            { class: 'btn btn-quiet' },
          );
    this.headline.replaceChildren(
      h('p', { class: 'diag-title' }, `Diagnosis of ${what} at ${formatRunTime(d.t)} of the run`),
      back,
    );
    if (d.causes.length === 0) {
      this.causes.replaceChildren(h('p', {}, 'No cause stands out at this time.'));
      return;
    }
    const list = h('ol', { class: 'cause-list', 'aria-label': 'Causes, highest confidence first' });
    d.causes.forEach((c, i) => {
      const pct = Math.round(Math.max(0, Math.min(1, c.confidence)) * 100);
      const fill = h('span', { class: 'confidence-fill' });
      fill.style.width = `${pct}%`;
      list.append(
        h(
          'li',
          { class: `cause${i === 0 ? ' cause-top' : ''}`, 'data-code': c.code },
          h(
            'div',
            { class: 'cause-head' },
            h('span', { class: 'cause-rank' }, `${i + 1}.`),
            h('span', { class: 'cause-name' }, CAUSE_WORDS[c.code] ?? c.code),
            h('code', { class: 'cause-code' }, c.code),
          ),
          h(
            'div',
            {
              class: 'confidence',
              role: 'meter',
              'aria-valuemin': '0',
              'aria-valuemax': '100',
              'aria-valuenow': String(pct),
              'aria-label': `Confidence ${pct} percent`,
            },
            h('span', { class: 'confidence-track', 'aria-hidden': 'true' }, fill),
            h('span', { class: 'confidence-text' }, `${pct} % confidence`),
          ),
          h('h4', {}, 'Evidence'),
          h(
            'ul',
            { class: 'evidence' },
            ...(c.evidence.length
              ? c.evidence.map((e) => h('li', {}, e))
              : [h('li', { class: 'quiet' }, 'none recorded')]),
          ),
          h('h4', {}, 'Next steps'),
          h(
            'ul',
            { class: 'next-steps' },
            ...(c.next.length
              ? c.next.map((n) => h('li', {}, n))
              : [h('li', { class: 'quiet' }, 'none suggested')]),
          ),
        ),
      );
    });
    this.causes.replaceChildren(list);
  }
}

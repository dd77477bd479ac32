/**
 * Entry of the dashboard renderer. It runs sandboxed (no Node, no Electron): it talks to the
 * backend through renderer/api.ts, keeps what it hears in the store, and shows it in views.
 */
import { AlarmCenter } from './alarm-center';
import { createApi } from './api';
import { installBenchHook } from './bench-hook';
import { button, byId, h } from './dom';
import { VIEW_ORDER, type Navigator, type View, type ViewName, type ViewTarget } from './router';
import { Store } from './store';
import { BenchView } from './views/bench';
import { ConnectView } from './views/connect';
import { DiagnosisView } from './views/diagnosis';
import { FeedView } from './views/feed';
import { RackView } from './views/rack';
import { RunsView } from './views/runs';
import { SweepView } from './views/sweep';

function start(): void {
  const api = createApi();
  const store = new Store(api);
  let current: ViewName = 'rack';
  const views = {} as Record<ViewName, View>;

  const nav: Navigator = {
    current: () => current,
    open(target: ViewTarget) {
      const previous = current;
      current = target.view;
      for (const name of VIEW_ORDER) {
        const section = byId(`view-${name}`);
        section.hidden = name !== current;
      }
      for (const b of document.querySelectorAll<HTMLButtonElement>('.nav-btn')) {
        if (b.dataset.view === current) b.setAttribute('aria-current', 'page');
        else b.removeAttribute('aria-current');
      }
      if (previous !== current) views[previous]?.hide();
      views[current].show(target);
      alarms.setBaseTitle(`Taperline · ${navLabel(current)}`);
      if (window.location.hash !== `#${current}`)
        history.replaceState(null, '', `${window.location.search}#${current}`);
    },
  };

  const alarms = new AlarmCenter(byId('alarm-center'), store, api, nav);
  const bench = new BenchView(byId('view-bench'), store, api, nav);
  views.bench = bench;
  views.rack = new RackView(byId('view-rack'), store, nav);
  views.runs = new RunsView(byId('view-runs'), api, nav);
  views.feed = new FeedView(byId('view-feed'), store, api);
  views.connect = new ConnectView(byId('view-connect'), store, api, nav);
  views.diagnosis = new DiagnosisView(byId('view-diagnosis'), store, api, nav);
  views.sweep = new SweepView(byId('view-sweep'), store, api);

  for (const b of document.querySelectorAll<HTMLButtonElement>('.nav-btn')) {
    b.addEventListener('click', () => nav.open({ view: b.dataset.view as ViewName } as ViewTarget));
  }
  // Alt+1..7 switch views from anywhere, also from inside a text box.
  document.addEventListener('keydown', (e) => {
    if (!e.altKey || e.ctrlKey || e.metaKey) return;
    const index = Number(e.key) - 1;
    const name = Number.isInteger(index) ? VIEW_ORDER[index] : undefined;
    if (!name) return;
    e.preventDefault();
    nav.open({ view: name } as ViewTarget);
    byId(`view-${name}`).focus();
  });
  for (const name of VIEW_ORDER) byId(`view-${name}`).tabIndex = -1;

  const linkState = byId('link-state');
  store.on('connection', (state) => {
    linkState.className = `link-state link-${state}`;
    linkState.textContent =
      state === 'open'
        ? `● Connected${api.mode === 'electron' ? '' : ' (browser)'}`
        : state === 'connecting'
          ? '○ Connecting…'
          : '✖ Backend unreachable, retrying…';
  });
  const strip = byId('problem-strip');
  store.on('problem', (p) => {
    strip.hidden = false;
    strip.className = `problem-strip problem-${p.level}`;
    strip.replaceChildren(
      h('span', { class: 'level-icon', 'aria-hidden': 'true' }, p.level === 'critical' ? '✖' : '▲'),
      h(
        'span',
        {},
        `${p.level === 'critical' ? 'Critical' : 'Warning'}${p.stationId ? ` (${p.stationId})` : ''}: ${p.message}`,
      ),
      button('Dismiss', () => (strip.hidden = true), { class: 'btn btn-small btn-quiet' }),
    );
  });

  store.start();
  const params = new URLSearchParams(window.location.search);
  if (params.get('bench') === '1') installBenchHook(store, bench, nav);
  const fromHash = window.location.hash.slice(1) as ViewName;
  nav.open({ view: VIEW_ORDER.includes(fromHash) ? fromHash : 'rack' } as ViewTarget);
}

function navLabel(view: ViewName): string {
  return {
    bench: 'Bench',
    rack: 'Rack',
    runs: 'Runs',
    feed: 'Line feed',
    connect: 'Connect & profile',
    diagnosis: 'Diagnosis',
    sweep: 'Sweep',
  }[view];
}

if (document.readyState === 'loading') document.addEventListener('DOMContentLoaded', start);
else start();

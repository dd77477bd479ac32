/**
 * The benchmark's test hook, present only with `?bench=1`: loads a long invented run (demo
 * data, no real pack) into a station of its own and times the Bench view's redraws.
 */
import type { EngineEvent } from '@shared/engine/types';
import type { BenchView } from './views/bench';
import type { Navigator } from './router';
import { StationModel, type Store } from './store';
import type { StationView } from './wire';

export interface BenchHook {
  /** Load `n` samples at 1 Hz; returns how long the load took in ms. */
  load(n: number): number;
  /** Zoom by `factor` and redraw at once; returns the redraw time in ms. */
  zoom(factor: number): number;
  /** Show the whole run and redraw at once; returns the redraw time in ms. */
  showAll(): number;
  redraw(): number;
}

declare global {
  interface Window {
    __taperlineBench?: BenchHook;
  }
}

const BENCH_STATION = 'bench-hook';

function demoView(n: number): StationView {
  return {
    id: BENCH_STATION,
    label: 'Benchmark (invented data)',
    sourceLabel: 'benchmark hook',
    source: { state: 'open', detail: 'invented data for the chart benchmark' },
    runId: null,
    profile: {
      name: 'invented 3S pack',
      chemistry: 'li-ion',
      cells: 3,
      inputSetpointV: null,
      tempWindowC: [0, 45],
    } as StationView['profile'],
    state: {
      t: n - 1,
      phase: 'done',
      phaseSinceT: n * 0.9,
      last: null,
      metrics: {
        ah: 0,
        wh: 0,
        sourceWh: null,
        efficiency: null,
        socPct: null,
        etaS: null,
        etaCcS: null,
        etaCvS: null,
        internalResistanceOhm: null,
        mpptErrorFraction: null,
      },
      activeAlarms: [],
    },
    lines: n,
    rejected: 0,
    recording: { ok: true, problem: null },
  };
}

export function installBenchHook(store: Store, bench: BenchView, nav: Navigator): void {
  window.__taperlineBench = {
    load(n) {
      const started = performance.now();
      const model = new StationModel(demoView(n));
      model.applyHistory(null);
      // Invented shapes: a CC/CV-like curve with ripple, a daily source swing, slow warming.
      let seed = 12345;
      const noise = () => {
        seed = (seed * 1103515245 + 12345) & 0x7fffffff;
        return seed / 0x7fffffff - 0.5;
      };
      const ccEnd = n * 0.4;
      for (let t = 0; t < n; t++) {
        const progress = Math.min(1, t / ccEnd);
        const vbat = 10.5 + 2.1 * progress + noise() * 0.01;
        const ibat =
          t < ccEnd
            ? 1 + noise() * 0.01
            : Math.max(0.05, Math.exp(-(t - ccEnd) / (n * 0.15))) + noise() * 0.005;
        const temp = 24 + 4 * Math.sin((t / 86400) * Math.PI * 2) + noise() * 0.2;
        const vin = 15 + 3 * Math.sin((t / 86400) * Math.PI * 2 + 1) + noise() * 0.05;
        model.series.append(t, vbat, ibat, temp, vin, vin * ((ibat * vbat) / vin / 0.9));
      }
      const events: EngineEvent[] = [
        { type: 'phase', t: 0, phase: 'cc' },
        { type: 'phase', t: ccEnd, phase: 'cv' },
        { type: 'phase', t: n * 0.9, phase: 'done' },
      ];
      model.events.push(...events);
      store.stations.set(BENCH_STATION, model);
      store.emit('stations');
      nav.open({ view: 'bench', stationId: BENCH_STATION });
      bench.showSpan(null);
      bench.trendPanel.redrawNow();
      return performance.now() - started;
    },
    zoom(factor) {
      const panel = bench.trendPanel;
      panel.setFollow(false);
      panel.zoom(factor);
      return panel.redrawNow();
    },
    showAll() {
      bench.showSpan(null);
      return bench.trendPanel.redrawNow();
    },
    redraw() {
      return bench.trendPanel.redrawNow();
    },
  };
}

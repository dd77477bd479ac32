/**
 * The live source sweep behind the Sweep view: keeps each station's recent source samples
 * (vin, iin and the `tpanel` channel), and for the stations a view watches runs the sweep
 * engine over them now and then and pushes the points with the engine's report. The analysis
 * runs in a worker thread (./sweep-analyst.ts), one at a time per station, spaced by several
 * times its own duration so a long sweep does not keep a core busy.
 */
import type { SweepReport } from '@shared/engine/sweep';
import type { TimedSample } from '@shared/engine/types';
import type { SweepPayload } from '@shared/ipc/payloads';
import type { ResolvedProfile } from '@shared/chemistry/types';
import { SweepAnalyst } from './sweep-analyst';
import type { SweepJob } from './sweep-job';

/** Source samples kept per station: the last 40 minutes at up to one sample a second. */
const KEEP_S = 40 * 60;
const MIN_STEP_S = 1;
/** How often a watched station's points are pushed, and the least spacing of analyses. */
const PUSH_EVERY_MS = 1000;
const MIN_ANALYSIS_SPACING_MS = 2000;
/** An analysis waits at least this many times its own last duration (bounds the CPU it takes). */
const ANALYSIS_DUTY = 4;

interface Kept {
  tS: number;
  vinV: number;
  iinA: number;
  tpanelC: number | null;
}

interface Watched {
  /** New points to push, and new points the last report has not seen. */
  dirty: boolean;
  stale: boolean;
  lastAnalysisMs: number;
  lastDurationMs: number;
  report: SweepReport | null;
  /** An analysis of this station is running. */
  analysing: Promise<void> | null;
  /** Bumped when the kept points stop applying (a new run): a running analysis is then stale. */
  generation: number;
}

export interface SweepWatchOptions {
  profileOf(stationId: string): ResolvedProfile | null;
  emit(payload: SweepPayload): void;
  nowMs?: () => number;
  /** Where analyses run; default a worker thread. */
  analyst?: SweepAnalyst;
}

export class SweepWatch {
  private readonly kept = new Map<string, Kept[]>();
  private readonly watched = new Map<string, Watched>();
  private timer: NodeJS.Timeout | null = null;
  private readonly nowMs: () => number;
  private readonly analyst: SweepAnalyst;

  constructor(private readonly options: SweepWatchOptions) {
    this.nowMs = options.nowMs ?? (() => performance.now());
    this.analyst = options.analyst ?? new SweepAnalyst();
  }

  addSample(stationId: string, s: TimedSample): void {
    if (s.vinV === undefined || s.iinA === undefined) return;
    let list = this.kept.get(stationId);
    if (!list) {
      list = [];
      this.kept.set(stationId, list);
    }
    const last = list[list.length - 1];
    if (last && s.t < last.tS)
      list.length = 0; // a new run: a new time axis
    else if (last && s.t - last.tS < MIN_STEP_S) return;
    const tp = s.extra.tpanel;
    list.push({ tS: s.t, vinV: s.vinV, iinA: s.iinA, tpanelC: typeof tp === 'number' ? tp : null });
    // Drop the oldest in one splice once a tenth of the window has piled up beyond it.
    if (list[0].tS < s.t - KEEP_S * 1.1)
      list.splice(
        0,
        list.findIndex((k) => k.tS >= s.t - KEEP_S),
      );
    const w = this.watched.get(stationId);
    if (w) w.dirty = w.stale = true;
  }

  /** Start watching; resolves with the first payload, analysed over the points kept so far. */
  async watch(stationId: string): Promise<SweepPayload> {
    let w = this.watched.get(stationId);
    if (!w) {
      w = {
        dirty: false,
        stale: false,
        lastAnalysisMs: -Infinity,
        lastDurationMs: 0,
        report: null,
        analysing: null,
        generation: 0,
      };
      this.watched.set(stationId, w);
    }
    this.timer ??= setInterval(() => this.tick(), PUSH_EVERY_MS);
    // A running analysis may have started before the latest points: analyse again after it.
    if (w.analysing) await w.analysing;
    // A new run replacing the points meanwhile drops the result: analyse its points then.
    for (let tries = 0; tries < 3 && (tries === 0 || !w.report); tries++) await this.analyse(stationId, w);
    if (!w.report) throw new Error(`the sweep of station "${stationId}" kept changing run; ask again`);
    return this.payload(stationId, w, w.report);
  }

  unwatch(stationId: string): void {
    this.watched.delete(stationId);
    if (this.watched.size === 0 && this.timer) {
      clearInterval(this.timer);
      this.timer = null;
    }
  }

  /** A new run (profile changed) or a removed station: its old points no longer apply. */
  forget(stationId: string, removed: boolean): void {
    this.kept.delete(stationId);
    const w = this.watched.get(stationId);
    if (w) {
      w.report = null;
      w.generation++;
    }
    if (removed) this.unwatch(stationId);
  }

  close(): void {
    this.analyst.close();
    if (this.timer) clearInterval(this.timer);
    this.timer = null;
    this.watched.clear();
    this.kept.clear();
  }

  private tick(): void {
    for (const [stationId, w] of this.watched) {
      if (!w.dirty) continue;
      const due =
        this.nowMs() - w.lastAnalysisMs >=
        Math.max(MIN_ANALYSIS_SPACING_MS, ANALYSIS_DUTY * w.lastDurationMs);
      if ((due || !w.report) && !w.analysing) {
        // The points go out with the new report when it is ready.
        w.dirty = false;
        void this.analyse(stationId, w).then(
          () => {
            if (w.report && this.watched.get(stationId) === w)
              this.options.emit(this.payload(stationId, w, w.report));
          },
          () => {
            /* closed meanwhile */
          },
        );
      } else if (w.report) {
        w.dirty = false;
        this.options.emit(this.payload(stationId, w, w.report));
      }
    }
  }

  /** One analysis of the points kept now; a result for points a new run replaced is dropped. */
  private analyse(stationId: string, w: Watched): Promise<void> {
    const list = this.kept.get(stationId) ?? [];
    const profile = this.options.profileOf(stationId);
    const job: SweepJob = {
      tS: Float64Array.from(list, (k) => k.tS),
      vinV: Float64Array.from(list, (k) => k.vinV),
      iinA: Float64Array.from(list, (k) => k.iinA),
      tpanelC: Float64Array.from(list, (k) => k.tpanelC ?? NaN),
      options: {
        setpointV: profile?.inputSetpointV ?? null,
        panelTempCoeffPctPerC: profile?.panelTempCoeffPctPerC ?? null,
      },
    };
    const generation = w.generation;
    const started = this.nowMs();
    const running = this.analyst.analyse(job).then((report) => {
      w.lastAnalysisMs = this.nowMs();
      w.lastDurationMs = w.lastAnalysisMs - started;
      if (w.generation !== generation) {
        w.dirty = true; // points of a new run arrived meanwhile: analyse those next
        return;
      }
      w.report = report;
      w.stale = false;
    });
    const settled = running.finally(() => {
      if (w.analysing === settled) w.analysing = null;
    });
    w.analysing = settled;
    return settled;
  }

  private payload(stationId: string, w: Watched, report: SweepReport): SweepPayload {
    const list = this.kept.get(stationId) ?? [];
    const profile = this.options.profileOf(stationId);
    return {
      stationId,
      points: {
        tS: list.map((k) => k.tS),
        vV: list.map((k) => k.vinV),
        pW: list.map((k) => k.vinV * k.iinA),
      },
      // The set point shown is the profile's now, even between analyses.
      report: { ...report, setpointV: profile?.inputSetpointV ?? null },
    };
  }
}

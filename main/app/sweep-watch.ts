/**
 * The live source sweep behind the Sweep view: keeps each station's recent source samples
 * (vin, iin and the `tpanel` channel), and for the stations a view watches runs the sweep
 * engine over them now and then and pushes the points with the engine's report. The analysis
 * runs in this process's event loop, so it is spaced by several times its own duration.
 */
import { analyseSweep, type SweepReport } from '@shared/engine/sweep';
import type { TimedSample } from '@shared/engine/types';
import type { SweepPayload } from '@shared/ipc/payloads';
import type { ResolvedProfile } from '@shared/chemistry/types';

/** Source samples kept per station: the last 40 minutes at up to one sample a second. */
const KEEP_S = 40 * 60;
const MIN_STEP_S = 1;
/** How often a watched station's points are pushed, and the least spacing of analyses. */
const PUSH_EVERY_MS = 1000;
const MIN_ANALYSIS_SPACING_MS = 2000;
/** An analysis waits at least this many times its own last duration (keeps the loop responsive). */
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
}

export interface SweepWatchOptions {
  profileOf(stationId: string): ResolvedProfile | null;
  emit(payload: SweepPayload): void;
  nowMs?: () => number;
}

export class SweepWatch {
  private readonly kept = new Map<string, Kept[]>();
  private readonly watched = new Map<string, Watched>();
  private timer: NodeJS.Timeout | null = null;
  private readonly nowMs: () => number;

  constructor(private readonly options: SweepWatchOptions) {
    this.nowMs = options.nowMs ?? (() => performance.now());
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

  /** Start watching; returns the payload now (analysed at once). */
  watch(stationId: string): SweepPayload {
    let w = this.watched.get(stationId);
    if (!w) {
      w = { dirty: false, stale: false, lastAnalysisMs: -Infinity, lastDurationMs: 0, report: null };
      this.watched.set(stationId, w);
    }
    this.timer ??= setInterval(() => this.tick(), PUSH_EVERY_MS);
    return this.payload(stationId, w, true);
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
    if (w) w.report = null;
    if (removed) this.unwatch(stationId);
  }

  close(): void {
    if (this.timer) clearInterval(this.timer);
    this.timer = null;
    this.watched.clear();
    this.kept.clear();
  }

  private tick(): void {
    for (const [stationId, w] of this.watched) {
      if (!w.dirty) continue;
      w.dirty = false;
      const due =
        this.nowMs() - w.lastAnalysisMs >=
        Math.max(MIN_ANALYSIS_SPACING_MS, ANALYSIS_DUTY * w.lastDurationMs);
      this.options.emit(this.payload(stationId, w, due));
    }
  }

  private payload(stationId: string, w: Watched, analyse: boolean): SweepPayload {
    const list = this.kept.get(stationId) ?? [];
    const profile = this.options.profileOf(stationId);
    if (analyse || !w.report) {
      const started = this.nowMs();
      const samples: TimedSample[] = list.map((k) => ({
        t: k.tS,
        rxS: k.tS,
        vinV: k.vinV,
        iinA: k.iinA,
        extra: (k.tpanelC === null ? {} : { tpanel: k.tpanelC }) as Record<string, number>,
      }));
      w.report = analyseSweep(samples, {
        setpointV: profile?.inputSetpointV ?? null,
        panelTempCoeffPctPerC: profile?.panelTempCoeffPctPerC ?? null,
      });
      w.lastAnalysisMs = this.nowMs();
      w.lastDurationMs = w.lastAnalysisMs - started;
      w.stale = false;
    }
    return {
      stationId,
      points: {
        tS: list.map((k) => k.tS),
        vV: list.map((k) => k.vinV),
        pW: list.map((k) => k.vinV * k.iinA),
      },
      // The set point shown is the profile's now, even between analyses.
      report: { ...w.report, setpointV: profile?.inputSetpointV ?? null },
    };
  }
}

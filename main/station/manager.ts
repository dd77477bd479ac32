/**
 * The station manager: each station is one source + its own pipeline + its run in the
 * recorder. Stations never wait for each other: every handler is synchronous and the
 * recorder batches its writes, so a slow or broken port only affects its own station.
 */
import { EventEmitter } from 'node:events';
import { parseProfile } from '@shared/chemistry/profile';
import type { ResolvedProfile } from '@shared/chemistry/types';
import { createPipeline, type Pipeline } from '@shared/engine/pipeline';
import { createLineParser, type LineParser } from '@shared/telemetry/parse-line';
import type { Sample } from '@shared/telemetry/types';
import { MAX_ASSUME_LINES, ProfileAssumer, assumedProfileJson } from '@shared/engine/assumed-profile';
import type { EngineEvent, TimedSample } from '@shared/engine/types';
import type { Recorder, RunEndReason, RunTotals } from '../recorder/types';
import type { RemoteStations } from '../sources';
import type { LineSource, SourceLine, SourceStatus } from '../sources/types';
import { StationConfigError } from './errors';
import { toFeedLine } from './feed-line';
import { resumeVerdict } from './resume-check';
import { defaultMakeSource } from './sources';
import { runChecks } from '@shared/engine/checks';
import {
  applyBoard,
  boardFromFirmware,
  NO_BOARD,
  type StationBoard,
} from '@shared/engine/checks/station-board';
import type {
  SourceConfig,
  StationConfig,
  StationManager,
  StationManagerEvents,
  StationSnapshot,
} from './types';

export const MAX_STATIONS = 16;

export interface StationManagerOptions {
  /** Where runs are recorded; null or absent = live only. */
  recorder?: Recorder | null;
  /** Receive clock, seconds since the epoch. */
  now?: () => number;
  /** Builds a station's source (default: the registry of source kinds, main/sources/). */
  makeSource?: (config: SourceConfig, stationId: string) => LineSource;
  /** Remote stations of other benches (`serve --subscribe`), for the `remote` source kind. */
  remote?: RemoteStations | null;
  /** Most stations at once (default MAX_STATIONS). */
  maxStations?: number;
  /** Silence checks and run totals, every this many ms (default 1000). */
  tickMs?: number;
  /** Continue a run a crash left open when the same station comes back within this (default 600 s). */
  resumeWithinS?: number;
  /** Longest wait for one source to stop on close/remove. */
  stopTimeoutMs?: number;
}

interface Station {
  id: string;
  label: string;
  config: StationConfig;
  profileJson: unknown;
  profile: ResolvedProfile;
  pipeline: Pipeline;
  source: LineSource;
  status: SourceStatus;
  runId: number | null;
  gap: { startRxS: number; reason: string } | null;
  lines: number;
  rejected: number;
  /** The board under test (board id, operator, firmware, batch). */
  board: StationBoard;
  /** Runs of this station are recorded (false for a replay of a recorded run). */
  records: boolean;
  /** No profile given: lines wait here until the first pack voltage shows the cell count. */
  assume: ProfileAssumer | null;
  /** A crash left this station's run open: lines wait here until a sample shows whether to continue it. */
  resume: { runId: number; lastRxS: number; probe: LineParser; pending: SourceLine[] } | null;
}

function resolve(stationId: string, profileJson: unknown): ResolvedProfile {
  const result = parseProfile(profileJson);
  if (!result.ok)
    throw new StationConfigError(`station ${stationId}: profile refused: ${result.error}`, result.key);
  return result.profile;
}

export function createStationManager(options: StationManagerOptions = {}): StationManager {
  const recorder = options.recorder ?? null;
  const now = options.now ?? (() => Date.now() / 1000);
  const makeSource =
    options.makeSource ??
    ((config: SourceConfig) =>
      defaultMakeSource(config, { now, reader: recorder, remote: options.remote ?? null }));
  const maxStations = options.maxStations ?? MAX_STATIONS;
  const resumeWithinS = options.resumeWithinS ?? 600;
  const stopTimeoutMs = options.stopTimeoutMs ?? 3000;
  const stations = new Map<string, Station>();
  const emitter = new EventEmitter<StationManagerEvents>();
  let closed = false;

  function problem(stationId: string | null, message: string, level: 'warn' | 'critical'): void {
    emitter.emit('problem', { stationId, message, level });
  }

  /** Run one station's handler; its failure is reported, never passed to another station. */
  function guarded(st: Station, what: string, fn: () => void): void {
    try {
      fn();
    } catch (err) {
      problem(
        st.id,
        `${st.label}: ${what} failed: ${err instanceof Error ? err.message : String(err)}; the station keeps going`,
        'warn',
      );
    }
  }

  /** The recorder of this station's runs: none when recording is off or the station does not record. */
  const recorderOf = (st: Station): Recorder | null => (st.records ? recorder : null);

  function record(st: Station, events: EngineEvent[]): void {
    const recorder = recorderOf(st);
    for (const event of events) {
      if (recorder && st.runId !== null) recorder.addEvent(st.runId, event);
      emitter.emit('event', { stationId: st.id, event });
    }
  }

  function snapshot(st: Station): StationSnapshot {
    const health = recorderOf(st)?.health();
    return {
      id: st.id,
      label: st.label,
      sourceLabel: st.source.label,
      source: st.status,
      runId: st.runId,
      profile: st.profile,
      state: st.pipeline.state(),
      lines: st.lines,
      rejected: st.rejected,
      recording: health
        ? { ok: health.ok, problem: health.problem }
        : {
            ok: false,
            problem: st.records
              ? 'not recording: no database is open'
              : // Worded "not recording: …" like the no-database case: a deliberate choice, not a failure.
                'not recording: a replay of a recorded run is not recorded again',
          },
      board: { ...st.board },
    };
  }

  function startRun(st: Station): void {
    st.runId = null;
    const recorder = recorderOf(st);
    if (!recorder) return;
    try {
      const found = recorder.resumableRun(st.id, st.profileJson, now(), resumeWithinS);
      if (found) {
        // Decided on the first sample: only the same pack still on charge continues the run.
        const probe = createLineParser({ fields: st.profile.fields, thermistor: st.profile.thermistor });
        st.resume = { ...found, probe, pending: [] };
        return;
      }
    } catch (err) {
      problem(
        st.id,
        `${st.label}: could not look for a run to continue: ${err instanceof Error ? err.message : String(err)}; a new run starts`,
        'warn',
      );
    }
    startNewRun(st);
  }

  function startNewRun(st: Station): void {
    const recorder = recorderOf(st);
    if (!recorder) return;
    try {
      const started = recorder.startRun({
        stationId: st.id,
        stationLabel: st.label,
        profileName: st.profile.name,
        chemistry: st.profile.chemistry,
        profileJson: st.profileJson,
        startRxS: now(),
      });
      st.runId = started.runId;
      if (st.board !== NO_BOARD) recorder.setRunInfo(started.runId, { ...st.board });
    } catch (err) {
      problem(
        st.id,
        `${st.label}: could not start a run in the database: ${err instanceof Error ? err.message : String(err)}; the live display continues`,
        'critical',
      );
    }
  }

  /** Hold a line while the interrupted run waits for its verdict; decide on the first pack voltage. */
  function resumeFrom(st: Station, resume: NonNullable<Station['resume']>, line: SourceLine): void {
    resume.pending.push(line);
    const probe = resume.probe.parse(line.text, line.rxS, line.tooLong);
    const first = probe.kind === 'sample' && probe.sample.vbatV !== undefined ? probe.sample : null;
    if (first === null && resume.pending.length < MAX_ASSUME_LINES) return;
    st.resume = null;
    decideResume(st, resume, first, line.rxS);
    for (const held of resume.pending) onLine(st, held);
  }

  function decideResume(
    st: Station,
    resume: NonNullable<Station['resume']>,
    first: Sample | null,
    atRxS: number,
  ): void {
    const recorder = recorderOf(st);
    if (!recorder) return;
    try {
      // The run's state, rebuilt from its own recorded lines.
      const rebuilt = createPipeline(st.profile);
      const samples: TimedSample[] = [];
      for (const line of recorder.lineIterator(resume.runId)) {
        const out = rebuilt.pushLine(line.text, line.rxS, line.tooLong === true);
        if (out.sample) samples.push(out.sample);
      }
      const state = rebuilt.state();
      const verdict = resumeVerdict({
        profile: st.profile,
        lastPhase: state.phase,
        last: state.last,
        first,
        gapS: atRxS - resume.lastRxS,
      });
      if (!verdict.resume) {
        problem(
          st.id,
          `${st.label}: run ${resume.runId}, left open when the recorder stopped, stays closed as interrupted: ${verdict.why}; a new run starts`,
          'warn',
        );
        startNewRun(st);
        return;
      }
      recorder.resumeRun(resume.runId);
      st.runId = resume.runId;
      if (st.board !== NO_BOARD) recorder.setRunInfo(resume.runId, { ...st.board });
      st.pipeline = rebuilt;
      const summary = rebuilt.summary();
      st.lines = summary.lines;
      st.rejected = summary.rejected;
      // Views show the whole run: the part before the crash comes back as the run's history.
      emitter.emit('restored', {
        stationId: st.id,
        runId: resume.runId,
        samples,
        events: recorder.events(resume.runId),
      });
      st.gap = null;
      openGap(
        st,
        resume.lastRxS,
        `the recorder was not running (crash or restart); run continued: ${verdict.why}`,
      );
      problem(st.id, `${st.label}: run ${resume.runId} continues: ${verdict.why}`, 'warn');
    } catch (err) {
      problem(
        st.id,
        `${st.label}: could not continue run ${resume.runId}: ${err instanceof Error ? err.message : String(err)}; a new run starts`,
        'warn',
      );
      if (st.runId === null) startNewRun(st);
    }
  }

  /** The run judged against the profile's expect ranges, stored with it for the Runs view. */
  function storeVerdict(recorder: Recorder, st: Station): void {
    if (!st.profile.expect || st.runId === null) return;
    // Everything queued must be in the file before it is read back.
    recorder.flush();
    const samples = recorder.allSamples(st.runId);
    if (samples.length === 0) return;
    const report = runChecks({
      profile: st.profile,
      samples,
      events: recorder.events(st.runId),
      board: st.board.boardId,
    });
    recorder.setRunInfo(st.runId, { verdictJson: JSON.stringify(report) });
  }

  /** What the recorder keeps of a run's totals: the summary plus the engine's resistance estimate. */
  function totalsOf(st: Station): RunTotals {
    return {
      ...st.pipeline.summary(),
      internalResistanceOhm: st.pipeline.state().metrics.internalResistanceOhm,
    };
  }

  function endRun(st: Station, reason: RunEndReason): void {
    const recorder = recorderOf(st);
    if (!recorder || st.runId === null) return;
    try {
      guarded(st, 'judging the run', () => storeVerdict(recorder, st));
      recorder.endRun(st.runId, now(), reason, totalsOf(st));
    } catch (err) {
      problem(
        st.id,
        `${st.label}: could not close run ${st.runId}: ${err instanceof Error ? err.message : String(err)}`,
        'critical',
      );
    }
  }

  function openGap(st: Station, startRxS: number, reason: string): void {
    if (st.gap) return;
    st.gap = { startRxS, reason };
    record(st, st.pipeline.gap(startRxS, null, reason));
  }

  function closeGap(st: Station, endRxS: number): void {
    const gap = st.gap;
    if (!gap) return;
    st.gap = null;
    record(st, st.pipeline.gap(gap.startRxS, endRxS, `${gap.reason}; lines lost during the gap: unknown`));
  }

  /** Without a profile: hold lines until a sample shows the pack voltage, then start the run. */
  function assumeFrom(st: Station, assume: ProfileAssumer, line: SourceLine): void {
    const decision = assume.push(line);
    if (!decision) return;
    const { vbatV } = decision;
    st.assume = null;
    st.profileJson = decision.profileJson;
    st.profile = decision.profile;
    st.pipeline = createPipeline(st.profile);
    problem(
      st.id,
      `${st.label}: no profile given; assuming a ${st.profile.cells}-cell Li-ion pack` +
        (vbatV === null
          ? ' (no pack voltage seen yet)'
          : ` from the first pack voltage ${vbatV.toFixed(2)} V`) +
        '. Give a profile for the pack’s real limits; follow the cell maker’s datasheet.',
      'warn',
    );
    startRun(st);
    for (const held of decision.held) onLine(st, held);
  }

  function onLine(st: Station, line: SourceLine): void {
    if (st.assume) return assumeFrom(st, st.assume, line);
    if (st.resume) return resumeFrom(st, st.resume, line);
    if (st.gap) closeGap(st, line.rxS);
    if (line.text.startsWith('#')) {
      const fromFirmware = boardFromFirmware(line.text);
      if (fromFirmware) setBoard(st, fromFirmware);
    }
    const out = st.pipeline.pushLine(line.text, line.rxS, line.tooLong);
    const feed = toFeedLine(line.text, line.rxS, out.result);
    const recorder = recorderOf(st);
    if (out.result.kind !== 'blank') st.lines++;
    if (out.result.kind === 'rejected') st.rejected++;
    if (recorder && st.runId !== null) {
      recorder.addLine(st.runId, line.tooLong ? { ...feed, tooLong: true } : feed);
      if (out.sample) recorder.addSample(st.runId, out.sample);
    }
    emitter.emit('line', { stationId: st.id, line: feed });
    if (out.sample) emitter.emit('sample', { stationId: st.id, sample: out.sample });
    record(st, out.events);
  }

  /** A new board id on a station that already tested one starts a new run for the new board. */
  function setBoard(st: Station, update: Partial<StationBoard>): void {
    const change = applyBoard(st.board, update, st.pipeline.state().last !== null);
    if (!change) return;
    st.board = change.board;
    if (change.newRun) {
      endRun(st, 'board-changed');
      st.pipeline = createPipeline(st.profile);
      st.lines = 0;
      st.rejected = 0;
      st.gap = null;
      startRun(st);
    } else {
      const recorder = recorderOf(st);
      if (recorder && st.runId !== null) recorder.setRunInfo(st.runId, { ...st.board });
    }
    emitter.emit('board', { stationId: st.id, board: { ...st.board }, newRun: change.newRun });
  }

  function onStatus(st: Station, status: SourceStatus): void {
    st.status = status;
    if (status.state === 'lost') {
      openGap(st, status.sinceRxS, `telemetry lost: ${status.detail}`);
      problem(
        st.id,
        `${st.label}: ${status.detail}; the run continues and the gap is recorded when the port comes back`,
        'warn',
      );
    } else if (status.state === 'open') {
      closeGap(st, now());
    }
    emitter.emit('source', { stationId: st.id, status });
  }

  function wire(st: Station): void {
    st.source.on('line', (line) => guarded(st, 'a received line', () => onLine(st, line)));
    st.source.on('status', (status) => guarded(st, 'a port status change', () => onStatus(st, status)));
    st.source.on('problem', (message) => problem(st.id, `${st.label}: ${message}`, 'warn'));
    st.source.on('sent', (sent) =>
      guarded(st, 'recording a sent line', () => {
        const recorder = recorderOf(st);
        if (recorder && st.runId !== null)
          recorder.addSent(st.runId, { text: sent.text, rxS: sent.rxS, t: st.pipeline.timeOf(sent.rxS) });
        emitter.emit('line', { stationId: st.id, line: { rxS: sent.rxS, text: sent.text, kind: 'sent' } });
      }),
    );
  }

  async function stopSource(st: Station): Promise<void> {
    let timer: NodeJS.Timeout | undefined;
    const timeout = new Promise<void>((resolveTimeout) => {
      timer = setTimeout(() => {
        problem(st.id, `${st.label}: the source did not stop within ${stopTimeoutMs} ms; leaving it`, 'warn');
        resolveTimeout();
      }, stopTimeoutMs);
    });
    try {
      await Promise.race([st.source.stop(), timeout]);
    } catch (err) {
      problem(
        st.id,
        `${st.label}: stopping the source failed: ${err instanceof Error ? err.message : String(err)}`,
        'warn',
      );
    } finally {
      clearTimeout(timer);
    }
  }

  const ticker = setInterval(() => {
    const rxS = now();
    for (const st of stations.values()) {
      guarded(st, 'the silence check', () => {
        if (st.source.recordedClock !== true) record(st, st.pipeline.tick(rxS));
        const recorder = recorderOf(st);
        if (recorder && st.runId !== null) recorder.updateTotals(st.runId, totalsOf(st));
      });
    }
  }, options.tickMs ?? 1000);
  ticker.unref();

  const onRecorderProblem = (p: { message: string }) => problem(null, p.message, 'critical');
  const onRecorderRecovered = (p: { message: string }) => problem(null, p.message, 'warn');
  recorder?.on('problem', onRecorderProblem);
  recorder?.on('recovered', onRecorderRecovered);

  function must(stationId: string): Station {
    const st = stations.get(stationId);
    if (!st) throw new StationConfigError(`no station ${stationId}`);
    return st;
  }

  const manager = Object.assign(emitter, {
    async addStation(config: StationConfig): Promise<StationSnapshot> {
      if (closed) throw new StationConfigError('the station manager is closed');
      if (stations.has(config.id)) throw new StationConfigError(`a station ${config.id} already exists`);
      if (stations.size >= maxStations)
        throw new StationConfigError(`at most ${maxStations} stations at once; remove one first`);
      const assumed = config.profile === null || config.profile === undefined;
      const profileJson = assumed ? assumedProfileJson(null) : config.profile;
      const profile = resolve(config.id, profileJson);
      let source: LineSource;
      try {
        source = makeSource(config.source, config.id);
      } catch (err) {
        throw new StationConfigError(
          `station ${config.id}: cannot use its source: ${err instanceof Error ? err.message : String(err)}`,
        );
      }
      const st: Station = {
        id: config.id,
        label: config.label ?? config.id,
        config,
        profileJson,
        profile,
        pipeline: createPipeline(profile),
        source,
        status: { state: 'connecting', detail: `starting ${source.label}` },
        runId: null,
        gap: null,
        lines: 0,
        rejected: 0,
        board: NO_BOARD,
        records: config.record !== false,
        assume: assumed ? new ProfileAssumer() : null,
        resume: null,
      };
      stations.set(st.id, st);
      if (!assumed) startRun(st);
      wire(st);
      const snap = snapshot(st);
      emitter.emit('station-added', snap);
      source.start();
      return snap;
    },
    async removeStation(stationId: string): Promise<void> {
      const st = must(stationId);
      stations.delete(stationId);
      await stopSource(st);
      st.source.removeAllListeners();
      endRun(st, 'stopped');
      emitter.emit('station-removed', { stationId });
    },
    list: () => [...stations.values()].map(snapshot),
    configOf(stationId: string): StationConfig | null {
      const st = stations.get(stationId);
      // The profile as it is now (changed in the app, or assumed from the first pack voltage).
      return st ? { ...st.config, profile: st.assume ? st.config.profile : st.profileJson } : null;
    },
    get(stationId: string) {
      const st = stations.get(stationId);
      return st ? snapshot(st) : null;
    },
    async send(stationId: string, text: string, ending: '\n' | '\r\n' | '\r' | '') {
      const st = must(stationId);
      if (!st.source.send) throw new StationConfigError(`${st.label}: this source cannot send lines`);
      await st.source.send(text, ending);
    },
    profileJsonOf(stationId: string): unknown {
      const st = stations.get(stationId);
      return st ? st.profileJson : null;
    },
    async setBoard(stationId: string, board: Partial<StationBoard>): Promise<StationSnapshot> {
      const st = must(stationId);
      setBoard(st, board);
      return snapshot(st);
    },
    async startBatch(batchId: string): Promise<StationSnapshot[]> {
      // One burn-in, one start: every station's current run ends and a run of the batch begins.
      // A replay of a recorded run is never part of a burn-in.
      const live = [...stations.values()].filter((st) => st.records);
      for (const st of live) {
        st.board = { ...st.board, batchId };
        if (st.assume) continue;
        if (st.pipeline.state().last !== null) {
          endRun(st, 'batch-started');
          st.pipeline = createPipeline(st.profile);
          st.lines = 0;
          st.rejected = 0;
          st.gap = null;
          startRun(st);
        } else if (recorder && st.runId !== null) {
          recorder.setRunInfo(st.runId, { batchId });
        }
        emitter.emit('board', { stationId: st.id, board: { ...st.board }, newRun: true });
      }
      return live.map(snapshot);
    },
    async setProfile(stationId: string, profileJson: unknown): Promise<StationSnapshot> {
      const st = must(stationId);
      const profile = resolve(stationId, profileJson);
      endRun(st, 'profile-changed');
      st.profileJson = profileJson;
      st.profile = profile;
      st.pipeline = createPipeline(profile);
      st.lines = 0;
      st.rejected = 0;
      st.assume = null;
      st.resume = null;
      // The new run has no time axis yet: a port still lost is a gap of the new run only once it has samples.
      st.gap = null;
      startRun(st);
      return snapshot(st);
    },
    async close(): Promise<void> {
      if (closed) return;
      closed = true;
      clearInterval(ticker);
      const all = [...stations.values()];
      stations.clear();
      await Promise.all(all.map((st) => stopSource(st)));
      for (const st of all) {
        st.source.removeAllListeners();
        endRun(st, 'stopped');
      }
      recorder?.flush();
      recorder?.off('problem', onRecorderProblem);
      recorder?.off('recovered', onRecorderRecovered);
    },
  });
  return manager as StationManager;
}

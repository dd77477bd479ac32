/**
 * The API service behind both transports (Electron IPC and the localhost WebSocket): it
 * answers every request method of shared/ipc/requests.ts and turns station activity into
 * the pushes of shared/ipc/pushes.ts. Requests reach `handle` already validated by
 * `validateRequest`; `handle` validates again so no caller can skip it.
 */
import { EventEmitter } from 'node:events';
import { requestSchemas, type RequestMethod } from '@shared/ipc/requests';
import type { PushEnvelope } from '@shared/ipc/pushes';
import type { EngineEvent } from '@shared/engine/types';
import type { ResolvedProfile } from '@shared/chemistry/types';
import type { RunReader } from '../recorder/types';
import type { StationManager, StationSnapshot } from '../station/types';
import { AckBook, type AlarmAck } from './acks';
import { batchFileStem, runFileStem } from './file-names';
import { StationHistory } from './history';
import { PushBatcher } from './push-batcher';
import { realLibraries, type AppLibraries } from './libraries';
import { SweepWatch } from './sweep-watch';
import { LiveChecks } from './live-checks';
import { runChecks } from '@shared/engine/checks';
import { BatchRefusal, batchRunsOf } from '../report/batch';

/** How exports and reports leave the app. */
export type ExportMode =
  /** Web mode: answer with a URL the HTTP server serves. */
  | { kind: 'web' }
  /** Electron: ask where to save (null = the person cancelled), then write the file there. */
  | { kind: 'save'; choosePath(suggestedName: string, what: 'csv' | 'html' | 'pdf'): Promise<string | null> };

export interface AppServiceOptions {
  stations: StationManager;
  recorder: RunReader | null;
  exportMode?: ExportMode;
  /** Write a run's CSV / report to a chosen path (Electron mode). */
  writeCsvFile?: (runId: number, path: string) => Promise<void>;
  writeReportFile?: (runId: number, path: string, pdf: boolean) => Promise<void>;
  /** Write a burn-in batch's Batch report (HTML, or its CSV table) to a chosen path (Electron mode). */
  writeBatchFile?: (batchId: string, path: string, csv: boolean) => Promise<void>;
  /** Start a station that replays a recorded run (`runs.replay`); absent = not offered. */
  replayRun?: (runId: number, speed: number | 'max') => Promise<StationSnapshot>;
  libraries?: AppLibraries;
}

/** A station snapshot as pushed: the manager's snapshot plus the acks the service holds. */
export type StationView = StationSnapshot & { acks: AlarmAck[] };

export type ExportResult = { url: string } | { savedTo: string } | { cancelled: true };

export interface AppService {
  handle(method: RequestMethod, params: unknown): Promise<unknown>;
  /** Listen to every push; returns the function that stops listening. */
  onPush(listener: (push: PushEnvelope) => void): () => void;
  /** Stop listening to the station manager (does not close it). */
  close(): void;
}

/** A request refused for a reason the person can act on (unknown station, run not found...). */
export class RequestError extends Error {
  override name = 'RequestError';
}

export function createAppService(options: AppServiceOptions): AppService {
  const { stations, recorder } = options;
  const libs = options.libraries ?? realLibraries;
  const exportMode: ExportMode = options.exportMode ?? { kind: 'web' };
  const bus = new EventEmitter<{ push: [PushEnvelope] }>();
  bus.setMaxListeners(0);
  const emit = (push: PushEnvelope) => bus.emit('push', push);
  const acks = new AckBook();
  const histories = new Map<string, StationHistory>();

  const view = (snapshot: StationSnapshot): StationView => ({ ...snapshot, acks: acks.list(snapshot.id) });
  const batcher = new PushBatcher(emit, (stationId) => {
    const snapshot = stations.get(stationId);
    return snapshot ? view(snapshot) : null;
  });

  const sweeps = new SweepWatch({
    profileOf: (stationId) => stations.get(stationId)?.profile ?? null,
    emit: (data) => emit({ push: 'sweep', data }),
  });
  const liveChecks = new LiveChecks(() => Date.now());
  const judgeLive = (stationId: string) => {
    const snapshot = stations.get(stationId);
    if (!snapshot) return;
    const history = historyOf(stationId);
    const pushed = liveChecks.update(stationId, {
      profile: snapshot.profile,
      runId: snapshot.runId,
      boardId: snapshot.board?.boardId ?? null,
      sampleCount: history.sampleCount,
      samples: () => history.samples(),
      events: () => history.eventsFrom(),
    });
    if (pushed) emit({ push: 'checks', data: pushed });
  };
  const checksTimer = setInterval(() => {
    for (const snapshot of stations.list()) judgeLive(snapshot.id);
  }, 1000);
  checksTimer.unref();

  const historyOf = (stationId: string): StationHistory => {
    let history = histories.get(stationId);
    if (!history) {
      history = new StationHistory();
      histories.set(stationId, history);
    }
    return history;
  };

  // --- station manager -> pushes -------------------------------------------------------
  const listeners = {
    'station-added': (snapshot: StationSnapshot) => {
      historyOf(snapshot.id);
      emit({ push: 'station', data: view(snapshot) });
    },
    'station-removed': ({ stationId }: { stationId: string }) => {
      batcher.forget(stationId);
      histories.delete(stationId);
      liveChecks.forget(stationId);
      acks.forget(stationId);
      sweeps.forget(stationId, true);
      emit({ push: 'station-removed', data: { stationId } });
    },
    sample: ({ stationId, sample }: Parameters<StationManagerListener<'sample'>>[0]) => {
      historyOf(stationId).addSample(sample);
      sweeps.addSample(stationId, sample);
      batcher.addSample(stationId, sample);
    },
    event: ({ stationId, event }: { stationId: string; event: EngineEvent }) => {
      historyOf(stationId).addEvent(event);
      acks.noteEvent(stationId, event);
      // Samples before the event go out first, so a chart never shows an event ahead of its data.
      batcher.flushStation(stationId);
      emit({ push: 'event', data: { stationId, event } });
      batcher.markChanged(stationId);
    },
    line: ({ stationId, line }: Parameters<StationManagerListener<'line'>>[0]) => {
      historyOf(stationId).addLine(line);
      batcher.addLine(stationId, line);
    },
    restored: ({ stationId, samples, events }: Parameters<StationManagerListener<'restored'>>[0]) => {
      // A run continued after a crash: its history is the whole run, and views reload it.
      const history = new StationHistory();
      for (const sample of samples) history.addSample(sample);
      for (const event of events) history.addEvent(event);
      histories.set(stationId, history);
      const snapshot = stations.get(stationId);
      if (snapshot) emit({ push: 'station', data: view(snapshot) });
    },
    source: ({ stationId }: { stationId: string }) => batcher.markChanged(stationId),
    board: ({ stationId, newRun }: { stationId: string; newRun: boolean }) => {
      // A new board is a new run with a new time axis: the old history belongs to the closed run.
      if (newRun) histories.set(stationId, new StationHistory());
      batcher.markChanged(stationId);
    },
    problem: (problem: Parameters<StationManagerListener<'problem'>>[0]) =>
      emit({ push: 'problem', data: problem }),
  };
  for (const [name, fn] of Object.entries(listeners)) stations.on(name as never, fn as never);
  for (const snapshot of stations.list()) historyOf(snapshot.id);

  // --- helpers ---------------------------------------------------------------------------
  const needStation = (stationId: string): StationSnapshot => {
    const snapshot = stations.get(stationId);
    if (!snapshot) throw new RequestError(`no station "${stationId}": it was removed or never added`);
    return snapshot;
  };
  const needRecorder = (): RunReader => {
    if (!recorder) throw new RequestError('recording is off in this session, so there are no recorded runs');
    return recorder;
  };
  const needRun = (runId: number) => {
    const run = needRecorder().getRun(runId);
    if (!run) throw new RequestError(`no recorded run ${runId}: it was deleted or never recorded`);
    return run;
  };
  const resolveProfile = (json: unknown, origin: string): ResolvedProfile => {
    const result = libs.parseProfile(json);
    if (!result.ok) throw new RequestError(`${origin} refused: ${result.error}`);
    return result.profile;
  };

  const exportFile = async (
    runId: number,
    what: 'csv' | 'html' | 'pdf',
    write: ((path: string) => Promise<void>) | undefined,
  ): Promise<ExportResult> => {
    const run = needRun(runId);
    if (exportMode.kind === 'web') {
      const file = { csv: 'export.csv', html: 'report.html', pdf: 'report.pdf' }[what];
      return { url: `/api/runs/${runId}/${file}` };
    }
    if (!write) throw new RequestError(`saving a ${what.toUpperCase()} file is not offered in this window`);
    const path = await exportMode.choosePath(`${runFileStem(run)}.${what}`, what);
    if (path === null) return { cancelled: true };
    await write(path);
    return { savedTo: path };
  };

  const exportBatch = async (batchId: string, csv: boolean): Promise<ExportResult> => {
    // Checked before anything is offered, so a batch that cannot be judged is refused here
    // in words, not as a failed download.
    try {
      batchRunsOf(needRecorder(), batchId);
    } catch (err) {
      if (err instanceof BatchRefusal) throw new RequestError(err.message);
      throw err;
    }
    if (exportMode.kind === 'web') {
      return { url: `/api/batches/${encodeURIComponent(batchId)}/${csv ? 'batch.csv' : 'report.html'}` };
    }
    const write = options.writeBatchFile;
    if (!write) throw new RequestError('saving a Batch report is not offered in this window');
    const what = csv ? 'csv' : 'html';
    const path = await exportMode.choosePath(`${batchFileStem(batchId)}.${what}`, what);
    if (path === null) return { cancelled: true };
    await write(batchId, path, csv);
    return { savedTo: path };
  };

  const methods: { [M in RequestMethod]: (params: never) => Promise<unknown> | unknown } = {
    'stations.list': () => stations.list().map(view),
    'stations.add': async ({ config }: P<'stations.add'>) => {
      if (stations.get(config.id))
        throw new RequestError(`a station "${config.id}" already exists: pick another id`);
      return view(await stations.addStation(config));
    },
    'stations.remove': async ({ stationId }: P<'stations.remove'>) => {
      needStation(stationId);
      batcher.flushStation(stationId);
      await stations.removeStation(stationId);
      return { stationId };
    },
    'stations.send': async ({ stationId, text, ending }: P<'stations.send'>) => {
      needStation(stationId);
      await stations.send(stationId, text, ending);
      return { sent: true };
    },
    'stations.setProfile': async ({ stationId, profile }: P<'stations.setProfile'>) => {
      needStation(stationId);
      resolveProfile(profile, 'profile');
      const snapshot = await stations.setProfile(stationId, profile);
      // A new run starts with a new time axis: the old history belongs to the closed run.
      histories.set(stationId, new StationHistory());
      sweeps.forget(stationId, false);
      return view(snapshot);
    },
    'stations.history': ({ stationId, fromT }: P<'stations.history'>) => {
      const snapshot = needStation(stationId);
      const history = historyOf(stationId);
      return {
        stationId,
        runId: snapshot.runId,
        samples: history.batch(stationId, fromT ?? 0),
        events: history.eventsFrom(fromT ?? 0),
        lines: history.recentLines(),
        acks: acks.list(stationId),
      };
    },
    'stations.ackAlarm': ({ stationId, code, t }: P<'stations.ackAlarm'>) => {
      const snapshot = needStation(stationId);
      // Only an alarm this station raised can be acknowledged: acks travel with every station push.
      const raised =
        snapshot.state.activeAlarms.some((a) => a.code === code && a.t === t) ||
        historyOf(stationId)
          .eventsFrom()
          .some((e) => e.type === 'alarm' && e.code === code && e.t === t);
      if (!raised)
        throw new RequestError(
          `station "${stationId}" raised no alarm "${code}" at t=${t}: nothing to acknowledge (the alarm may have cleared)`,
        );
      const ack = acks.ack(stationId, code, t);
      emit({ push: 'alarm-ack', data: ack });
      batcher.markChanged(stationId);
      return ack;
    },
    'stations.diagnose': ({ stationId, atT }: P<'stations.diagnose'>) => {
      const snapshot = needStation(stationId);
      // The recorder holds every sample of the run; the live history is thinned to 1 Hz.
      if (recorder && snapshot.runId !== null && recorder.getRun(snapshot.runId)) {
        return libs.diagnose({
          profile: snapshot.profile,
          samples: recorder.allSamples(snapshot.runId),
          events: recorder.events(snapshot.runId),
          atT,
        });
      }
      const history = historyOf(stationId);
      return libs.diagnose({
        profile: snapshot.profile,
        samples: history.samples(),
        events: history.eventsFrom(),
        atT,
      });
    },
    'stations.sweep': ({ stationId, watch }: P<'stations.sweep'>) => {
      needStation(stationId);
      if (!watch) {
        sweeps.unwatch(stationId);
        return null;
      }
      return sweeps.watch(stationId);
    },
    'stations.setInputSetpoint': async ({ stationId, inputSetpointV }: P<'stations.setInputSetpoint'>) => {
      needStation(stationId);
      const json = stations.profileJsonOf?.(stationId);
      if (!json || typeof json !== 'object' || Array.isArray(json))
        throw new RequestError(
          `station "${stationId}" has no profile to change yet: give it a profile first`,
        );
      // Two decimals: a trimmer is not set finer than 10 mV.
      const profile = {
        ...(json as Record<string, unknown>),
        inputSetpointV: Math.round(inputSetpointV * 100) / 100,
      };
      resolveProfile(profile, 'profile with the new set point');
      const snapshot = await stations.setProfile(stationId, profile);
      histories.set(stationId, new StationHistory());
      sweeps.forget(stationId, false);
      return view(snapshot);
    },
    'stations.setBoard': async ({ stationId, boardId, operator, batchId }: P<'stations.setBoard'>) => {
      needStation(stationId);
      const board: Record<string, string | null> = {};
      if (boardId !== undefined) board.boardId = boardId;
      if (operator !== undefined) board.operator = operator === '' ? null : operator;
      if (batchId !== undefined) board.batchId = batchId;
      return view(await stations.setBoard(stationId, board));
    },
    'stations.startBatch': async ({ batchId }: P<'stations.startBatch'>) => {
      const snapshots = await stations.startBatch(batchId);
      for (const snapshot of snapshots) histories.set(snapshot.id, new StationHistory());
      return snapshots.map(view);
    },
    'stations.checks': ({ stationId }: P<'stations.checks'>) => {
      needStation(stationId);
      judgeLive(stationId);
      return liveChecks.latest(stationId);
    },
    'ports.list': () => libs.listPorts(),
    'scenarios.list': () => libs.listScenarios(),
    'profile.validate': ({ profile }: P<'profile.validate'>) => libs.parseProfile(profile),
    'profile.preview': ({ profile, lines }: P<'profile.preview'>) => {
      const parsed = libs.parseProfile(profile);
      if (!parsed.ok) return { profile: parsed, lines: [] };
      return { profile: parsed, lines: libs.previewLines(parsed.profile, lines) };
    },
    'runs.list': () => needRecorder().listRuns(),
    'runs.get': ({ runId }: P<'runs.get'>) => needRun(runId),
    'runs.overview': ({ runId, fields, fromT, toT, buckets }: P<'runs.overview'>) => {
      needRun(runId);
      return needRecorder().overview(runId, fields, fromT, toT, buckets);
    },
    'runs.samples': ({ runId, fromT, toT, limit }: P<'runs.samples'>) => {
      needRun(runId);
      return needRecorder().samples(runId, fromT, toT, limit);
    },
    'runs.events': ({ runId }: P<'runs.events'>) => {
      needRun(runId);
      return needRecorder().events(runId);
    },
    'runs.lines': ({ runId, afterRxS, limit }: P<'runs.lines'>) => {
      needRun(runId);
      return needRecorder().rawLines(runId, afterRxS, limit);
    },
    'runs.delete': ({ runId }: P<'runs.delete'>) => {
      needRun(runId);
      const live = stations.list().find((s) => s.runId === runId);
      if (live)
        throw new RequestError(
          `run ${runId} is still recording on station "${live.id}": remove the station first`,
        );
      needRecorder().deleteRun(runId);
      return { runId };
    },
    'runs.diagnose': ({ runId, atT }: P<'runs.diagnose'>) => {
      needRun(runId);
      const rec = needRecorder();
      const profile = resolveProfile(rec.profileOf(runId), `the profile recorded with run ${runId}`);
      return libs.diagnose({
        profile,
        samples: rec.allSamples(runId),
        events: rec.events(runId),
        atT,
      });
    },
    'runs.checks': ({ runId }: P<'runs.checks'>) => {
      const row = needRun(runId);
      const rec = needRecorder();
      const profile = resolveProfile(rec.profileOf(runId), `the profile recorded with run ${runId}`);
      if (!profile.expect) return null;
      return runChecks({
        profile,
        samples: rec.allSamples(runId),
        events: rec.events(runId),
        board: row.boardId ?? null,
      });
    },
    'runs.exportCsv': ({ runId }: P<'runs.exportCsv'>) =>
      exportFile(runId, 'csv', options.writeCsvFile && ((path) => options.writeCsvFile!(runId, path))),
    'runs.report': ({ runId, pdf }: P<'runs.report'>) =>
      exportFile(
        runId,
        pdf ? 'pdf' : 'html',
        options.writeReportFile && ((path) => options.writeReportFile!(runId, path, pdf === true)),
      ),
    'batches.report': ({ batchId, csv }: P<'batches.report'>) => exportBatch(batchId, csv === true),
    'runs.replay': ({ runId, speed }: P<'runs.replay'>) => {
      needRun(runId);
      if (!options.replayRun)
        throw new RequestError('replaying a run as a station is not offered in this session');
      return options.replayRun(runId, speed).then(view);
    },
  };

  return {
    async handle(method, params) {
      const schema = requestSchemas[method];
      if (!schema) throw new RequestError(`unknown method "${String(method)}"`);
      const parsed = schema.safeParse(params ?? {});
      if (!parsed.success) {
        const issue = parsed.error.issues[0];
        throw new RequestError(
          `${method}: ${issue?.path.join('.') || '(root)'}: ${issue?.message ?? 'invalid'}`,
        );
      }
      return methods[method](parsed.data as never);
    },
    onPush(listener) {
      bus.on('push', listener);
      return () => bus.off('push', listener);
    },
    close() {
      sweeps.close();
      clearInterval(checksTimer);
      batcher.flushAll();
      batcher.close();
      for (const [name, fn] of Object.entries(listeners)) stations.off(name as never, fn as never);
      bus.removeAllListeners();
    },
  };
}

type P<M extends RequestMethod> = import('@shared/ipc/requests').RequestParams<M>;
type StationManagerListener<K extends keyof import('../station/types').StationManagerEvents> = (
  ...args: import('../station/types').StationManagerEvents[K]
) => void;

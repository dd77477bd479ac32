/**
 * Assembles one backend: the recorder, the station manager, the stations asked for on the
 * command line and the API service. `taperline serve` and the Electron backend child both
 * start exactly this, so the desktop app and the web mode cannot drift apart.
 */
import type { StationConfig } from '@shared/sources/schemas';
import { openRecorder, defaultDbPath } from '../recorder';
import type { Recorder } from '../recorder/types';
import { createStationManager, MAX_STATIONS } from '../station';
import type { StationManager, StationSnapshot } from '../station/types';
import { InputFileError } from './input-file-error';
import { keepSavedRack, readSavedRack, savedRackPath } from './rack';
import { createAppService, RequestError, type AppService, type AppServiceOptions } from './service';
import { startSubscriber, type Subscriber } from '../mqtt/subscriber';

export interface BackendOptions {
  /** Recording database; default the user's data folder. null = do not record. */
  dbPath?: string | null;
  /** Stations to start (from `--station-port`, `--simulate` and a rack file; see app/rack.ts). */
  stations?: StationConfig[];
  /**
   * Bring back the stations of the rack saved next to the database (default true), and keep
   * saving it. Stations given in `stations` with an id of the saved rack are not started twice.
   */
  savedRack?: boolean;
  /** Show every station published under this broker URL and prefix (`mqtt://HOST[:PORT]/PREFIX`). */
  subscribe?: string;
  exportMode?: AppServiceOptions['exportMode'];
  writeCsvFile?: AppServiceOptions['writeCsvFile'];
  writeReportFile?: AppServiceOptions['writeReportFile'];
  writeBatchFile?: AppServiceOptions['writeBatchFile'];
}

/** Remote stations a serve may show besides its own (four benches of 60). */
export const MAX_REMOTE_STATIONS = 240;

export interface Backend {
  stations: StationManager;
  recorder: Recorder | null;
  service: AppService;
  /** Close every run as stopped, flush and close the database. Safe to call twice. */
  stop(): Promise<void>;
}

/** A start-up problem a person caused (bad scenario, unreadable profile): one sentence. */
export class BackendStartError extends Error {
  override name = 'BackendStartError';
}

export async function startBackend(options: BackendOptions): Promise<Backend> {
  const dbPath = options.dbPath === null ? null : (options.dbPath ?? defaultDbPath());
  const rackPath = dbPath !== null && options.savedRack !== false ? savedRackPath(dbPath) : null;
  let saved: StationConfig[] = [];
  try {
    if (rackPath) saved = readSavedRack(rackPath);
  } catch (err) {
    throw new BackendStartError(
      `${(err as Error).message}. Fix or delete that file, or start with --fresh to ignore it`,
    );
  }
  const recorder = dbPath === null ? null : openRecorder(dbPath);
  const now = () => Date.now() / 1000;
  let subscriber: Subscriber | null = null;
  const stations = createStationManager({
    recorder,
    now,
    remote: { sourceFor: (config) => subscriber!.sourceFor(config) },
    maxStations: MAX_STATIONS + (options.subscribe ? MAX_REMOTE_STATIONS : 0),
  });
  let replayCount = 0;
  const replayRun = async (runId: number, speed: number | 'max'): Promise<StationSnapshot> => {
    if (!recorder) throw new RequestError('replaying needs the recording database, and recording is off');
    const run = recorder.getRun(runId);
    if (!run) throw new RequestError(`no recorded run ${runId}`);
    replayCount++;
    return stations.addStation({
      id: `replay-${runId}-${replayCount}`,
      label: `Replay of run ${runId} (${run.stationLabel || run.stationId})`,
      source: { kind: 'replay', runId, speed },
      profile: recorder.profileOf(runId),
      // A replay reads a recorded run again: it must not record a copy of it.
      record: false,
    });
  };
  const service = createAppService({
    stations,
    recorder,
    replayRun,
    exportMode: options.exportMode,
    writeCsvFile: options.writeCsvFile,
    writeReportFile: options.writeReportFile,
    writeBatchFile: options.writeBatchFile,
  });
  const keeper = rackPath
    ? keepSavedRack(stations, rackPath, (message) =>
        stations.emit('problem', { stationId: null, message, level: 'warn' }),
      )
    : null;
  let stopped: Promise<void> | null = null;
  const stop = () =>
    (stopped ??= (async () => {
      // Saved before the stations close, so the saved rack keeps them for the next start.
      keeper?.save();
      keeper?.stop();
      await subscriber?.stop();
      service.close();
      await stations.close();
      const closed = recorder?.close();
      // Rows a full disk kept out of the database: say how many and where they were saved.
      if (closed && closed.unwritten > 0) {
        process.stderr.write(
          `taperline: ${closed.unwritten} rows could not be written (${closed.reason}); ${closed.spill !== null ? `saved to ${closed.spill}, imported at the next open` : `not saved either (${closed.spillError})`}\n`,
        );
        process.exitCode = 1;
      }
    })());

  try {
    const savedIds = new Set(saved.map((c) => c.id));
    const fresh = (options.stations ?? []).filter((c) => !savedIds.has(c.id));
    for (const config of [...saved, ...fresh]) await stations.addStation(config);
    if (options.subscribe) subscriber = startSubscriber(options.subscribe, stations);
    keeper?.save();
  } catch (err) {
    await stop();
    throw err instanceof BackendStartError ? err : new BackendStartError((err as Error).message);
  }
  return { stations, recorder, service, stop };
}

export { InputFileError };

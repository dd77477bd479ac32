/**
 * Assembles one backend: the recorder, the station manager, the stations asked for on the
 * command line and the API service. `taperline serve` and the Electron backend child both
 * start exactly this, so the desktop app and the web mode cannot drift apart.
 */
import { readValidatedProfileJson } from '../cli/profile-file';
import { openRecorder, defaultDbPath } from '../recorder';
import type { Recorder } from '../recorder/types';
import { createStationManager } from '../station';
import { defaultMakeSource } from '../station/sources';
import type { StationConfig, StationManager, StationSnapshot } from '../station/types';
import { getScenario } from '../simulator/scenarios';
import { parseReplayScenario, replayScenarioName, ReplaySource } from './replay-source';
import { createAppService, RequestError, type AppService, type AppServiceOptions } from './service';
import { combineStationManagers } from './station-set';

export interface BackendOptions {
  /** Recording database; default the user's data folder. null = do not record. */
  dbPath?: string | null;
  /** Start a simulated station running this scenario. */
  simulate?: { scenario: string; speedup?: number };
  /** Start a station on a serial port. `profilePath` is a profile JSON file. */
  serial?: { path: string; baudRate: number; profilePath: string };
  exportMode?: AppServiceOptions['exportMode'];
  writeCsvFile?: AppServiceOptions['writeCsvFile'];
  writeReportFile?: AppServiceOptions['writeReportFile'];
}

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
  const recorder = options.dbPath === null ? null : openRecorder(options.dbPath ?? defaultDbPath());
  const now = () => Date.now() / 1000;
  const live = createStationManager({ recorder, now });
  // Replays read a recorded run again; they run in a manager that does not record.
  const replays = createStationManager({
    recorder: null,
    now,
    makeSource: (config) => {
      if (config.kind !== 'simulator') return defaultMakeSource(config, { now });
      const replay = parseReplayScenario(config.scenario);
      if (!replay) return defaultMakeSource(config, { now });
      if (!recorder) throw new Error('replaying needs the recording database, and recording is off');
      return new ReplaySource(recorder, replay.runId, replay.max ? null : (config.speedup ?? 1), now);
    },
  });
  const isReplay = (config: StationConfig) =>
    config.source.kind === 'simulator' && parseReplayScenario(config.source.scenario) !== null;
  const stations = combineStationManagers(live, replays, isReplay);
  let replayCount = 0;
  const replayRun = async (runId: number, speed: number | 'max'): Promise<StationSnapshot> => {
    if (!recorder) throw new RequestError('replaying needs the recording database, and recording is off');
    const run = recorder.getRun(runId);
    if (!run) throw new RequestError(`no recorded run ${runId}`);
    replayCount++;
    return stations.addStation({
      id: `replay-${runId}-${replayCount}`,
      label: `Replay of run ${runId} (${run.stationLabel || run.stationId})`,
      source: {
        kind: 'simulator',
        scenario: replayScenarioName(runId, speed),
        speedup: speed === 'max' ? undefined : speed,
      },
      profile: recorder.profileOf(runId),
    });
  };
  const service = createAppService({
    stations,
    recorder,
    replayRun,
    exportMode: options.exportMode,
    writeCsvFile: options.writeCsvFile,
    writeReportFile: options.writeReportFile,
  });
  let stopped: Promise<void> | null = null;
  const stop = () =>
    (stopped ??= (async () => {
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
    for (const config of initialStations(options)) await stations.addStation(config);
  } catch (err) {
    await stop();
    throw err instanceof BackendStartError ? err : new BackendStartError((err as Error).message);
  }
  return { stations, recorder, service, stop };
}

function initialStations(options: BackendOptions): StationConfig[] {
  const configs: StationConfig[] = [];
  if (options.simulate) {
    let scenario;
    try {
      scenario = getScenario(options.simulate.scenario);
    } catch (err) {
      throw new BackendStartError((err as Error).message);
    }
    configs.push({
      id: `sim-${scenario.name}`.slice(0, 64),
      label: `Simulated: ${scenario.name}`,
      source: { kind: 'simulator', scenario: scenario.name, speedup: options.simulate.speedup },
      profile: scenario.profile,
    });
  }
  if (options.serial) {
    configs.push({
      id: 'bench-1',
      label: options.serial.path,
      source: { kind: 'serial', path: options.serial.path, baudRate: options.serial.baudRate },
      // Throws a one-line error naming the file (or the bad key); startBackend reports it.
      profile: readValidatedProfileJson(options.serial.profilePath),
    });
  }
  return configs;
}

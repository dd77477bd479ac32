/**
 * Contract of the station layer, shared by the headless recorder, the web server and the
 * Electron shell. A station is one charger on one source, with its profile, pipeline and run.
 */
import type { EventEmitter } from 'node:events';
import type { EngineEvent, TimedSample } from '@shared/engine/types';
import type { FeedLine, SourceStatus, StationSnapshot } from '@shared/ipc/payloads';
import type { StationBoard } from '@shared/engine/checks/station-board';
import type { StationConfig } from '@shared/sources/schemas';

export type { FeedLine, StationSnapshot };

// Derived from the zod schemas of shared/sources: one definition of every source kind.
export type {
  SerialSourceConfig,
  SimulatorSourceConfig,
  SourceConfig,
  StationConfig,
} from '@shared/sources/schemas';

export interface StationManagerEvents {
  'station-added': [StationSnapshot];
  'station-removed': [{ stationId: string }];
  sample: [{ stationId: string; sample: TimedSample }];
  event: [{ stationId: string; event: EngineEvent }];
  line: [{ stationId: string; line: FeedLine }];
  source: [{ stationId: string; status: SourceStatus }];
  /** A problem a person should read (recording failed, port vanished...). */
  problem: [{ stationId: string | null; message: string; level: 'warn' | 'critical' }];
  /** The board under test changed (typed, scanned or printed by the firmware). */
  board: [{ stationId: string; board: StationBoard; newRun: boolean }];
}

export interface StationManager extends EventEmitter<StationManagerEvents> {
  addStation(config: StationConfig): Promise<StationSnapshot>;
  removeStation(stationId: string): Promise<void>;
  list(): StationSnapshot[];
  get(stationId: string): StationSnapshot | null;
  /** A station's config with its profile as it is now (for a saved rack); null when unknown. */
  configOf(stationId: string): StationConfig | null;
  send(stationId: string, text: string, ending: '\n' | '\r\n' | '\r' | ''): Promise<void>;
  /** Set the board under test (typed or scanned); a new board id starts a new run. */
  setBoard(stationId: string, board: Partial<StationBoard>): Promise<StationSnapshot>;
  /** Start a burn-in batch: every station's run ends and a new run of batch `batchId` begins. */
  startBatch(batchId: string): Promise<StationSnapshot[]>;
  /** Replace a station's profile: closes the current run and starts a new one. */
  setProfile(stationId: string, profile: unknown): Promise<StationSnapshot>;
  /** Stop every station, close their runs cleanly, flush the recorder. */
  close(): Promise<void>;
}

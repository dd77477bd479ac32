/**
 * Contract of the station layer, shared by the headless recorder, the web server and the
 * Electron shell. A station is one charger on one source, with its profile, pipeline and run.
 */
import type { EventEmitter } from 'node:events';
import type { EngineEvent, TimedSample } from '@shared/engine/types';
import type { FeedLine, SourceStatus, StationSnapshot } from '@shared/ipc/payloads';

export type { FeedLine, StationSnapshot };

export type SerialSourceConfig = {
  kind: 'serial';
  path: string;
  baudRate: number;
  dataBits?: 5 | 6 | 7 | 8;
  parity?: 'none' | 'even' | 'odd';
  stopBits?: 1 | 2;
  /** Find the device again after a replug, when it comes back under another path. */
  match?: { serialNumber?: string; vendorId?: string; productId?: string };
};

export type SimulatorSourceConfig = {
  kind: 'simulator';
  scenario: string;
  /** Simulated seconds per wall-clock second (time compression for demos). */
  speedup?: number;
  shape?: 'kv' | 'csv' | 'json';
  sampleIntervalS?: number;
};

export type SourceConfig = SerialSourceConfig | SimulatorSourceConfig;

export interface StationConfig {
  /** Stable id, e.g. `bench-1`. */
  id: string;
  label?: string;
  source: SourceConfig;
  /**
   * Profile JSON as the user wrote it (the README's profile keys); validated on add. Null or absent:
   * a Li-ion pack is assumed from the first pack voltage (as `replay` does without --profile),
   * and the run starts with that first sample.
   */
  profile: unknown;
}

export interface StationManagerEvents {
  'station-added': [StationSnapshot];
  'station-removed': [{ stationId: string }];
  sample: [{ stationId: string; sample: TimedSample }];
  event: [{ stationId: string; event: EngineEvent }];
  line: [{ stationId: string; line: FeedLine }];
  source: [{ stationId: string; status: SourceStatus }];
  /** A problem a person should read (recording failed, port vanished...). */
  problem: [{ stationId: string | null; message: string; level: 'warn' | 'critical' }];
}

export interface StationManager extends EventEmitter<StationManagerEvents> {
  addStation(config: StationConfig): Promise<StationSnapshot>;
  removeStation(stationId: string): Promise<void>;
  list(): StationSnapshot[];
  get(stationId: string): StationSnapshot | null;
  send(stationId: string, text: string, ending: '\n' | '\r\n' | '\r' | ''): Promise<void>;
  /** Replace a station's profile: closes the current run and starts a new one. */
  setProfile(stationId: string, profile: unknown): Promise<StationSnapshot>;
  /** The profile JSON the station runs with, as written or assumed (null for no such station). */
  profileJsonOf?(stationId: string): unknown;
  /** Stop every station, close their runs cleanly, flush the recorder. */
  close(): Promise<void>;
}

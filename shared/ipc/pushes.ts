/** Messages the backend pushes to every watching view. */
import type { EngineEvent } from '../engine/types';

/** A batch of samples of one station in column form (cheap to send, cheap to plot). */
export interface SampleBatch {
  stationId: string;
  tS: number[];
  vbatV: (number | null)[];
  ibatA: (number | null)[];
  tempC: (number | null)[];
  vinV: (number | null)[];
  iinA: (number | null)[];
}

/** A command from the desktop app's menu, for the view that knows what it applies to (Electron only). */
export type AppCommand =
  | { command: 'show-view'; view: 'bench' | 'rack' | 'runs' | 'feed' }
  /** Save the Run report / export the CSV of the run the window shows (runs.report / runs.exportCsv). */
  | { command: 'save-report' }
  | { command: 'export-csv' };

export type PushEnvelope =
  /** StationSnapshot (main/station/types.ts), throttled to MAX_PUSHES_PER_SECOND. */
  | { push: 'station'; data: unknown }
  | { push: 'station-removed'; data: { stationId: string } }
  | { push: 'samples'; data: SampleBatch }
  | { push: 'event'; data: { stationId: string; event: EngineEvent } }
  /** FeedLine[] (main/station/types.ts), batched. */
  | { push: 'lines'; data: { stationId: string; lines: unknown[] } }
  | { push: 'problem'; data: { stationId: string | null; message: string; level: 'warn' | 'critical' } }
  | { push: 'alarm-ack'; data: { stationId: string; code: string; t: number } }
  | { push: 'command'; data: AppCommand }
  /** A station's board checks, recomputed as its run goes on (CheckReport of shared/engine/checks). */
  | { push: 'checks'; data: { stationId: string; runId: number | null; report: unknown } };

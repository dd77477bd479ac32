/**
 * A line source: anything that delivers telemetry lines to a station (a serial port, the
 * built-in simulated charger, a TCP stream, a remote bench, a recorded run, a file). Every
 * source feeds the same pipeline. The kinds and their factories: `main/sources/registry.ts`.
 */
import type { EventEmitter } from 'node:events';
import type { SourceStatus } from '@shared/ipc/payloads';

export type { SourceStatus };

export interface SourceLine {
  /** The line without its newline (and without a trailing `\r`). */
  text: string;
  /** Host receive time, seconds since the Unix epoch (or a replay's synthetic clock). */
  rxS: number;
  /** The line was cut at MAX_LINE_BYTES; the rest up to the next newline was dropped. */
  tooLong: boolean;
}

export interface LineSourceEvents {
  line: [SourceLine];
  status: [SourceStatus];
  /** A line the host sent to the device (firmware commands), recorded too. */
  sent: [{ text: string; rxS: number }];
  /** A problem a person should read; the source keeps going unless it emits `closed`. */
  problem: [string];
}

export interface LineSource extends EventEmitter<LineSourceEvents> {
  /** Human-readable identity: a port path, `simulator:bench-liion-3s`, a file name. */
  readonly label: string;
  /**
   * The lines carry a recording's clock (a recorded run, a file), not the wall clock: the
   * station does not tick silence on wall time for it; a hole in its data is a silence of its
   * own, found when the next line arrives (as `taperline replay` does). Absent = wall clock.
   */
  readonly recordedClock?: boolean;
  start(): void;
  stop(): Promise<void>;
  /** Send a line to the device, when the source can (serial ports, the simulator). */
  send?(text: string, ending: '\n' | '\r\n' | '\r' | ''): Promise<void>;
}

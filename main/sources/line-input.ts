/**
 * A whole input read as lines, for the commands and reports that read one input to its end
 * (a telemetry file, standard input, a run of a recording database). `main/cli/line-input.ts`
 * opens one; `main/report/` reads it.
 */
import type { ResolvedProfile } from '@shared/chemistry/types';

export interface TimedLine {
  text: string;
  rxS: number;
  tooLong: boolean;
}

/** One line still in bytes (`bytes[from..to)`), the fast path of files. */
export type TimedByteLine = (
  bytes: Uint8Array,
  from: number,
  to: number,
  rxS: number,
  tooLong: boolean,
) => void;

export interface LineInput {
  /** The profile the input was recorded with, when it carries one (database runs). */
  profile: ResolvedProfile | null;
  /** Fast path: every line, synchronously per chunk. */
  forEach(onLine: (text: string, rxS: number, tooLong: boolean) => void): Promise<void>;
  /** Faster still for files: every line as bytes (absent for database runs, which hold text). */
  forEachBytes?: (onLine: TimedByteLine) => Promise<void>;
  lines(): AsyncIterable<TimedLine>;
}

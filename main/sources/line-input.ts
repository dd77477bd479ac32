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

export interface LineInput {
  /** The profile the input was recorded with, when it carries one (database runs). */
  profile: ResolvedProfile | null;
  /** Fast path: every line, synchronously per chunk. */
  forEach(onLine: (text: string, rxS: number, tooLong: boolean) => void): Promise<void>;
  lines(): AsyncIterable<TimedLine>;
}

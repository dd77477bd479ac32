/**
 * Loads a profile JSON file; every failure is one line naming the file and key (an
 * InputFileError, which the command line shows as a usage error, exit 2).
 */
import { readFileSync } from 'node:fs';
import { parseProfile } from '@shared/chemistry/profile';
import type { ResolvedProfile } from '@shared/chemistry/types';
import { InputFileError } from './input-file-error';

/** A profile file resolved to the limits the engine uses (replay, diagnose, report). */
export function loadProfileFile(path: string): ResolvedProfile {
  return resolveProfileJson(readProfileFileJson(path), `profile ${path}`);
}

/**
 * A profile file's JSON as written (stations store it with each run), after checking it is a
 * valid profile. The one reader of profile files for `record`, `serve` and the desktop app.
 */
export function readValidatedProfileJson(path: string): unknown {
  const json = readProfileFileJson(path);
  resolveProfileJson(json, `profile ${path}`);
  return json;
}

/** Validates profile JSON from any origin (a file, a recorded run's snapshot). */
export function resolveProfileJson(json: unknown, origin: string): ResolvedProfile {
  const result = parseProfile(json);
  if (!result.ok) throw new InputFileError(`${origin} refused: ${result.error}`);
  return result.profile;
}

function readProfileFileJson(path: string): unknown {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    throw new InputFileError(
      code === 'ENOENT'
        ? `no such profile file: ${path}`
        : `cannot read profile ${path}: ${(err as Error).message}`,
    );
  }
  // A UTF-8 byte-order mark, as some editors save, is not part of the JSON.
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  try {
    return JSON.parse(text) as unknown;
  } catch (err) {
    throw new InputFileError(`profile ${path} is not valid JSON: ${(err as Error).message}`);
  }
}

/** Loads a profile JSON file for the CLI; every failure is one line naming the file and key. */
import { readFileSync } from 'node:fs';
import { parseProfile } from '@shared/chemistry/profile';
import type { ResolvedProfile } from '@shared/chemistry/types';
import { UsageError } from './errors';

export function loadProfileFile(path: string): ResolvedProfile {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    throw new UsageError(
      code === 'ENOENT'
        ? `no such profile file: ${path}`
        : `cannot read profile ${path}: ${(err as Error).message}`,
    );
  }
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (err) {
    throw new UsageError(`profile ${path} is not valid JSON: ${(err as Error).message}`);
  }
  return resolveProfileJson(json, `profile ${path}`);
}

/** Validates profile JSON from any origin (a file, a recorded run's snapshot). */
export function resolveProfileJson(json: unknown, origin: string): ResolvedProfile {
  const result = parseProfile(json);
  if (!result.ok) throw new UsageError(`${origin} refused: ${result.error}`);
  return result.profile;
}

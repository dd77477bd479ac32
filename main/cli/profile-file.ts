/** Profile files for the commands: the app's reader, its refusals as usage errors (exit 2). */
import type { ResolvedProfile } from '@shared/chemistry/types';
import * as files from '../app/profile-file';
import { InputFileError } from '../app/input-file-error';
import { UsageError } from './errors';

function asUsage<T>(read: () => T): T {
  try {
    return read();
  } catch (err) {
    if (err instanceof InputFileError) throw new UsageError(err.message);
    throw err;
  }
}

export const loadProfileFile = (path: string): ResolvedProfile => asUsage(() => files.loadProfileFile(path));
export const readValidatedProfileJson = (path: string): unknown =>
  asUsage(() => files.readValidatedProfileJson(path));
export const resolveProfileJson = (json: unknown, origin: string): ResolvedProfile =>
  asUsage(() => files.resolveProfileJson(json, origin));

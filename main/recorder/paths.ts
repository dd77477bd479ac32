/** Where the recording database lives when the user does not say (`--db FILE`). */
import { homedir } from 'node:os';
import { join } from 'node:path';

export const DB_FILE_NAME = 'taperline.sqlite';

/**
 * The per-user data folder of each platform: XDG base directories on Linux,
 * Application Support on macOS, %APPDATA% on Windows.
 */
export function defaultDataDir(
  env: NodeJS.ProcessEnv = process.env,
  platform: NodeJS.Platform = process.platform,
): string {
  if (platform === 'darwin') return join(homedir(), 'Library', 'Application Support', 'taperline');
  if (platform === 'win32') return join(env.APPDATA ?? join(homedir(), 'AppData', 'Roaming'), 'taperline');
  const xdg = env.XDG_DATA_HOME;
  // The XDG spec says a relative XDG_DATA_HOME is invalid and must be ignored.
  const base = xdg && xdg.startsWith('/') ? xdg : join(homedir(), '.local', 'share');
  return join(base, 'taperline');
}

export function defaultDbPath(
  env: NodeJS.ProcessEnv = process.env,
  platform: NodeJS.Platform = process.platform,
): string {
  return join(defaultDataDir(env, platform), DB_FILE_NAME);
}

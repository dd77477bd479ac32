/**
 * A real `taperline serve` as a child process on 127.0.0.1 and a free port, with its own
 * SQLite file in a temp dir. Stopped with SIGTERM (every run closes as stopped) and cleaned up.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

export interface ServeHandle {
  /** The address the server printed; it carries `?token=`, which every request needs. */
  url: string;
  /** The same address with `?bench=`/hash added by the caller; base without query. */
  origin: string;
  dbPath: string;
  dir: string;
  output(): string;
  stop(): Promise<void>;
}

const CLI = join(process.cwd(), 'dist', 'cli.cjs');
const START_TIMEOUT_MS = 30_000;

export interface ServeOptions {
  /** A fixed port (to start again where a page was connected); default any free port. */
  port?: number;
  /** Reuse this folder (and its database) instead of a fresh temp dir. */
  dir?: string;
  /** Leave the folder in place on stop (for a restart that reuses it). */
  keepDir?: boolean;
  /** Start with this access token (TAPERLINE_TOKEN), so a page kept open across a restart stays allowed. */
  token?: string;
}

export async function startServe(extraArgs: string[], options: ServeOptions = {}): Promise<ServeHandle> {
  const dir = options.dir ?? mkdtempSync(join(tmpdir(), 'taperline-e2e-'));
  const dbPath = join(dir, 'runs.sqlite');
  const args = [
    CLI,
    'serve',
    '--host',
    '127.0.0.1',
    '--port',
    String(options.port ?? 0),
    '--db',
    dbPath,
    ...extraArgs,
  ];
  const child: ChildProcess = spawn(process.execPath, args, {
    stdio: ['ignore', 'pipe', 'pipe'],
    env: { ...process.env, ...(options.token ? { TAPERLINE_TOKEN: options.token } : {}) },
  });
  let out = '';
  child.stdout!.on('data', (d) => (out += String(d)));
  child.stderr!.on('data', (d) => (out += String(d)));
  const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));

  const url = await new Promise<string>((resolve, reject) => {
    const timer = setTimeout(
      () => reject(new Error(`taperline serve printed no address within ${START_TIMEOUT_MS} ms:\n${out}`)),
      START_TIMEOUT_MS,
    );
    const onData = () => {
      const m = /serving at (http:\/\/\S+)/.exec(out);
      if (m) {
        clearTimeout(timer);
        resolve(m[1]);
      }
    };
    child.stdout!.on('data', onData);
    child.once('exit', (code) => {
      clearTimeout(timer);
      reject(new Error(`taperline serve exited with ${code} before serving:\n${out}`));
    });
  });
  const parsed = new URL(url);
  return {
    url,
    origin: parsed.origin,
    dbPath,
    dir,
    output: () => out,
    async stop() {
      if (child.exitCode === null && child.signalCode === null) {
        child.kill('SIGTERM');
        const timeout = new Promise<void>((resolve) => setTimeout(resolve, 10_000));
        await Promise.race([exited, timeout]);
        if (child.exitCode === null && child.signalCode === null) child.kill('SIGKILL');
        await exited;
      }
      if (!options.keepDir) rmSync(dir, { recursive: true, force: true });
    },
  };
}

/** The page URL for a view: the printed address (keeping its token) with a hash. */
export function pageUrl(serve: ServeHandle, view: string, query: Record<string, string> = {}): string {
  const u = new URL(serve.url);
  for (const [k, v] of Object.entries(query)) u.searchParams.set(k, v);
  u.hash = view;
  return u.toString();
}

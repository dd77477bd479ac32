/**
 * Builds the firmware folder with its Makefile (gcc, avr-gcc, libsimavr from Debian) for the
 * firmware tests and the firmware bench. Not a test itself.
 */
import { execFileSync, spawn, type ChildProcessWithoutNullStreams } from 'node:child_process';
import { join, resolve } from 'node:path';

export const FIRMWARE_DIR = resolve(__dirname, '..', '..', 'firmware');

/** `make -C firmware <targets>` with extra variables; returns make's output, throws with it on failure. */
export function make(targets: string[], vars: Record<string, string> = {}, buildDir = 'build'): string {
  const args = [
    '-C',
    FIRMWARE_DIR,
    `BUILD=${buildDir}`,
    ...Object.entries(vars).map(([k, v]) => `${k}=${v}`),
    ...targets,
  ];
  try {
    return execFileSync('make', args, { encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] });
  } catch (err) {
    const e = err as { stdout?: string; stderr?: string; message: string };
    throw new Error(`make ${targets.join(' ')} failed:\n${e.stdout ?? ''}${e.stderr ?? e.message}`, {
      cause: err,
    });
  }
}

export const buildPath = (buildDir: string, ...parts: string[]): string =>
  join(FIRMWARE_DIR, buildDir, ...parts);

/**
 * The host line CLI (firmware/host/tl_cli.c) kept running: one request a line, the answer
 * ends at a line holding only `=`.
 */
export class LineCli {
  private readonly child: ChildProcessWithoutNullStreams;
  private pending = '';
  private waiting: ((text: string) => void) | null = null;

  constructor(path: string, args: string[] = []) {
    this.child = spawn(path, args, { stdio: ['pipe', 'pipe', 'pipe'] });
    this.child.stdout.setEncoding('utf8');
    this.child.stdout.on('data', (d: string) => {
      this.pending += d;
      const end = this.pending.startsWith('=\n') ? 0 : this.pending.indexOf('\n=\n') + 1;
      if (end !== 0 || this.pending.startsWith('=\n')) {
        if (this.waiting === null) return;
        const text = this.pending.slice(0, end);
        this.pending = this.pending.slice(end + 2);
        const w = this.waiting;
        this.waiting = null;
        w(text);
      }
    });
  }

  /** Sends one request; resolves with the output lines before the `=` terminator. */
  request(line: string): Promise<string> {
    return new Promise((res) => {
      this.waiting = res;
      this.child.stdin.write(`${line}\n`);
    });
  }

  close(): void {
    this.child.stdin.end();
  }
}

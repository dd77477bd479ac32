/**
 * A socat pty pair for serial tests: two linked pseudo-terminals at fixed link paths, so
 * a test can "unplug" (kill socat) and "replug" (start it again on the same links).
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync } from 'node:fs';

export interface PtyPair {
  /** The end the test writes to (the "device"). */
  readonly device: string;
  /** The end the station reads (the "host" port). */
  readonly host: string;
  /** Start socat (again). Resolves once both links point at live ptys. */
  start(): Promise<void>;
  /** Kill socat with SIGKILL: both ptys vanish as if a USB cable was pulled. */
  unplug(): Promise<void>;
  stop(): Promise<void>;
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

export function ptyPair(device: string, host: string): PtyPair {
  let proc: ChildProcess | null = null;
  async function kill(signal: NodeJS.Signals): Promise<void> {
    const p = proc;
    proc = null;
    if (!p || p.exitCode !== null || p.signalCode !== null) return;
    const gone = new Promise<void>((resolve) => p.once('exit', () => resolve()));
    p.kill(signal);
    await gone;
    // The links now point at ptys that no longer exist.
    for (let i = 0; i < 100 && (existsSync(device) || existsSync(host)); i++) await sleep(10);
  }
  return {
    device,
    host,
    async start() {
      if (proc) throw new Error('socat already running');
      const p = spawn('socat', [`pty,raw,echo=0,link=${device}`, `pty,raw,echo=0,link=${host}`], {
        stdio: 'ignore',
      });
      proc = p;
      for (let i = 0; i < 500; i++) {
        if (p.exitCode !== null) throw new Error(`socat exited with ${p.exitCode}`);
        if (existsSync(device) && existsSync(host)) return;
        await sleep(10);
      }
      throw new Error('socat did not create its ptys within 5 s');
    },
    unplug: () => kill('SIGKILL'),
    stop: () => kill('SIGTERM'),
  };
}

/** Wait until `cond` holds (polled every 10 ms), failing after `ms`. */
export async function until(cond: () => boolean, ms = 10_000, what = 'condition'): Promise<void> {
  const end = Date.now() + ms;
  while (!cond()) {
    if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
    await sleep(10);
  }
}

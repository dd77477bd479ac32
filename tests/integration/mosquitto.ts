/**
 * A real Mosquitto broker for tests and benchmarks: Debian's /usr/sbin/mosquitto on a free
 * loopback port, its config file and persistence in a temporary folder of its own. It can
 * be stopped (SIGTERM: it saves its sessions) and started again on the same port.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { createConnection, createServer, type AddressInfo } from 'node:net';
import { tmpdir, userInfo } from 'node:os';
import { join } from 'node:path';

export const MOSQUITTO = '/usr/sbin/mosquitto';

export interface Broker {
  port: number;
  url(prefix: string): string;
  start(): Promise<void>;
  /** SIGTERM: mosquitto writes its persistence file and exits. */
  stop(): Promise<void>;
  dispose(): Promise<void>;
}

async function freePort(): Promise<number> {
  const s = createServer();
  await new Promise<void>((r) => s.listen(0, '127.0.0.1', () => r()));
  const port = (s.address() as AddressInfo).port;
  await new Promise<void>((r) => s.close(() => r()));
  return port;
}

function accepts(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const c = createConnection({ host: '127.0.0.1', port });
    c.once('connect', () => {
      c.destroy();
      resolve(true);
    });
    c.once('error', () => resolve(false));
  });
}

export async function createBroker(): Promise<Broker> {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-mosquitto-'));
  const port = await freePort();
  const config = join(dir, 'mosquitto.conf');
  // mosquitto.conf(5): one loopback listener, anonymous clients, sessions kept in this folder.
  writeFileSync(
    config,
    [
      `listener ${port} 127.0.0.1`,
      'allow_anonymous true',
      'persistence true',
      `persistence_location ${dir}/`,
      'max_queued_messages 100000',
      'log_dest none',
      // Run as root, mosquitto would switch to its own user, which cannot write this folder.
      `user ${userInfo().username}`,
      '',
    ].join('\n'),
  );
  let proc: ChildProcess | null = null;
  const broker: Broker = {
    port,
    url: (prefix) => `mqtt://127.0.0.1:${port}/${prefix}`,
    async start() {
      if (proc) throw new Error('mosquitto already running');
      const p = spawn(MOSQUITTO, ['-c', config], { stdio: 'ignore' });
      proc = p;
      for (let i = 0; i < 500; i++) {
        if (p.exitCode !== null) throw new Error(`mosquitto exited with ${p.exitCode}`);
        if (await accepts(port)) return;
        await new Promise((r) => setTimeout(r, 20));
      }
      throw new Error('mosquitto did not listen within 10 s');
    },
    async stop() {
      const p = proc;
      proc = null;
      if (!p || p.exitCode !== null) return;
      const gone = new Promise<void>((r) => p.once('exit', () => r()));
      p.kill('SIGTERM');
      await gone;
    },
    async dispose() {
      await broker.stop();
      rmSync(dir, { recursive: true, force: true });
    },
  };
  return broker;
}

/**
 * Shared set-up of the server tests: a real recorder on a temporary SQLite file, the real
 * station manager and service, the real server on 127.0.0.1, a real `ws` client, and a
 * socat pty pair standing in for a charger's USB-serial bridge.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import {
  existsSync,
  mkdirSync,
  mkdtempSync,
  openSync,
  closeSync,
  rmSync,
  writeFileSync,
  writeSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import WebSocket from 'ws';
import { WS_PATH } from '@shared/ipc/channels';
import type { PushEnvelope } from '@shared/ipc/pushes';
import type { ReplyEnvelope } from '@shared/ipc/requests';
import { createAppService, type AppService } from '../../main/app/service';
import { openRecorder } from '../../main/recorder';
import type { Recorder } from '../../main/recorder/types';
import { startServer, type RunningServer, type ServerOptions } from '../../main/server';
import { createStationManager } from '../../main/station';
import type { StationManager } from '../../main/station/types';

export interface Harness {
  dir: string;
  recorder: Recorder;
  stations: StationManager;
  service: AppService;
  server: RunningServer;
  close(): Promise<void>;
}

/** Invented demo profile: a trail camera's 2S Li-ion pack. */
export const TRAIL_CAMERA_PROFILE = {
  name: 'trail camera 2S Li-ion (invented demo)',
  chemistry: 'li-ion',
  cells: 2,
  capacityAh: 2,
  chargeCurrentA: 0.5,
};

export async function startHarness(serverOptions: Partial<ServerOptions> = {}): Promise<Harness> {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-server-'));
  const rendererDir = join(dir, 'renderer');
  mkdirSync(rendererDir);
  writeFileSync(
    join(rendererDir, 'index.html'),
    '<!doctype html><title>Taperline</title><script src="app.js"></script>\n',
  );
  writeFileSync(join(rendererDir, 'app.js'), 'document.title = "Taperline";\n');
  writeFileSync(join(dir, 'secret.txt'), 'outside the renderer folder\n');
  const recorder = openRecorder(join(dir, 'runs.sqlite'));
  const stations = createStationManager({ recorder });
  const service = createAppService({ stations, recorder });
  const server = await startServer({ port: 0, service, rendererDir, recorder, ...serverOptions });
  return {
    dir,
    recorder,
    stations,
    service,
    server,
    async close() {
      await server.close();
      service.close();
      await stations.close();
      recorder.close();
      rmSync(dir, { recursive: true, force: true });
    },
  };
}

/** A WebSocket API client that keeps every push it receives. */
export class ApiClient {
  readonly pushes: PushEnvelope[] = [];
  private nextId = 1;
  private readonly waiting = new Map<number, (reply: ReplyEnvelope) => void>();
  private readonly pushWaiters: Array<{
    match: (p: PushEnvelope) => boolean;
    resolve: (p: PushEnvelope) => void;
  }> = [];

  private constructor(readonly ws: WebSocket) {
    ws.on('message', (data) => {
      const message = JSON.parse(data.toString()) as ReplyEnvelope | PushEnvelope;
      if ('push' in message) {
        this.pushes.push(message);
        for (const waiter of [...this.pushWaiters]) {
          if (waiter.match(message)) {
            this.pushWaiters.splice(this.pushWaiters.indexOf(waiter), 1);
            waiter.resolve(message);
          }
        }
        return;
      }
      const resolve = this.waiting.get(message.id);
      this.waiting.delete(message.id);
      resolve?.(message);
    });
  }

  static connect(url: string, options: WebSocket.ClientOptions = {}): Promise<ApiClient> {
    return new Promise((resolve, reject) => {
      const ws = new WebSocket(url, options);
      ws.once('open', () => resolve(new ApiClient(ws)));
      ws.once('error', reject);
      ws.once('unexpected-response', (_req, res) => reject(new Error(`HTTP ${res.statusCode}`)));
    });
  }

  /** Send anything (also malformed text) and wait for the reply with this id (-1 = none usable). */
  sendRaw(text: string, expectId: number): Promise<ReplyEnvelope> {
    return new Promise((resolve) => {
      this.waiting.set(expectId, resolve);
      this.ws.send(text);
    });
  }

  request(method: string, params: unknown = {}): Promise<ReplyEnvelope> {
    const id = this.nextId++;
    return this.sendRaw(JSON.stringify({ id, method, params }), id);
  }

  /** The first push (already received or still to come) that matches, within `timeoutMs`. */
  waitForPush(match: (p: PushEnvelope) => boolean, timeoutMs = 10_000): Promise<PushEnvelope> {
    const seen = this.pushes.find(match);
    if (seen) return Promise.resolve(seen);
    return new Promise((resolve, reject) => {
      const timer = setTimeout(() => reject(new Error('no matching push in time')), timeoutMs);
      this.pushWaiters.push({
        match,
        resolve: (p) => {
          clearTimeout(timer);
          resolve(p);
        },
      });
    });
  }

  close(): Promise<void> {
    return new Promise((resolve) => {
      if (this.ws.readyState === WebSocket.CLOSED) return resolve();
      this.ws.once('close', () => resolve());
      this.ws.close();
    });
  }
}

/** The API address; with the server's token unless a query is given ('' = none). */
export function wsUrl(server: RunningServer, query = `?token=${server.token}`): string {
  return `ws://127.0.0.1:${server.port}${WS_PATH}${query}`;
}

/** The cookie a browser holds after opening the printed address: every request needs the token. */
export function authed(server: { token: string }): Record<string, string> {
  return { Cookie: `taperline_token=${server.token}` };
}

/** A virtual serial cable: the station opens `stationPath`, the test writes to `devicePath`. */
export interface PtyPair {
  stationPath: string;
  devicePath: string;
  write(text: string): void;
  close(): Promise<void>;
}

export async function openPtyPair(dir: string): Promise<PtyPair> {
  const stationPath = join(dir, 'tty-station');
  const devicePath = join(dir, 'tty-device');
  const socat: ChildProcess = spawn(
    'socat',
    [`pty,raw,echo=0,link=${stationPath}`, `pty,raw,echo=0,link=${devicePath}`],
    { stdio: 'ignore' },
  );
  const deadline = Date.now() + 5000;
  while (!(existsSync(stationPath) && existsSync(devicePath))) {
    if (Date.now() > deadline) throw new Error('socat did not create the pty pair (is socat installed?)');
    await new Promise((r) => setTimeout(r, 20));
  }
  const fd = openSync(devicePath, 'w');
  return {
    stationPath,
    devicePath,
    write: (text) => void writeSync(fd, text),
    close: async () => {
      closeSync(fd);
      if (socat.exitCode === null) {
        const exited = new Promise((r) => socat.once('exit', r));
        socat.kill('SIGTERM');
        await exited;
      }
    },
  };
}

/** Raw HTTP GET (the path is sent exactly as given, with no client-side normalisation). */
export function rawGet(
  port: number,
  path: string,
  headers: Record<string, string> = {},
): Promise<{ status: number; headers: Record<string, string | string[] | undefined>; body: string }> {
  return import('node:http').then(
    ({ request }) =>
      new Promise((resolve, reject) => {
        const req = request({ host: '127.0.0.1', port, path, method: 'GET', headers }, (res) => {
          let body = '';
          res.setEncoding('utf8');
          res.on('data', (chunk: string) => (body += chunk));
          res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body }));
        });
        req.on('error', reject);
        req.end();
      }),
  );
}

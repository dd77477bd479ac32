/**
 * The Electron main process's handle on its backend child. better-sqlite3 is compiled for
 * Node's ABI, not Electron's, so the service runs in a plain Node process forked from the
 * bundled CLI (`cli.cjs serve --electron-child`): in a packaged app the Node runtime packed
 * with it; from a checkout the Node that ran `npm start` (TAPERLINE_NODE, set by
 * bin/start.cjs), else `node` from PATH.
 */
import { fork, type ChildProcess } from 'node:child_process';
import { join } from 'node:path';
import type { PushEnvelope } from '@shared/ipc/pushes';
import type { ReplyEnvelope, RequestEnvelope } from '@shared/ipc/requests';
import { isChildMessage, type ChildToParent, type ParentToChild } from '../app/child-protocol';

/** Environment variable naming the Node executable that runs the backend (development only). */
export const NODE_ENV_VAR = 'TAPERLINE_NODE';

export function nodeExecutable(env: NodeJS.ProcessEnv = process.env): string {
  return env[NODE_ENV_VAR] || 'node';
}

/**
 * Where the backend comes from. A packaged app runs the Node runtime it carries
 * (resources/node, see build/stage-node.cjs) on the CLI bundle kept outside app.asar; nothing
 * is looked up on PATH and TAPERLINE_NODE is ignored, so another program cannot stand in for
 * it. From a checkout (`npm start`): TAPERLINE_NODE, else `node`, on dist/cli.cjs.
 */
export function backendRuntime(where: {
  isPackaged: boolean;
  resourcesPath: string;
  distDir: string;
  platform?: NodeJS.Platform;
  env?: NodeJS.ProcessEnv;
}): { nodePath: string; cliPath: string } {
  const platform = where.platform ?? process.platform;
  if (where.isPackaged) {
    return {
      nodePath: join(where.resourcesPath, 'node', ...(platform === 'win32' ? ['node.exe'] : ['bin', 'node'])),
      cliPath: join(where.resourcesPath, 'app.asar.unpacked', 'dist', 'cli.cjs'),
    };
  }
  return { nodePath: nodeExecutable(where.env), cliPath: join(where.distDir, 'cli.cjs') };
}

export interface BackendProcessOptions {
  /** The bundled CLI (dist/cli.cjs). */
  cliPath: string;
  /** Arguments after `serve --electron-child` (e.g. `--simulate bench-liion-3s`). */
  serveArgs: string[];
  nodePath?: string;
  /** Extra arguments for node itself (tests run the TypeScript CLI with `--import tsx`). */
  execArgv?: string[];
  env?: NodeJS.ProcessEnv;
  onPush(push: PushEnvelope): void;
  choosePath(suggestedName: string, what: 'csv' | 'html' | 'pdf'): Promise<string | null>;
  printPdf(html: string, path: string): Promise<void>;
  /** The child stopped on its own (crash, fatal start-up problem). */
  onExit(reason: string): void;
}

export interface BackendProcess {
  /** Resolves when the backend is ready, rejects with its start-up problem. */
  ready: Promise<{ dbPath: string | null; stations: number }>;
  request(envelope: RequestEnvelope): Promise<ReplyEnvelope>;
  /** Ask the child to close its runs and exit; kills it after `graceMs`. */
  stop(graceMs?: number): Promise<void>;
  readonly pid: number | undefined;
}

export function startBackendProcess(options: BackendProcessOptions): BackendProcess {
  const child: ChildProcess = fork(options.cliPath, ['serve', '--electron-child', ...options.serveArgs], {
    execPath: options.nodePath ?? nodeExecutable(),
    execArgv: options.execArgv ?? [],
    env: options.env ?? process.env,
    stdio: ['ignore', 'inherit', 'inherit', 'ipc'],
    serialization: 'json',
  });
  const pending = new Map<number, (reply: ReplyEnvelope) => void>();
  let exited = false;
  let fatal: string | null = null;
  let markReady!: (info: { dbPath: string | null; stations: number }) => void;
  let failReady!: (err: Error) => void;
  const ready = new Promise<{ dbPath: string | null; stations: number }>((resolve, reject) => {
    markReady = resolve;
    failReady = reject;
  });
  ready.catch(() => undefined);

  /** Every request still waiting is answered with `reason`: no reply can come any more. */
  const answerPending = (reason: string) => {
    for (const resolve of pending.values()) resolve({ id: -1, ok: false, error: reason });
    pending.clear();
  };

  /** The child is gone (or never started): said once, however many events report it. */
  let ended = false;
  const end = (reason: string) => {
    exited = true;
    failReady(new Error(reason));
    answerPending(reason);
    if (ended) return;
    ended = true;
    options.onExit(reason);
  };

  /** Send to the child; `onFailed` hears why when the message cannot reach it. */
  const post = (message: ParentToChild, onFailed?: (reason: string) => void) => {
    if (exited || !child.connected) return onFailed?.(fatal ?? 'the backend is not running');
    // With a callback a failed send is reported here instead of as the child's 'error' event.
    child.send(message, (err) => {
      if (err) onFailed?.(`the backend could not be reached (${err.message})`);
    });
  };

  child.on('message', (message: unknown) => {
    if (!isChildMessage(message)) return;
    void onMessage(message);
  });
  child.on('error', (err) => {
    // A failed spawn (no such node) emits 'error' and never 'exit': end here, or requests wait forever.
    if (child.pid === undefined) {
      fatal ??= `the backend could not start (${err.message}); is Node installed? from a checkout set ${NODE_ENV_VAR} to its path; a packaged app runs the one in its resources/node`;
      end(fatal);
    } else if (!child.connected) {
      end(fatal ?? `the backend cannot be reached (${err.message})`);
    }
  });
  // The channel closed while the process may linger: nothing sent before can be answered now.
  child.on('disconnect', () => answerPending(fatal ?? 'the backend closed its channel'));
  child.on('exit', (code, signal) => {
    end(fatal ?? `the backend stopped (${signal ?? `exit code ${code}`})`);
  });

  async function onMessage(message: ChildToParent): Promise<void> {
    switch (message.type) {
      case 'ready':
        markReady({ dbPath: message.dbPath, stations: message.stations });
        return;
      case 'fatal':
        fatal = message.message;
        failReady(new Error(message.message));
        return;
      case 'push':
        options.onPush(message.push);
        return;
      case 'reply': {
        const resolve = pending.get(message.reply.id);
        pending.delete(message.reply.id);
        resolve?.(message.reply);
        return;
      }
      case 'choose-path': {
        const path = await options.choosePath(message.suggestedName, message.what).catch(() => null);
        post({ type: 'chosen-path', ticket: message.ticket, path });
        return;
      }
      case 'print-pdf': {
        const error = await options.printPdf(message.html, message.path).then(
          () => null,
          (err: unknown) => (err instanceof Error ? err.message : String(err)),
        );
        post({ type: 'printed', ticket: message.ticket, error });
        return;
      }
    }
  }

  // Renderer ids are per window; the relay uses its own ids so two windows never collide.
  let nextId = 1;
  return {
    ready,
    get pid() {
      return child.pid;
    },
    request(envelope) {
      if (exited || !child.connected)
        return Promise.resolve({ id: envelope.id, ok: false, error: fatal ?? 'the backend is not running' });
      const relayId = nextId++;
      return new Promise<ReplyEnvelope>((resolve) => {
        pending.set(relayId, (reply) => resolve({ ...reply, id: envelope.id } as ReplyEnvelope));
        post({ type: 'request', envelope: { ...envelope, id: relayId } }, (reason) => {
          const answer = pending.get(relayId);
          pending.delete(relayId);
          answer?.({ id: -1, ok: false, error: reason });
        });
      });
    },
    stop(graceMs = 5000) {
      if (exited) return Promise.resolve();
      return new Promise<void>((resolve) => {
        const timer = setTimeout(() => child.kill('SIGKILL'), graceMs);
        child.once('exit', () => {
          clearTimeout(timer);
          resolve();
        });
        post({ type: 'stop' });
      });
    },
  };
}

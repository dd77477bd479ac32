/**
 * The backend as a child of the Electron main process: the same backend as `taperline
 * serve`, talking over the Node IPC channel of `child_process.fork` instead of a WebSocket.
 * Saving goes through the parent, which owns the dialogs and the PDF printer.
 */
import { createWriteStream } from 'node:fs';
import { writeFile } from 'node:fs/promises';
import { answerRequest, errorText } from './dispatch';
import { startBackend, type Backend, type BackendOptions } from './backend';
import { isParentMessage, type ChildToParent } from './child-protocol';
import { realLibraries } from './libraries';

/** Tell the parent why the backend cannot start (before exiting with status 2). */
export function reportChildFatal(message: string): Promise<void> {
  return new Promise((resolve) => {
    if (process.send && process.connected)
      process.send({ type: 'fatal', message } satisfies ChildToParent, undefined, {}, () => resolve());
    else resolve();
  });
}

export async function runChildBackend(
  options: Omit<BackendOptions, 'exportMode' | 'writeCsvFile' | 'writeReportFile' | 'writeBatchFile'>,
) {
  if (!process.send)
    throw new Error('--electron-child needs an IPC channel: it is started by the Electron app');
  const post = (message: ChildToParent, then?: () => void) => {
    if (process.connected) process.send!(message, undefined, {}, () => then?.());
    else then?.();
  };
  let nextTicket = 1;
  const waiting = new Map<number, (answer: { path?: string | null; error?: string | null }) => void>();
  const ask = (message: ChildToParent & { ticket: number }) =>
    new Promise<{ path?: string | null; error?: string | null }>((resolve) => {
      waiting.set(message.ticket, resolve);
      post(message);
    });

  let backend: Backend | null = null;
  const stop = async (code: number) => {
    await backend?.stop();
    process.exit(code);
  };

  try {
    backend = await startBackend({
      ...options,
      exportMode: {
        kind: 'save',
        choosePath: async (suggestedName, what) => {
          const answer = await ask({ type: 'choose-path', ticket: nextTicket++, suggestedName, what });
          return answer.path ?? null;
        },
      },
      // The export ends (or, on failure, destroys) the file stream, so a write error rejects here.
      writeCsvFile: async (runId, path) => {
        try {
          await backend!.recorder!.exportCsv(runId, createWriteStream(path));
        } catch (err) {
          throw new Error(
            `the CSV was not written to ${path}: ${errorText(err)}; the run is still in the recording, so export it again to another folder`,
            { cause: err },
          );
        }
      },
      writeBatchFile: async (batchId, path, csv) =>
        writeFile(
          path,
          realLibraries.batchReportFile(backend!.recorder!, batchId, csv ? 'csv' : 'html'),
          'utf8',
        ),
      writeReportFile: async (runId, path, pdf) => {
        const html = await realLibraries.runReportHtml(backend!.recorder!, runId);
        if (!pdf) return writeFile(path, html, 'utf8');
        const answer = await ask({ type: 'print-pdf', ticket: nextTicket++, html, path });
        if (answer.error) throw new Error(`the PDF was not written: ${answer.error}`);
      },
    });
  } catch (err) {
    post({ type: 'fatal', message: errorText(err) }, () => process.exit(2));
    return;
  }
  const running = backend;
  running.service.onPush((push) => post({ type: 'push', push }));

  process.on('message', (message: unknown) => {
    if (!isParentMessage(message)) return;
    if (message.type === 'request') {
      void answerRequest(running.service, message.envelope).then((reply) => post({ type: 'reply', reply }));
    } else if (message.type === 'chosen-path' || message.type === 'printed') {
      const resolve = waiting.get(message.ticket);
      waiting.delete(message.ticket);
      resolve?.(message.type === 'chosen-path' ? { path: message.path } : { error: message.error });
    } else if (message.type === 'stop') {
      void stop(0);
    }
  });
  // The parent went away (crash, kill): close the runs cleanly rather than leave them open.
  process.on('disconnect', () => void stop(0));
  for (const signal of ['SIGINT', 'SIGTERM'] as const) process.on(signal, () => void stop(0));
  post({ type: 'ready', dbPath: running.recorder?.dbPath ?? null, stations: running.stations.list().length });
}

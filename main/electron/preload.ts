/**
 * The bridge between the sandboxed renderer and the main process: exactly two functions,
 * never ipcRenderer itself. Bundled by esbuild, because a sandboxed preload may only
 * require `electron`.
 */
import { contextBridge, ipcRenderer, type IpcRendererEvent } from 'electron';
import { IPC_CHANNELS } from '@shared/ipc/channels';
import type { PushEnvelope } from '@shared/ipc/pushes';
import type { ReplyEnvelope } from '@shared/ipc/requests';

let nextId = 1;

const bridge = {
  /** One request; resolves with the result, rejects with the backend's message. */
  async request(method: string, params?: unknown): Promise<unknown> {
    const reply = (await ipcRenderer.invoke(IPC_CHANNELS.request, {
      id: nextId++,
      method: String(method),
      params: params ?? {},
    })) as ReplyEnvelope;
    if (!reply.ok) throw new Error(reply.error);
    return reply.result;
  },
  /** Every push from the backend; returns the function that stops listening. */
  onPush(callback: (push: PushEnvelope) => void): () => void {
    if (typeof callback !== 'function') throw new TypeError('onPush needs a function');
    const listener = (_event: IpcRendererEvent, push: PushEnvelope) => callback(push);
    ipcRenderer.on(IPC_CHANNELS.push, listener);
    return () => {
      ipcRenderer.removeListener(IPC_CHANNELS.push, listener);
    };
  },
};

export type TaperlineBridge = typeof bridge;

contextBridge.exposeInMainWorld('taperline', bridge);

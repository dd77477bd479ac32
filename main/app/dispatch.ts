/**
 * One request envelope in, one reply envelope out: the same for the WebSocket, the Electron
 * IPC relay and the backend child process. Every message goes through `validateRequest`;
 * nothing a client sends can throw past this function.
 */
import { validateRequest, type ReplyEnvelope } from '@shared/ipc/requests';
import type { AppService } from './service';

/** Id used in a reply when the request carried no usable id. */
export const NO_REQUEST_ID = -1;

export async function answerRequest(service: AppService, raw: unknown): Promise<ReplyEnvelope> {
  const checked = validateRequest(raw);
  if (!checked.ok) return { id: checked.id ?? idOf(raw), ok: false, error: checked.error };
  try {
    return { id: checked.id, ok: true, result: await service.handle(checked.method, checked.params) };
  } catch (err) {
    return { id: checked.id, ok: false, error: errorText(err) };
  }
}

/** Parse one text frame; a frame that is not JSON gets an error reply, never an exception. */
export async function answerText(service: AppService, text: string): Promise<ReplyEnvelope> {
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (err) {
    return { id: NO_REQUEST_ID, ok: false, error: `message is not JSON: ${errorText(err)}` };
  }
  return answerRequest(service, raw);
}

export function errorText(err: unknown): string {
  return err instanceof Error ? err.message : String(err);
}

/** Echo a numeric id from a malformed envelope, so the client can match the error to its request. */
function idOf(raw: unknown): number {
  if (raw && typeof raw === 'object' && 'id' in raw) {
    const id = (raw as { id: unknown }).id;
    if (typeof id === 'number' && Number.isSafeInteger(id) && id >= 0) return id;
  }
  return NO_REQUEST_ID;
}

/**
 * The one IPC handler of the desktop app: checks the sender, validates the request envelope
 * and its params with `validateRequest`, and only then relays it to the backend. A refused
 * message gets an error reply naming why; nothing a renderer sends can throw past here.
 */
import { validateRequest, type ReplyEnvelope, type RequestEnvelope } from '@shared/ipc/requests';
import { checkIpcSender, type IpcSenderInfo } from './security';

/** Sends a validated request to the backend and resolves with its reply. */
export type RequestForwarder = (envelope: RequestEnvelope) => Promise<ReplyEnvelope>;

export async function handleRendererRequest(
  event: IpcSenderInfo,
  raw: unknown,
  ownWebContentsIds: ReadonlySet<number>,
  forward: RequestForwarder,
): Promise<ReplyEnvelope> {
  const sender = checkIpcSender(event, ownWebContentsIds);
  if (!sender.ok) return { id: -1, ok: false, error: `refused: ${sender.reason}` };
  const checked = validateRequest(raw);
  if (!checked.ok) return { id: checked.id ?? -1, ok: false, error: checked.error };
  try {
    return await forward({ id: checked.id, method: checked.method, params: checked.params });
  } catch (err) {
    return { id: checked.id, ok: false, error: err instanceof Error ? err.message : String(err) };
  }
}

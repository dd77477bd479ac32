/**
 * Messages between the Electron main process and its backend child (a plain Node process
 * that runs the service, because better-sqlite3 is built for Node's ABI, not Electron's).
 * Requests are validated in the Electron main process before they are relayed, and again by
 * the service in the child.
 */
import type { PushEnvelope } from '@shared/ipc/pushes';
import type { ReplyEnvelope, RequestEnvelope } from '@shared/ipc/requests';

export type ParentToChild =
  | { type: 'request'; envelope: RequestEnvelope }
  /** Answer to `choose-path`: where to save, or null when the person cancelled. */
  | { type: 'chosen-path'; ticket: number; path: string | null }
  /** Answer to `print-pdf`: null when the PDF was written, else what went wrong. */
  | { type: 'printed'; ticket: number; error: string | null }
  | { type: 'stop' };

export type ChildToParent =
  | { type: 'ready'; dbPath: string | null; stations: number }
  | { type: 'reply'; reply: ReplyEnvelope }
  | { type: 'push'; push: PushEnvelope }
  /** Show a save dialog. */
  | { type: 'choose-path'; ticket: number; suggestedName: string; what: 'csv' | 'html' | 'pdf' }
  /** Render this report HTML to a PDF file (only Electron can print). */
  | { type: 'print-pdf'; ticket: number; html: string; path: string }
  | { type: 'fatal'; message: string };

const PARENT_TYPES = new Set(['request', 'chosen-path', 'printed', 'stop']);
const CHILD_TYPES = new Set(['ready', 'reply', 'push', 'choose-path', 'print-pdf', 'fatal']);

export function isParentMessage(message: unknown): message is ParentToChild {
  return hasType(message, PARENT_TYPES);
}

export function isChildMessage(message: unknown): message is ChildToParent {
  return hasType(message, CHILD_TYPES);
}

function hasType(message: unknown, types: Set<string>): boolean {
  return (
    typeof message === 'object' &&
    message !== null &&
    typeof (message as { type?: unknown }).type === 'string' &&
    types.has((message as { type: string }).type)
  );
}

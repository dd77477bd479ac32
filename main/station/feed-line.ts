/** What the Line feed shows for one received line, from the parser's verdict. */
import type { LineResult } from '@shared/telemetry/types';
import type { FeedLine } from './types';

export function toFeedLine(text: string, rxS: number, result: LineResult): FeedLine {
  if (result.kind === 'rejected')
    return { rxS, text, kind: 'rejected', reason: result.reason, detail: result.detail };
  return { rxS, text, kind: result.kind };
}

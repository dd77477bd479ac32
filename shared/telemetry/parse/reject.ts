/** Rejections and the other fixed results of the parser. */
import type { LineResult, RejectReason } from '../types';

export const reject = (reason: RejectReason, detail: string): LineResult => ({
  kind: 'rejected',
  reason,
  detail,
});

export const BLANK: LineResult = Object.freeze({ kind: 'blank' }) as LineResult;

export const notText = (): LineResult =>
  reject('not-text', 'control bytes or invalid UTF-8 in the line (wrong baud rate or line noise?)');

export const noKnownField = (): LineResult =>
  reject(
    'no-fields',
    'no field with a value (known fields: t, vbat, ibat, temp, ntc, vin, iin, chg, flt, src; ' +
      'other keys need a value to be kept as extra channels)',
  );

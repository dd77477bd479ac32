/**
 * The board's identity in a firmware `#` line, e.g. `# board=GS-0042 fw=1.4.2 operator=ana
 * batch=B7`. Keys may come in any order, alone or together; other `#` lines give nothing.
 */
export interface BoardLine {
  board?: string;
  firmware?: string;
  operator?: string;
  batch?: string;
}

const KEYS: Record<string, keyof BoardLine> = {
  board: 'board',
  fw: 'firmware',
  firmware: 'firmware',
  operator: 'operator',
  batch: 'batch',
};

/** Values are 1-64 printable characters without spaces (ids, versions). */
const PAIR = /(?:^|[\s,;])(board|fw|firmware|operator|batch)=([!-~]{1,64})/g;

/** The identity fields of a firmware message (text after `#`, or the whole line); null if none. */
export function parseBoardLine(text: string): BoardLine | null {
  const body = text.startsWith('#') ? text.slice(1) : text;
  const out: BoardLine = {};
  let any = false;
  for (const m of body.matchAll(PAIR)) {
    out[KEYS[m[1]]] = m[2].replace(/[,;]$/, '');
    any = true;
  }
  return any ? out : null;
}

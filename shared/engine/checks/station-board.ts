/**
 * The board under test on a station: its id (typed, scanned by a keyboard-style barcode reader,
 * or printed by the firmware in a `#` line such as `# board=GS-0042 fw=1.4.2`), the operator,
 * the firmware version and the burn-in batch. A new board id on a station starts a new run.
 */
import { parseBoardLine } from './board-line';

export interface StationBoard {
  boardId: string | null;
  operator: string | null;
  firmware: string | null;
  batchId: string | null;
}

export const NO_BOARD: StationBoard = { boardId: null, operator: null, firmware: null, batchId: null };

/** A board id: 1-64 printable characters, no spaces (what barcode labels carry). */
export const BOARD_ID_PATTERN = /^[!-~]{1,64}$/;

export interface BoardChange {
  board: StationBoard;
  /** The board id changed from a known one, or arrived on a run that already has samples. */
  newRun: boolean;
}

/**
 * What a firmware line or a typed entry changes. `hasSamples`: the current run already holds
 * samples, so a board id arriving now belongs to a new board and starts a new run.
 */
export function applyBoard(
  current: StationBoard,
  update: Partial<StationBoard>,
  hasSamples: boolean,
): BoardChange | null {
  const next: StationBoard = { ...current };
  for (const key of Object.keys(NO_BOARD) as (keyof StationBoard)[]) {
    const value = update[key];
    if (value !== undefined) next[key] = value;
  }
  if (Object.keys(NO_BOARD).every((k) => next[k as keyof StationBoard] === current[k as keyof StationBoard]))
    return null;
  const boardChanged = next.boardId !== null && next.boardId !== current.boardId;
  const newRun = boardChanged && (current.boardId !== null || hasSamples);
  // A new board keeps the station's operator and batch, but not the old board's firmware.
  if (newRun && update.firmware === undefined) next.firmware = null;
  return { board: next, newRun };
}

/** The board fields a firmware message carries, or null. */
export function boardFromFirmware(text: string): Partial<StationBoard> | null {
  const line = parseBoardLine(text);
  if (!line) return null;
  const out: Partial<StationBoard> = {};
  if (line.board) out.boardId = line.board;
  if (line.firmware) out.firmware = line.firmware;
  if (line.operator) out.operator = line.operator;
  if (line.batch) out.batchId = line.batch;
  return out;
}

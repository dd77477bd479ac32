/**
 * The one parser of numeric command-line options. Every command reads its numbers here, so
 * they are all checked the same way and every refusal names the option and the text given.
 * Each parser throws a UsageError (one line, exit 2).
 */
import { UsageError } from './errors';

/** Empty or blank text is not a number (Number('') would silently be 0). */
function numberFrom(text: string): number {
  return text.trim() === '' ? Number.NaN : Number(text);
}

function refuse(name: string, what: string, text: string): never {
  throw new UsageError(`${name} must be ${what} (got "${text}")`);
}

const ofUnit = (unit?: string) => (unit ? ` of ${unit}` : '');

/** A finite number above zero, e.g. `--interval 0.5`. */
export function positiveNumber(name: string, text: string, unit?: string): number {
  const value = numberFrom(text);
  if (!Number.isFinite(value) || value <= 0) refuse(name, `a positive number${ofUnit(unit)}`, text);
  return value;
}

/** A finite number of zero or more, e.g. `--at 0`. */
export function nonNegativeNumber(name: string, text: string, unit?: string): number {
  const value = numberFrom(text);
  if (!Number.isFinite(value) || value < 0) refuse(name, `a non-negative number${ofUnit(unit)}`, text);
  return value;
}

/** A whole number above zero, e.g. `--baud 115200`; `example` is shown in the refusal. */
export function positiveInteger(name: string, text: string, example?: string): number {
  const value = numberFrom(text);
  if (!Number.isSafeInteger(value) || value <= 0)
    refuse(name, `a positive whole number${example ? `, e.g. ${example}` : ''}`, text);
  return value;
}

/** Any whole number, negative included, e.g. `--seed -3`. */
export function wholeNumber(name: string, text: string): number {
  const value = numberFrom(text);
  if (!Number.isSafeInteger(value)) refuse(name, 'a whole number', text);
  return value;
}

/** A TCP port to listen on; 0 asks the system for any free port. */
export function portNumber(name: string, text: string): number {
  const value = numberFrom(text);
  if (!Number.isInteger(value) || value < 0 || value > 65535)
    refuse(name, 'a whole number 0..65535 (0 = any free port)', text);
  return value;
}

/** A positive multiple of real time, or the word max (as fast as it can be read). */
export function speedOrMax(name: string, text: string): number | 'max' {
  if (text === 'max') return 'max';
  const value = numberFrom(text);
  if (!Number.isFinite(value) || value <= 0) refuse(name, 'a positive number or max', text);
  return value;
}

/**
 * Fastest baud rate taken: 12 Mbaud, the top rate of the fastest USB-serial bridge chips
 * (from memory); Linux custom rates (BOTHER) go no higher in practice.
 */
export const MAX_BAUD = 12_000_000;

/** A serial baud rate: a whole number 1..MAX_BAUD, e.g. `--baud 115200`. */
export function baudRate(name: string, text: string): number {
  const value = numberFrom(text);
  if (!Number.isSafeInteger(value) || value <= 0 || value > MAX_BAUD)
    refuse(name, `a baud rate, a whole number from 1 to ${MAX_BAUD} (e.g. 115200)`, text);
  return value;
}

/**
 * CSV cells a spreadsheet would run as a formula are made inert, as the OWASP "CSV Injection"
 * page advises: a text cell starting with `=`, `+`, `-`, `@`, a tab or a carriage return gets
 * a leading `'`. Telemetry text (extra channels, firmware keys) comes from a device and must
 * not become `=HYPERLINK(…)` in someone's spreadsheet. Numbers stay numbers.
 */
const FORMULA_START = /^[=+\-@\t\r]/;

export function inertCell(value: unknown): unknown {
  return typeof value === 'string' && FORMULA_START.test(value) ? `'${value}` : value;
}

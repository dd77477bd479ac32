/** Public API of the telemetry layer: framing, parsing, units, checksum and printing of lines. */
export * from './types';
export { LineFramer, capLine, type LineHandler } from './framer';
export { createLineParser, CANONICAL_FIELDS, type LineParser } from './parse-line';
export { nmeaChecksum, splitChecksum, appendChecksum, type ChecksumStatus, type SplitLine } from './checksum';
export {
  formatTelemetryLine,
  csvHeaderLine,
  type LineShape,
  type LineValue,
  type FormatOptions,
} from './format-line';
export {
  parseFieldValue,
  parseExtraValue,
  parsePlainNumber,
  splitNumberUnit,
  keyConversion,
  findUnit,
  FIELD_QUANTITIES,
  BASE_UNIT,
  type Quantity,
  type ValueParse,
  type KeyConversion,
} from './units';

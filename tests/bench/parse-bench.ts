/**
 * Micro-benchmark of the telemetry layer alone: parser lines/s on ~8-field key=value
 * lines, CSV rows and JSON objects, framer lines/s on ~70-byte lines, and the two
 * together. Prints figures and asserts nothing (machines differ).
 * Run: node --import tsx tests/bench/parse-bench.ts
 *
 * The machines are shared, so each figure is given per second of wall time and per
 * second of this process's CPU time (wall time also counts time other processes held
 * the core). The lines are invented demo telemetry (a garden-sensor charger), varied so
 * that no two in a row are identical.
 */
import { LineFramer } from '@shared/telemetry/framer';
import { createLineParser } from '@shared/telemetry/parse-line';
import { csvHeaderLine, formatTelemetryLine } from '@shared/telemetry/format-line';

const N = 400_000;

function makeValues(i: number) {
  return {
    t: 812.5 + i * 0.5,
    vbat: 8.214 + (i % 97) * 0.001,
    ibat: 0.598 - (i % 53) * 0.001,
    temp: 27.1 + (i % 11) * 0.1,
    vin: 17.9 - (i % 7) * 0.05,
    iin: 0.31 + (i % 5) * 0.01,
    chg: true,
    flt: false,
  };
}

const digits = { t: 1, vbat: 3, ibat: 3, temp: 1, vin: 2, iin: 3 };
const text = { kv: [] as string[], csv: [] as string[], json: [] as string[] };
for (let i = 0; i < N; i++) {
  const v = makeValues(i);
  for (const shape of ['kv', 'csv', 'json'] as const)
    text[shape].push(formatTelemetryLine(v, shape, { digits }));
}
const encoder = new TextEncoder();
const decoder = new TextDecoder();
// Lines as the framer delivers them: cut from one decoded string, not concatenations.
const asReceived = (lines: string[]) => decoder.decode(encoder.encode(lines.join('\n'))).split('\n');

function measure(label: string, lines: number, run: () => void): void {
  const start = performance.now();
  const cpu0 = process.cpuUsage();
  run();
  const cpu = process.cpuUsage(cpu0);
  const wallMs = performance.now() - start;
  const cpuMs = (cpu.user + cpu.system) / 1000;
  console.log(
    `${label.padEnd(32)} ${(lines / wallMs / 1000).toFixed(2)} M lines/s wall, ` +
      `${(lines / cpuMs / 1000).toFixed(2)} M lines/s CPU (${lines} lines, ${wallMs.toFixed(0)} ms)`,
  );
}

function benchParser(label: string, lines: string[], prime?: string): void {
  const parser = createLineParser({});
  if (prime !== undefined) parser.parse(prime, 0);
  for (let i = 0; i < 50_000; i++) parser.parse(lines[i % lines.length], i); // warm-up
  let samples = 0;
  const passes = 3;
  measure(`parser ${label}`, lines.length * passes, () => {
    for (let pass = 0; pass < passes; pass++) {
      for (let i = 0; i < lines.length; i++) if (parser.parse(lines[i], i).kind === 'sample') samples++;
    }
  });
  if (samples !== lines.length * passes) console.log(`  (only ${samples} samples: check the input)`);
}

function benchFramer(): void {
  const bytes = encoder.encode(text.kv.slice(0, 100_000).join('\n') + '\n');
  let lines = 0;
  const framer = new LineFramer(() => {
    lines++;
  });
  const passes = 10;
  measure(`framer, ${Math.round(bytes.length / 100_000)}-byte lines, 4 KiB chunks`, 100_000 * passes, () => {
    for (let pass = 0; pass < passes; pass++) {
      for (let pos = 0; pos < bytes.length; pos += 4096) framer.push(bytes.subarray(pos, pos + 4096));
    }
  });
  if (lines !== 100_000 * passes) console.log(`  (framed ${lines} lines: check the framer)`);
}

function benchFramerAndParser(): void {
  const bytes = encoder.encode(text.kv.join('\n') + '\n');
  const parser = createLineParser({});
  let samples = 0;
  const framer = new LineFramer((line, tooLong) => {
    if (parser.parse(line, 0, tooLong).kind === 'sample') samples++;
  });
  const warm = encoder.encode(text.kv.slice(0, 50_000).join('\n') + '\n');
  for (let pos = 0; pos < warm.length; pos += 65536) framer.push(warm.subarray(pos, pos + 65536));
  samples = 0;
  measure('framer + parser, key=value', N, () => {
    for (let pos = 0; pos < bytes.length; pos += 65536) framer.push(bytes.subarray(pos, pos + 65536));
    framer.end();
  });
  if (samples !== N) console.log(`  (only ${samples} samples: check the input)`);
}

/** The replay path: lines handed over as bytes and read without a string when they are plain ASCII. */
function benchByteFramerAndParser(): void {
  const bytes = encoder.encode(text.kv.join('\n') + '\n');
  const parser = createLineParser({});
  let samples = 0;
  const framer = LineFramer.ofBytes((b, from, to, tooLong) => {
    if (parser.parseBytes(b, from, to, 0, tooLong).kind === 'sample') samples++;
  });
  const warm = encoder.encode(text.kv.slice(0, 50_000).join('\n') + '\n');
  for (let pos = 0; pos < warm.length; pos += 65536) framer.push(warm.subarray(pos, pos + 65536));
  samples = 0;
  measure('framer + parser as bytes (replay)', N, () => {
    for (let pos = 0; pos < bytes.length; pos += 65536) framer.push(bytes.subarray(pos, pos + 65536));
    framer.end();
  });
  if (samples !== N) console.log(`  (only ${samples} samples: check the input)`);
}

console.log(`example line (${text.kv[0].length} chars): ${text.kv[0]}`);
benchParser('key=value, 8 fields', asReceived(text.kv));
benchParser('CSV, 8 cells', asReceived(text.csv), csvHeaderLine(Object.keys(makeValues(0))));
benchParser('JSON, 8 keys', asReceived(text.json));
benchFramer();
benchFramerAndParser();
benchByteFramerAndParser();

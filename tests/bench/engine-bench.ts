/**
 * Micro-benchmark: samples per second through the run engine alone (no parsing, no I/O).
 * Prints a figure; it asserts nothing about speed. Run: node --import tsx tests/bench/engine-bench.ts
 */
import { performance } from 'node:perf_hooks';
import process from 'node:process';
import { profileFromChemistry } from '@shared/chemistry/profile';
import { implausibility, plausibilityLimits } from '@shared/engine/plausibility';
import { createRunEngine } from '@shared/engine/run-engine';
import { RunTimeBase } from '@shared/engine/time-base';
import { ccCvCharge } from '../unit/engine-synthetic';

// Invented demo pack: a 3S trail-camera Li-ion pack, 2.5 Ah, charged at 1 A.
const profile = profileFromChemistry('li-ion', 3, {
  capacityAh: 2.5,
  chargeCurrentA: 1,
  terminationA: 0.1,
  timerMin: 600,
  inputSetpointV: 17,
});
const samples = ccCvCharge({
  cells: 3,
  capacityAh: 2.5,
  setA: 1,
  terminationA: 0.1,
  regulationVPerCell: 4.2,
  ocvEmptyV: 3.0,
  ocvFullV: 4.2,
  startSocPct: 5,
  packOhm: 0.3,
  dtS: 0.1,
  durationS: 4 * 3600,
  vNoiseV: 0.01,
  iNoiseA: 0.01,
  tempC: 27,
  pins: true,
  vinV: 17.4,
  seed: 7,
});

function pass(): { events: number; wallMs: number; cpuMs: number } {
  const engine = createRunEngine(profile);
  let events = 0;
  const cpu0 = process.cpuUsage();
  const start = performance.now();
  for (let i = 0; i < samples.length; i++) events += engine.push(samples[i]).length;
  const wallMs = performance.now() - start;
  const cpu = process.cpuUsage(cpu0);
  if (engine.summary().ah <= 0)
    throw new Error('bench: the engine delivered no charge; the sequence is wrong');
  return { events, wallMs, cpuMs: (cpu.user + cpu.system) / 1000 };
}

/**
 * The checks every line passes on its way in (plausibility, then the time base placing the
 * device time), then the engine: what the pipeline adds to the engine, without the parser.
 */
const limits = plausibilityLimits(profile);
const deviceTimes = samples.map((s) => s.t);
function guardedPass(): { wallMs: number; cpuMs: number } {
  const engine = createRunEngine(profile);
  const clock = new RunTimeBase('lines');
  const cpu0 = process.cpuUsage();
  const start = performance.now();
  for (let i = 0; i < samples.length; i++) {
    const s = samples[i];
    if (implausibility(s, limits) !== null) continue;
    s.t = clock.place(i, deviceTimes[i]);
    engine.push(s);
  }
  const wallMs = performance.now() - start;
  const cpu = process.cpuUsage(cpu0);
  if (clock.glitches !== 0) throw new Error('bench: the clean sequence had time glitches');
  return { wallMs, cpuMs: (cpu.user + cpu.system) / 1000 };
}

const median = (xs: number[]): number => {
  const a = [...xs].sort((x, y) => x - y);
  return a.length % 2 ? a[(a.length - 1) >> 1] : (a[a.length / 2 - 1] + a[a.length / 2]) / 2;
};
const rate = (ms: number): string => Math.round((samples.length / ms) * 1000).toLocaleString('en-US');

// The machines are shared: each figure is given per second of wall time and per second of
// this process's CPU time (wall time also counts time other processes held the core).
pass(); // warm-up: let the JIT compile the hot path
const runs = Array.from({ length: 10 }, pass);
const wall = runs.map((r) => r.wallMs);
const cpu = runs.map((r) => r.cpuMs);
guardedPass();
const guarded = Array.from({ length: 10 }, guardedPass);
const guardedCpu = median(guarded.map((r) => r.cpuMs));
console.log(
  `engine-bench: ${samples.length} samples/pass (0.1 s steps), ${runs[0].events} events/pass, ${runs.length} passes; ` +
    `wall: best ${rate(Math.min(...wall))}, median ${rate(median(wall))} samples/s; ` +
    `cpu: median ${rate(median(cpu))} samples/s (target >= 3,000,000)`,
);
console.log(
  `engine-bench: plausibility + time base + engine: cpu median ${rate(guardedCpu)} samples/s, ` +
    `${(median(cpu) / guardedCpu).toFixed(2)} of the engine alone in the same run`,
);

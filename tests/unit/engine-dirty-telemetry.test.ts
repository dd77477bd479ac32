/**
 * Dirty telemetry through the one pipeline: lines out of order, single corrupt device times,
 * holes and physically impossible values injected into generated charges (invented data from
 * the synthetic CC/CV model). The figures must stay those of the clean charge, and every
 * injected line must be counted once, in the right counter.
 *
 * Coulomb counting (Ah = (1/3600)·∫ I dt by trapezoid: MathWorks "SOC Estimator (Coulomb
 * Counting)", published) gives the clean truth the dirty run is compared with.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import fc from 'fast-check';
import { profileFromChemistry } from '@shared/chemistry/profile';
import { createPipeline } from '@shared/engine/pipeline';
import type { EngineEvent, GapEvent, TimedSample } from '@shared/engine/types';
import { formatSpan } from '@shared/engine/time-format';
import { ccCvCharge } from './engine-synthetic';

// Invented demo pack: a garden sensor's 3S 2.5 Ah Li-ion pack charged at 1 A.
const profile = profileFromChemistry('li-ion', 3, { capacityAh: 2.5, chargeCurrentA: 1, terminationA: 0.1 });

const clean: TimedSample[] = ccCvCharge({
  cells: 3,
  capacityAh: 2.5,
  setA: 1,
  terminationA: 0.1,
  regulationVPerCell: 4.2,
  ocvEmptyV: 3.3,
  ocvFullV: 4.15,
  startSocPct: 20,
  packOhm: 0.3,
  dtS: 1,
  durationS: 5400,
  vNoiseV: 0.004,
  iNoiseA: 0.004,
  tempC: 25,
  seed: 3,
});

function line(s: TimedSample, overrides: Record<string, string> = {}): string {
  const f: Record<string, string> = {
    t: s.t.toFixed(1),
    vbat: (s.vbatV as number).toFixed(4),
    ibat: (s.ibatA as number).toFixed(4),
    temp: (s.tempC as number).toFixed(1),
    ...overrides,
  };
  return Object.entries(f)
    .map(([k, v]) => `${k}=${v}`)
    .join(' ');
}

interface Replayed {
  ah: number;
  durationS: number;
  glitches: number;
  resets: number;
  implausible: number;
  gaps: GapEvent[];
  events: EngineEvent[];
}

/** A replayed file: the receive clock only counts lines (1 s each), as `taperline replay` gives it. */
function replay(lines: string[]): Replayed {
  const pipeline = createPipeline(profile, { receiveClock: 'lines' });
  const events: EngineEvent[] = [];
  lines.forEach((text, i) => events.push(...pipeline.pushLine(text, i).events));
  const summary = pipeline.summary();
  return {
    ah: summary.ah,
    durationS: summary.durationS,
    glitches: summary.timeGlitches ?? 0,
    resets: summary.clockResets ?? 0,
    implausible: pipeline.rejectCounts().implausible ?? 0,
    gaps: events.filter((e): e is GapEvent => e.type === 'gap'),
    events,
  };
}

/** Trapezoid charge of the clean samples, leaving out the intervals that end or start in a removed line. */
function truthAh(removed: Set<number>): number {
  let coulombs = 0;
  for (let i = 1; i < clean.length; i++) {
    if (removed.has(i) || removed.has(i - 1)) continue;
    coulombs +=
      (((clean[i - 1].ibatA as number) + (clean[i].ibatA as number)) / 2) * (clean[i].t - clean[i - 1].t);
  }
  return coulombs / 3600;
}

/** Charge over the interval bridging each hole (from the line before it to the line after it). */
function truthWithHoles(holes: { at: number; len: number }[]): number {
  const removed = new Set<number>();
  for (const h of holes) for (let k = h.at; k < h.at + h.len; k++) removed.add(k);
  return truthAh(removed);
}

const cleanLines = clean.map((s) => line(s));
const cleanRun = replay(cleanLines);

test('the clean charge replays to the coulomb-counting truth', () => {
  assert.ok(Math.abs(cleanRun.ah - truthAh(new Set())) < 1e-3, `${cleanRun.ah} Ah`);
  assert.equal(cleanRun.durationS, 5400);
  assert.equal(cleanRun.glitches, 0);
  assert.equal(cleanRun.gaps.length, 0);
});

test('one corrupt device time t=1000000 in a 100 s log costs one line, not 11 days', () => {
  const lines = cleanLines.slice(0, 101);
  lines[50] = line(clean[50], { t: '1000000' });
  const r = replay(lines);
  assert.equal(r.durationS, 100);
  assert.equal(r.glitches, 1);
  assert.equal(r.resets, 0);
  const truth = replay(cleanLines.slice(0, 101)).ah;
  assert.ok(Math.abs(r.ah - truth) / truth < 0.01, `${r.ah} vs ${truth} Ah`);
});

test('a pair of lines out of order every 10 lines adds no charge and no time', () => {
  const lines = [...cleanLines];
  let swapped = 0;
  for (let i = 5; i + 1 < lines.length; i += 10) {
    [lines[i], lines[i + 1]] = [lines[i + 1], lines[i]];
    swapped++;
  }
  const r = replay(lines);
  assert.equal(r.glitches, swapped);
  assert.equal(r.resets, 0);
  assert.equal(r.durationS, 5400);
  assert.ok(Math.abs(r.ah - cleanRun.ah) / cleanRun.ah < 0.001, `${r.ah} vs ${cleanRun.ah} Ah`);
});

test('a reboot (device time back near zero) is bridged and continues the run', () => {
  const lines = cleanLines.map((text, i) =>
    i < 3000 ? text : line(clean[i], { t: (clean[i].t - 2995).toFixed(1) }),
  );
  const r = replay(lines);
  assert.equal(r.resets, 1);
  assert.equal(r.glitches, 0);
  // The reboot's first line is placed without elapsed time and a file bridges one typical interval.
  assert.ok(Math.abs(r.durationS - 5400) <= 1, `duration ${r.durationS}`);
  assert.ok(Math.abs(r.ah - cleanRun.ah) / cleanRun.ah < 0.01);
});

test('live: a reboot is bridged with the receive time that passed; a corrupt jump is not', () => {
  const pipeline = createPipeline(profile, { receiveClock: 'host' });
  const epoch = 1_800_000_000;
  for (let i = 0; i <= 100; i++) pipeline.pushLine(line(clean[i]), epoch + i);
  // Corrupt: far ahead of what 1 s of receive time allows.
  assert.equal(pipeline.pushLine(line(clean[101], { t: '500000' }), epoch + 101).sample?.t, 100);
  for (let i = 102; i <= 200; i++) pipeline.pushLine(line(clean[i]), epoch + i);
  // The board reboots and is silent 20 s; its clock restarts at 2 s.
  for (let k = 0; k < 50; k++)
    pipeline.pushLine(line(clean[201 + k], { t: (2 + k).toFixed(1) }), epoch + 220 + k);
  const s = pipeline.summary();
  assert.equal(s.timeGlitches, 1);
  assert.equal(s.clockResets, 1);
  // 200 s, then the 20 s the host saw pass to the reboot's first line, then 49 s more.
  assert.ok(Math.abs(s.durationS - 269) <= 0.5, `duration ${s.durationS}`);
});

test('impossible values are rejected as implausible, never integrated; figures stay finite', () => {
  const lines = [...cleanLines.slice(0, 600)];
  lines[100] = line(clean[100], { vbat: '1e300' });
  lines[200] = line(clean[200], { ibat: '1e308' });
  lines[300] = line(clean[300], { vbat: '1e306kV' });
  lines[400] = line(clean[400], { temp: '999' });
  lines[500] = line(clean[500], { ibat: '-4000' });
  const pipeline = createPipeline(profile, { receiveClock: 'lines' });
  const results = lines.map((text, i) => pipeline.pushLine(text, i));
  for (const i of [100, 200, 300, 400, 500]) {
    const res = results[i].result;
    assert.equal(res.kind, 'rejected', `line ${i}`);
    if (res.kind === 'rejected') {
      assert.equal(res.reason, 'implausible');
      assert.match(res.detail, /kept in the raw record/);
    }
  }
  assert.equal(pipeline.rejectCounts().implausible, 5);
  const s = pipeline.summary();
  assert.ok(Number.isFinite(s.ah) && Number.isFinite(s.wh) && Number.isFinite(s.durationS));
  const truth = replay(cleanLines.slice(0, 600)).ah;
  assert.ok(Math.abs(s.ah - truth) / truth < 0.01, `${s.ah} vs ${truth}`);
  const m = pipeline.state().metrics;
  for (const x of [m.socPct, m.etaS, m.efficiency]) assert.ok(x === null || (Number.isFinite(x) && x >= 0));
  assert.equal(formatSpan(Infinity), 'unknown time');
});

test('an impossible temperature while charging is a blind sensor: sensor-fault (critical)', () => {
  const pipeline = createPipeline(profile, { receiveClock: 'lines' });
  const events: EngineEvent[] = [];
  for (let i = 0; i < 60; i++) events.push(...pipeline.pushLine(line(clean[i]), i).events);
  for (let i = 60; i < 80; i++) events.push(...pipeline.pushLine(line(clean[i], { temp: '-127' }), i).events);
  const fault = events.find((e) => e.type === 'alarm' && e.code === 'sensor-fault');
  assert.ok(fault && fault.type === 'alarm', 'sensor-fault raised');
  assert.equal(fault.level, 'critical');
  assert.match(fault.message, /temp=-127 °C is outside -55…150 °C/);
  assert.match(fault.message, /stop charging/);
});

type Injection =
  | { kind: 'swap' }
  | { kind: 'corrupt'; t: number }
  | { kind: 'hole'; len: number }
  | { kind: 'impossible'; field: 'vbat' | 'ibat' | 'temp'; value: string };

const injectionArb: fc.Arbitrary<Injection> = fc.oneof(
  fc.constant<Injection>({ kind: 'swap' }),
  fc
    .oneof(fc.double({ min: 0, max: 1e7, noNaN: true }), fc.constantFrom(1e6, 0, 0.5))
    .map((t) => ({ kind: 'corrupt' as const, t })),
  fc.integer({ min: 15, max: 40 }).map((len) => ({ kind: 'hole' as const, len })),
  fc.constantFrom<Injection>(
    { kind: 'impossible', field: 'vbat', value: '1e300' },
    { kind: 'impossible', field: 'vbat', value: '-1e300' },
    { kind: 'impossible', field: 'vbat', value: '1e306kV' },
    { kind: 'impossible', field: 'ibat', value: '1e308' },
    { kind: 'impossible', field: 'ibat', value: '-1e300' },
    { kind: 'impossible', field: 'temp', value: '999' },
    { kind: 'impossible', field: 'temp', value: '-300' },
  ),
);

test('property: injected glitches, holes and impossible values leave Ah and duration within 1 %, each counted once', () => {
  const SLOT = 90; // lines per slot; at most one injection per slot, away from its edges
  const slots = Math.floor(clean.length / SLOT) - 1;
  fc.assert(
    fc.property(
      fc.uniqueArray(fc.integer({ min: 1, max: slots - 1 }), { minLength: 1, maxLength: 8 }),
      fc.array(injectionArb, { minLength: 8, maxLength: 8 }),
      (slotIds, injections) => {
        const lines = [...cleanLines];
        const removed = new Set<number>();
        const holes: { at: number; len: number }[] = [];
        let glitches = 0;
        let implausible = 0;
        slotIds.forEach((slot, k) => {
          const at = slot * SLOT + 20;
          const inj = injections[k];
          if (inj.kind === 'swap') {
            [lines[at], lines[at + 1]] = [lines[at + 1], lines[at]];
            glitches++;
          } else if (inj.kind === 'corrupt') {
            // A corrupt time that could pass for the line's own is no glitch: keep it far off.
            if (Math.abs(inj.t - clean[at].t) < 10) return;
            lines[at] = line(clean[at], { t: String(inj.t) });
            glitches++;
          } else if (inj.kind === 'hole') {
            for (let i = at; i < at + inj.len; i++) removed.add(i);
            holes.push({ at, len: inj.len });
          } else {
            lines[at] = line(clean[at], { [inj.field]: inj.value });
            implausible++;
          }
        });
        const dirty = lines.filter((_, i) => !removed.has(i));
        const r = replay(dirty);
        const truth = truthWithHoles(holes);
        assert.ok(Math.abs(r.ah - truth) / truth < 0.01, `Ah ${r.ah} vs truth ${truth}`);
        assert.ok(Math.abs(r.durationS - 5400) / 5400 < 0.01, `duration ${r.durationS}`);
        assert.equal(r.glitches, glitches, 'time glitches');
        assert.equal(r.resets, 0, 'no reboot was injected');
        assert.equal(r.implausible, implausible, 'implausible lines');
        assert.equal(r.gaps.length, holes.length, 'gaps');
        for (const g of r.gaps) assert.ok(g.durationS !== undefined && g.durationS > profile.silenceS);
      },
    ),
    { numRuns: 60, seed: 20261202 },
  );
});

test('an assumed profile (no capacity, no charge current) keeps a 10 A charge; only the impossible goes', () => {
  // What `replay` assumes for a bare log: the pack's size is unknown, so 10 A is plausible.
  const assumed = profileFromChemistry('li-ion', 3);
  const pipeline = createPipeline(assumed, { receiveClock: 'lines' });
  for (let t = 0; t < 20; t++) pipeline.pushLine(`t=${t} vbat=11.40 ibat=10.0`, t);
  pipeline.pushLine('t=20 vbat=11.40 ibat=1e308', 20);
  assert.deepEqual(pipeline.rejectCounts(), { implausible: 1 });
  assert.ok(Math.abs(pipeline.summary().ah - (19 * 10) / 3600) < 1e-9);
});

test('a corrupt first device time (t=1e300) costs no precision: the run goes on from the next lines', () => {
  const lines = cleanLines.slice(0, 301);
  lines[0] = line(clean[0], { t: '1e300' });
  const r = replay(lines);
  // The first line's clock is not continued: the next lines restart it (counted as one reset).
  assert.equal(r.resets, 1);
  assert.ok(Math.abs(r.durationS - 299) <= 1, `duration ${r.durationS}`);
  const truth = replay(cleanLines.slice(1, 301)).ah;
  assert.ok(Math.abs(r.ah - truth) / truth < 0.01, `${r.ah} vs ${truth} Ah`);
});

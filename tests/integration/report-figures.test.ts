/**
 * The Run report prints the engine's own figures (what the dashboard shows), not a second
 * calculation: Ah, Wh, source Wh, efficiency, internal resistance and time per phase equal
 * `pipeline.summary()` / `pipeline.state().metrics` for the same lines. And a recorded run,
 * read back from a real SQLite file as the app asks for it, gives the same report as the file.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseProfile } from '@shared/chemistry/profile';
import { createPipeline } from '@shared/engine/pipeline';
import { PHASES, type EngineEvent, type Phase } from '@shared/engine/types';
import { openLineInput } from '../../main/cli/line-input';
import { openRecorder, openRunReader } from '../../main/recorder';
import { buildRunReport, collectRun, recordedRunReportInput, reportInputOf } from '../../main/report';
import { duration } from '../../main/report/html';
import { PHASE_NAMES } from '../../main/report/sections';
import { getScenario, simulatedLines } from '../../main/simulator';

// Invented demo data: the simulator's weather-station pack on a solar panel, with source telemetry.
const SCENARIO = 'solar-lifepo4-4s';
const START_RX_S = 1_780_000_000;

function section(html: string, id: string): string {
  const m = new RegExp(`<section id="${id}"[\\s\\S]*?</section>`).exec(html);
  assert.ok(m, `section ${id}`);
  return m[0];
}

/** The two-column rows of the Metrics section (both tables), label → shown value. */
function metricRows(html: string): Map<string, string> {
  const rows = new Map<string, string>();
  for (const m of section(html, 'metrics').matchAll(/<tr><td>([^<]*)<\/td><td>([^<]*)<\/td><\/tr>/g))
    rows.set(m[1], m[2]);
  return rows;
}

function scenarioSetup(t: { after(fn: () => void): void }) {
  const scenario = getScenario(SCENARIO);
  const parsed = parseProfile(scenario.profile);
  assert.ok(parsed.ok);
  const lines = [...simulatedLines(SCENARIO, { shape: 'kv', sampleIntervalS: 1, seed: 7 })];
  const dir = mkdtempSync(join(tmpdir(), 'taperline-report-figures-'));
  t.after(() => rmSync(dir, { recursive: true, force: true }));
  // The engine's own figures for these lines: what a station's dashboard shows at the end.
  const pipeline = createPipeline(parsed.profile);
  lines.forEach((text, i) => pipeline.pushLine(text, START_RX_S + i, false));
  return {
    scenario,
    profile: parsed.profile,
    lines,
    dir,
    summary: pipeline.summary(),
    metrics: pipeline.state().metrics,
  };
}

test('the file report shows the engine summary and metrics for the same lines', async (t) => {
  const { profile, lines, dir, summary, metrics } = scenarioSetup(t);
  // The scenario reports its source, so every figure under test is present.
  assert.ok(metrics.sourceWh !== null && metrics.sourceWh > 0, 'source energy reported');
  assert.ok(metrics.efficiency !== null && metrics.efficiency > 0 && metrics.efficiency < 1);
  assert.ok((summary.phaseS.cc ?? 0) > 0 && (summary.phaseS.cv ?? 0) > 0, 'cc and cv time');

  const file = join(dir, 'solar.log');
  writeFileSync(file, lines.join('\n') + '\n');
  const run = await collectRun(openLineInput(file, {}), profile);
  // The lines carry device time, so the file's synthetic receive clock changes nothing.
  assert.deepEqual(run.summary, summary);
  assert.deepEqual(run.metrics, metrics);

  const html = buildRunReport(reportInputOf(run, 'Run report: solar (demo)', 'solar.log'));
  const rows = metricRows(html);
  assert.equal(rows.get('duration'), duration(summary.durationS));
  assert.equal(rows.get('charge into the pack'), `${summary.ah.toFixed(3)} Ah`);
  assert.equal(rows.get('energy into the pack'), `${summary.wh.toFixed(2)} Wh`);
  assert.equal(rows.get('energy from the source'), `${metrics.sourceWh.toFixed(2)} Wh`);
  assert.equal(rows.get('efficiency (pack ÷ source)'), `${(metrics.efficiency * 100).toFixed(1)} %`);
  const ir = rows.get('internal resistance (pack, from current steps)');
  assert.equal(
    ir,
    metrics.internalResistanceOhm === null
      ? '— (no clear current step)'
      : `${(metrics.internalResistanceOhm * 1000).toFixed(0)} mΩ`,
  );
  for (const phase of PHASES) {
    const s = summary.phaseS[phase] ?? 0;
    assert.equal(rows.get(PHASE_NAMES[phase as Phase]), s > 0 ? duration(s) : undefined, `time in ${phase}`);
  }
});

/**
 * Records lines into a real SQLite file as a station does: the live pipeline's lines, samples,
 * events and totals. Lines [unplugFrom, unplugTo) are lost to an unplugged cable, which the
 * station reports to the pipeline as a gap (opened when the port goes, closed by the next line).
 */
function recordAsStation(
  dbPath: string,
  setup: ReturnType<typeof scenarioSetup>,
  unplug?: { from: number; to: number },
) {
  const { scenario, profile, lines } = setup;
  const recorder = openRecorder(dbPath);
  const { runId } = recorder.startRun({
    stationId: 'roof-1',
    stationLabel: 'roof 1',
    profileName: profile.name,
    chemistry: profile.chemistry,
    profileJson: scenario.profile,
    startRxS: START_RX_S,
  });
  const live = createPipeline(profile);
  const record = (events: readonly EngineEvent[]) => {
    for (const e of events) recorder.addEvent(runId, e);
  };
  const unplugRxS = unplug ? START_RX_S + unplug.from - 0.5 : NaN;
  lines.forEach((text, i) => {
    if (unplug && i >= unplug.from && i < unplug.to) return;
    const rxS = START_RX_S + i;
    if (unplug && i === unplug.to)
      record(live.gap(unplugRxS, rxS, 'port lost; lines lost during the gap: unknown'));
    const out = live.pushLine(text, rxS, false);
    recorder.addLine(runId, { rxS, text, kind: out.result.kind });
    if (out.sample) recorder.addSample(runId, out.sample);
    record(out.events);
    if (unplug && i === unplug.from - 1) record(live.gap(unplugRxS, null, 'port lost'));
  });
  recorder.endRun(runId, START_RX_S + lines.length, 'completed', live.summary());
  recorder.close();
  return { runId, summary: live.summary(), metrics: live.state().metrics };
}

test('a recorded run gives the same report as the file of its lines', async (t) => {
  const setup = scenarioSetup(t);
  const { profile, lines, dir, summary, metrics } = setup;
  const dbPath = join(dir, 'bench.sqlite');
  const { runId } = recordAsStation(dbPath, setup);

  const reader = openRunReader(dbPath);
  t.after(() => reader.close());
  const recorded = recordedRunReportInput(reader, runId);
  assert.deepEqual(recorded.summary, summary);
  assert.deepEqual(recorded.metrics, metrics);
  assert.deepEqual(recorded.events, reader.events(runId), 'the same events the station recorded');
  assert.equal(recorded.samples.length, reader.allSamples(runId).length);

  const file = join(dir, 'solar.log');
  writeFileSync(file, lines.join('\n') + '\n');
  const fileRun = await collectRun(openLineInput(file, {}), profile);
  const fileHtml = buildRunReport(reportInputOf(fileRun, 'Run report: solar (demo)', 'solar.log'));
  const dbHtml = await buildRunReport(reader, runId);
  for (const id of ['profile', 'timeline', 'metrics', 'alarms', 'gaps', 'diagnosis'])
    assert.equal(section(dbHtml, id), section(fileHtml, id), `section ${id}`);
});

test('a recorded run with an unplugged stretch shows the figures the live station had', (t) => {
  const setup = scenarioSetup(t);
  const dbPath = join(setup.dir, 'gap.sqlite');
  // Ten minutes of lines lost in the morning, while the panel charges the pack.
  const live = recordAsStation(dbPath, setup, { from: 9_000, to: 9_600 });
  const reader = openRunReader(dbPath);
  t.after(() => reader.close());
  const recorded = recordedRunReportInput(reader, live.runId);
  // Every line of the scenario is a sample, so sample 8999 is the last before the cable came out.
  assert.ok((recorded.samples[8_999].ibatA ?? 0) > 0.1, 'charging when the cable came out');
  const gaps = recorded.events.filter((e) => e.type === 'gap');
  assert.equal(gaps.length, 1, 'the recorded gap is in the report');
  assert.ok(gaps[0].type === 'gap' && gaps[0].endT !== null);
  assert.deepEqual(recorded.summary, live.summary);
  assert.deepEqual(recorded.metrics, live.metrics);
  // The engine bridges the gap: nothing is integrated across it, unlike the uninterrupted run.
  assert.ok(recorded.summary.ah < setup.summary.ah);
  assert.ok(recorded.summary.durationS > 0);
});

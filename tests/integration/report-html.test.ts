/**
 * The Run report HTML without a browser: every section, the caution, no external reference,
 * the data embedded as JSON and thinned to what a chart draws, text escaped; built from a
 * real SQLite recording the way the app asks for it; and the PDF printer's message when no Chromium exists.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseProfile, profileFromChemistry } from '@shared/chemistry/profile';
import { diagnose } from '@shared/engine/diagnosis';
import type { ResolvedProfile } from '@shared/chemistry/types';
import { createPipeline } from '@shared/engine/pipeline';
import { createRunEngine } from '@shared/engine/run-engine';
import type { EngineEvent, RunMetrics, RunSummary, TimedSample } from '@shared/engine/types';
import { getScenario, simulatedLines } from '../../main/simulator';
import { openRecorder, openRunReader } from '../../main/recorder';
import { buildRunReport, NoChromiumError, renderReportPdf } from '../../main/report';
import { RunCollector } from '../../main/report/collect-run';
import { scriptSafe } from '../../main/report/html';
import { PHASE_BANDS_PLUGIN_ID } from '../../renderer/charts/phase-bands-plugin';

const SECTIONS = [
  'report-title',
  'caution',
  'profile',
  'timeline',
  'metrics',
  'charts',
  'alarms',
  'gaps',
  'diagnosis',
  'report-footer',
];

function scenarioRun(name: string) {
  const parsed = parseProfile(getScenario(name).profile);
  assert.ok(parsed.ok);
  const collector = new RunCollector(parsed.profile);
  let rxS = 0;
  for (const line of simulatedLines(name, { shape: 'kv', sampleIntervalS: 1, seed: 5 }))
    collector.push(line, rxS++, false);
  return collector.finish();
}

/** The engine's summary and metrics for hand-made samples, as a pipeline would give them. */
function engineFigures(
  profile: ResolvedProfile,
  samples: readonly TimedSample[],
): { summary: RunSummary; metrics: RunMetrics } {
  const engine = createRunEngine(profile);
  for (const s of samples) engine.push(s);
  return {
    summary: { ...engine.summary(), lines: samples.length, rejected: 0 },
    metrics: engine.state().metrics,
  };
}

function embeddedData(html: string): {
  charts: { id: string; series: { label: string; xy: (number | null)[] }[] }[];
  phases: unknown[];
} {
  const m = /<script type="application\/json" id="run-data">([\s\S]*?)<\/script>/.exec(html);
  assert.ok(m, 'run data embedded as JSON');
  return JSON.parse(m[1]);
}

test('a report has every section, the caution, and references nothing outside itself', () => {
  const run = scenarioRun('overheating');
  const html = buildRunReport({
    ...run,
    diagnosis: diagnose(run),
    generatedAt: new Date('2026-06-01T12:00:00Z'),
  });
  for (const id of SECTIONS) assert.ok(html.includes(`id="${id}"`), `section ${id}`);
  assert.match(html, /can start fires/);
  assert.match(html, /cell maker.s datasheet and local codes/);
  assert.match(html, /Content-Security-Policy" content="default-src 'none'/);
  assert.doesNotMatch(html, /\s(src|href)\s*=\s*["']?(https?:)?\/\//i, 'no external src or href');
  assert.doesNotMatch(html, /@import|url\(\s*["']?https?:/i, 'no external CSS');
  assert.match(html, /Chart\.js v4/, 'Chart.js inlined');
  // Strict CSP: only the script carrying this page's nonce runs; no inline script without it.
  const nonce = /script-src 'nonce-([A-Za-z0-9+/=]+)'/.exec(html)?.[1];
  assert.ok(nonce, 'script-src allows one nonce');
  assert.doesNotMatch(html, /script-src[^;"]*'unsafe-inline'/);
  const scripts = [...html.matchAll(/<script([^>]*)>/g)].map((m) => m[1]);
  for (const attrs of scripts)
    assert.ok(attrs.includes(`nonce="${nonce}"`) || attrs.includes('type="application/json"'), attrs);
  assert.match(html, /Made by Taperline 0\.1\.0 on 2026-06-01T12:00:00\.000Z/);
  assert.match(html, /overtemp/);
  const data = embeddedData(html);
  assert.deepEqual(
    data.charts.map((c) => c.id),
    ['chart-voltage', 'chart-current', 'chart-temperature', 'chart-source'],
  );
  assert.ok(data.phases.length >= 2);
});

test("the report's charts are the dashboard's chart modules: dist/report-charts.js inlined as is", () => {
  // npm run build writes both bundles from renderer/charts; the report inlines its one unchanged.
  const bundle = readFileSync(join('dist', 'report-charts.js'), 'utf8');
  const app = readFileSync(join('dist', 'renderer', 'app.js'), 'utf8');
  const run = scenarioRun('overheating');
  const html = buildRunReport({ ...run, diagnosis: diagnose(run) });
  assert.ok(html.includes(scriptSafe(bundle)), 'the report carries the bundle byte for byte');
  assert.ok(bundle.includes(`"${PHASE_BANDS_PLUGIN_ID}"`), "the bundle holds the app's phase bands plugin");
  assert.ok(app.includes(`"${PHASE_BANDS_PLUGIN_ID}"`), "the dashboard's bundle holds the same plugin");
});

test('a 7-day 1 Hz run is thinned to a few thousand points per series', (t) => {
  const profile = profileFromChemistry('lead-acid', 6, { capacityAh: 100, chargeCurrentA: 10 });
  const n = 7 * 24 * 3600;
  const samples: TimedSample[] = new Array(n);
  for (let i = 0; i < n; i++) {
    const tS = i;
    samples[i] = {
      t: tS,
      rxS: tS,
      extra: {},
      // One sample at 15.9 V on day 3: min-max decimation keeps it, as in the app (LTTB may not).
      vbatV: i === 259_201 ? 15.9 : 13.5 + 0.1 * Math.sin(i / 5000),
      ibatA: 0.2 + 0.05 * Math.sin(i / 777),
      tempC: 20 + 5 * Math.sin(i / 43200),
      vinV: 18,
      iinA: 0.3,
    };
  }
  const events: EngineEvent[] = [{ type: 'phase', t: 0, phase: 'done' }];
  const started = performance.now();
  const html = buildRunReport({
    profile,
    samples,
    events,
    ...engineFigures(profile, samples),
    diagnosis: diagnose({ profile, samples, events }),
  });
  t.diagnostic(
    `report of ${n} samples: ${(performance.now() - started).toFixed(0)} ms, ${(html.length / 1e6).toFixed(2)} MB`,
  );
  for (const chart of embeddedData(html).charts) {
    for (const s of chart.series)
      assert.ok(s.xy.length / 2 <= 2100, `${chart.id} ${s.label}: ${s.xy.length / 2} points`);
  }
  const vbat = embeddedData(html).charts.find((c) => c.id === 'chart-voltage')!.series[0].xy;
  const spike = vbat.findIndex((v, i) => i % 2 === 1 && v === 15.9);
  assert.ok(spike > 0 && vbat[spike - 1] === 259_201, 'the one-sample spike is kept at its time');
});

test('text from the profile and the alarms is escaped', () => {
  const profile = profileFromChemistry('li-ion', 1, {});
  const named = { ...profile, name: '<img src=x onerror=alert(1)> shed light' };
  const samples: TimedSample[] = [0, 1, 2].map((t) => ({ t, rxS: t, extra: {}, vbatV: 3.9, ibatA: 0.5 }));
  const events: EngineEvent[] = [
    { type: 'phase', t: 0, phase: 'cc' },
    { type: 'alarm', t: 1, code: 'stall', level: 'warn', message: '</script><b>bold</b>' },
  ];
  const html = buildRunReport({
    profile: named,
    samples,
    events,
    ...engineFigures(named, samples),
    diagnosis: diagnose({ profile: named, samples, events }),
  });
  assert.ok(!html.includes('<img src=x'), 'profile name escaped');
  assert.ok(html.includes('&lt;img src=x onerror=alert(1)&gt; shed light'));
  assert.ok(!html.includes('</script><b>'), 'alarm message escaped');
});

test('the report of a recorded run, read from a real SQLite file as the app asks for it', async (t) => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-report-db-'));
  t.after(() => rmSync(dir, { recursive: true, force: true }));
  const dbPath = join(dir, 'bench.sqlite');
  const scenario = getScenario('damaged-cell');
  const parsed = parseProfile(scenario.profile);
  assert.ok(parsed.ok);
  const recorder = openRecorder(dbPath);
  const startRxS = 1_780_000_000;
  const { runId } = recorder.startRun({
    stationId: 'bench-1',
    stationLabel: 'bench 1',
    profileName: parsed.profile.name,
    chemistry: parsed.profile.chemistry,
    profileJson: scenario.profile,
    startRxS,
  });
  const pipeline = createPipeline(parsed.profile);
  let rxS = startRxS;
  for (const text of simulatedLines(scenario.name, { shape: 'kv', sampleIntervalS: 1, seed: 5 })) {
    const out = pipeline.pushLine(text, rxS, false);
    recorder.addLine(runId, { rxS, text, kind: out.result.kind });
    if (out.sample) recorder.addSample(runId, out.sample);
    for (const e of out.events) recorder.addEvent(runId, e);
    rxS += 1;
  }
  recorder.endRun(runId, rxS, 'completed', pipeline.summary());
  recorder.close();

  const reader = openRunReader(dbPath);
  t.after(() => reader.close());
  const html = await buildRunReport(reader, runId);
  for (const id of SECTIONS) assert.ok(html.includes(`id="${id}"`), `section ${id}`);
  assert.match(html, /Run 1: bench 1/);
  assert.match(html, /id="cause-damaged-cell"/);
  assert.match(html, /precondition-timeout/);
});

test('renderReportPdf says clearly when no Chromium exists', async (t) => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-nopdf-'));
  t.after(() => rmSync(dir, { recursive: true, force: true }));
  const htmlPath = join(dir, 'r.html');
  writeFileSync(htmlPath, '<!doctype html><p>x</p>');
  await assert.rejects(
    renderReportPdf(htmlPath, join(dir, 'r.pdf'), { executablePath: join(dir, 'no-chromium') }),
    (err) => {
      assert.ok(err instanceof NoChromiumError);
      assert.match(err.message, /no Chromium found/);
      assert.match(err.message, /HTML report was kept/);
      return true;
    },
  );
  assert.equal(existsSync(join(dir, 'r.pdf')), false);
});

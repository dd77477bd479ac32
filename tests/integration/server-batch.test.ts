/**
 * The Batch report from the app: a burn-in batch of simulated boards (invented parts) recorded
 * into a real SQLite file, asked for over the WebSocket API as `taperline serve` offers it, and
 * downloaded over HTTP on 127.0.0.1: the same verdicts as `taperline check --batch`, a strict
 * page policy, the CSV table, and refusals in words for a batch that is unknown or has no
 * design limits to judge against.
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { startBackend, type Backend } from '../../main/app/backend';
import { realLibraries } from '../../main/app/libraries';
import { startServer, type RunningServer } from '../../main/server';
import { batchBoards } from '../../main/simulator/board-scenarios';
import { recordBatch } from './batch-fixture';
import { ApiClient, authed, rawGet, wsUrl } from './server-harness';

let dir: string;
let dbPath: string;
let backend: Backend;
let server: RunningServer;
let client: ApiClient;

/** A batch id with characters a path and a file name must not take as they are. */
const ODD_BATCH = 'lot/3"x';

before(async () => {
  dir = mkdtempSync(join(tmpdir(), 'taperline-server-batch-'));
  dbPath = join(dir, 'burn-in.sqlite');
  // Seed 7 of the invented lot, as the batch checks test uses it; six boards keep this quick.
  const boards = batchBoards(6, 7);
  recordBatch(dbPath, boards, 'B7', 2);
  recordBatch(dbPath, boards.slice(0, 1), ODD_BATCH, 2);
  // A batch whose boards were charged with a profile that has no design limits.
  recordBatch(
    dbPath,
    boards.slice(0, 2).map((b) => ({ ...b, profile: { ...b.profile, expect: undefined } })),
    'B8',
    2,
  );
  backend = await startBackend({ dbPath, stations: [] });
  server = await startServer({
    port: 0,
    service: backend.service,
    recorder: backend.recorder,
    batchFile: async (batchId, what) => realLibraries.batchReportFile(backend.recorder!, batchId, what),
  });
  client = await ApiClient.connect(wsUrl(server));
});

after(async () => {
  await client?.close();
  await server?.close();
  await backend?.stop();
  rmSync(dir, { recursive: true, force: true });
});

test('the Batch report is offered as a download URL and served with the verdicts of taperline check', async () => {
  const reply = await client.request('batches.report', { batchId: 'B7' });
  assert.equal(reply.ok, true, JSON.stringify(reply));
  assert.deepEqual((reply as { result: unknown }).result, { url: '/api/batches/B7/report.html' });
  const page = await rawGet(server.port, '/api/batches/B7/report.html', authed(server));
  assert.equal(page.status, 200, page.body.slice(0, 300));
  assert.match(String(page.headers['content-type']), /text\/html/);
  assert.match(String(page.headers['content-disposition']), /filename="taperline-batch-B7\.html"/);
  // The header policy allows exactly the page's own nonce, sandboxed.
  const csp = String(page.headers['content-security-policy']);
  const nonce = /script-src 'nonce-([A-Za-z0-9+/=]+)'/.exec(page.body)?.[1];
  assert.ok(nonce, 'the page carries a nonce');
  assert.match(csp, new RegExp(`script-src 'nonce-${nonce!.replace(/[+/=]/g, '\\$&')}'`));
  assert.doesNotMatch(csp, /script-src[^;]*unsafe-inline/);
  assert.match(csp, /sandbox allow-scripts/);

  // The command line judges the same recording: the page says the same yield.
  const check = spawnSync(
    process.execPath,
    ['--import', 'tsx', 'main/cli/main.ts', 'check', '--db', dbPath, '--batch', 'B7', '--json'],
    { encoding: 'utf8', timeout: 120_000 },
  );
  const summary = (JSON.parse(check.stdout) as { summary: { pass: number; fail: number; yieldPct: number } })
    .summary;
  assert.match(
    page.body,
    new RegExp(`Yield <strong>${summary.yieldPct} %</strong>: ${summary.pass} pass, ${summary.fail} fail`),
  );
  assert.equal((page.body.match(/<tr>/g) ?? []).length - 1, 6, 'a header row and one row per board');
});

test('the batch table is served as CSV, one line per board', async () => {
  const reply = await client.request('batches.report', { batchId: 'B7', csv: true });
  assert.deepEqual((reply as { result: unknown }).result, { url: '/api/batches/B7/batch.csv' });
  const csv = await rawGet(server.port, '/api/batches/B7/batch.csv', authed(server));
  assert.equal(csv.status, 200);
  assert.match(String(csv.headers['content-type']), /text\/csv/);
  const lines = csv.body.trim().split('\n');
  assert.equal(lines.length, 7);
  assert.match(lines[0], /^board,verdict,/);
});

test('a batch id with a slash and a quote travels percent-encoded and names a safe file', async () => {
  const reply = await client.request('batches.report', { batchId: ODD_BATCH });
  const url = (reply as { result: { url: string } }).result.url;
  assert.equal(url, `/api/batches/${encodeURIComponent(ODD_BATCH)}/report.html`);
  const page = await rawGet(server.port, url, authed(server));
  assert.equal(page.status, 200, page.body.slice(0, 300));
  assert.match(String(page.headers['content-disposition']), /filename="taperline-batch-lot_3_x\.html"/);
  assert.match(page.body, /Batch lot\/3&quot;x/);
});

test('an unknown batch and a batch without design limits are refused in words', async () => {
  const unknown = await client.request('batches.report', { batchId: 'nope' });
  assert.equal(unknown.ok, false);
  assert.match((unknown as { error: string }).error, /no recorded run belongs to batch "nope"/);
  const bare = await client.request('batches.report', { batchId: 'B8' });
  assert.equal(bare.ok, false);
  assert.match((bare as { error: string }).error, /the profile of runs \d+, \d+ has no expect key/);
  const spaced = await client.request('batches.report', { batchId: 'two words' });
  assert.equal(spaced.ok, false);
  assert.match((spaced as { error: string }).error, /batchId/);
  const direct = await rawGet(server.port, '/api/batches/nope/report.html', authed(server));
  assert.equal(direct.status, 404);
  assert.match(direct.body, /no recorded run belongs to batch "nope"/);
});

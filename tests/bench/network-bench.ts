/**
 * Many benches through a broker, measured (`npm run bench`; figures only, nothing asserted).
 *
 * 1. 64 remote stations at 10 Hz: four `taperline record` processes (16 socat ptys each)
 *    publish to a real Mosquitto on loopback, one `taperline serve --subscribe` shows and
 *    records them, a WebSocket client receives the sample pushes. Latency is from the line
 *    written to the pty (its device time `t` is the write time) to the sample reaching the
 *    client, p50/p95; CPU is per process over the measuring window.
 * 2. 16 local stations at 10 Hz on ptys straight into `serve`: server CPU, with this build and,
 *    when TAPERLINE_BASELINE_CLI names an older build's dist/cli.cjs, with that one in the same
 *    run (the ratio is the figure to read; the machine is shared, so absolute CPU is noisy).
 *
 * --quick: 8 s windows instead of 20 s.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import {
  existsSync,
  mkdtempSync,
  openSync,
  readFileSync,
  rmSync,
  writeFileSync,
  writeSync,
  closeSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import WebSocket from 'ws';
import { topicLevel } from '@shared/sources/mqtt-topics';
import { createBroker } from '../integration/mosquitto';
import { projectRoot } from './bundle-bench';

const QUICK = process.argv.includes('--quick');
const WINDOW_S = QUICK ? 8 : 20;
const RATE_HZ = 10;
const CLI = join(projectRoot(), 'dist', 'cli.cjs');
const TICK_S = 0.01; // USER_HZ = 100 on Linux (proc(5))
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

interface Pty {
  device: string;
  host: string;
  proc: ChildProcess;
  fd: number;
}

async function openPty(dir: string, name: string): Promise<Pty> {
  const device = join(dir, `${name}-dev`);
  const host = join(dir, `${name}-host`);
  const proc = spawn('socat', [`pty,raw,echo=0,link=${device}`, `pty,raw,echo=0,link=${host}`], {
    stdio: 'ignore',
  });
  for (let i = 0; i < 500 && !(existsSync(device) && existsSync(host)); i++) await sleep(10);
  return { device, host, proc, fd: openSync(device, 'w') };
}

function cpuS(pid: number): number {
  // proc(5): fields 14 and 15 of /proc/PID/stat are utime and stime in clock ticks.
  const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
  const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
  return (Number(fields[11]) + Number(fields[12])) * TICK_S;
}

function start(cli: string, args: string[]): { proc: ChildProcess; out: () => string } {
  const proc = spawn(process.execPath, [cli, ...args], { stdio: ['ignore', 'pipe', 'pipe'] });
  let out = '';
  proc.stdout!.on('data', (d) => (out += d));
  proc.stderr!.on('data', (d) => (out += d));
  return { proc, out: () => out };
}

async function until(cond: () => boolean, ms: number, what: string): Promise<void> {
  const end = Date.now() + ms;
  while (!cond()) {
    if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
    await sleep(50);
  }
}

const percentile = (sorted: number[], p: number) =>
  sorted.length ? sorted[Math.min(sorted.length - 1, Math.floor((p / 100) * sorted.length))]! : NaN;

/** Writes one line per station every 1/RATE_HZ s; each line's `t` is its write time since t0. */
function writer(
  ptys: Pty[],
  t0Ms: number,
): { stop(): void; firstT: Map<number, number>; lines: () => number } {
  const firstT = new Map<number, number>();
  let lines = 0;
  const timer = setInterval(() => {
    for (let i = 0; i < ptys.length; i++) {
      const t = (Date.now() - t0Ms) / 1000;
      if (!firstT.has(i)) firstT.set(i, t);
      writeSync(
        ptys[i]!.fd,
        `t=${t.toFixed(3)} vbat=${(7.4 + i * 0.001).toFixed(3)} ibat=0.900 temp=25.0 vin=12.0 iin=0.6 chg=1 flt=0\n`,
      );
      lines++;
    }
  }, 1000 / RATE_HZ);
  return { stop: () => clearInterval(timer), firstT, lines: () => lines };
}

async function serveUrl(s: { out: () => string }): Promise<string> {
  await until(() => /serving at (http:\S+)/.test(s.out()), 30_000, 'serve');
  return /serving at (http:\S+)/
    .exec(s.out())![1]!
    .replace(/^http/, 'ws')
    .replace(/\/(\?.*)?$/, '/api/ws');
}

async function remoteBench(dir: string): Promise<void> {
  const broker = await createBroker();
  await broker.start();
  const procs: ChildProcess[] = [];
  const ptys: Pty[] = [];
  try {
    const serve = start(CLI, [
      'serve',
      '--port',
      '0',
      '--db',
      join(dir, 'central.sqlite'),
      '--subscribe',
      broker.url('bench'),
    ]);
    procs.push(serve.proc);
    const wsUrl = await serveUrl(serve);
    const benches: { proc: ChildProcess; out: () => string; name: string }[] = [];
    for (let b = 0; b < 4; b++) {
      const mine: Pty[] = [];
      for (let s = 0; s < 16; s++) mine.push(await openPty(dir, `b${b}s${s}`));
      ptys.push(...mine);
      const name = `bench-${b + 1}`;
      const rec = start(CLI, [
        'record',
        ...mine.flatMap((p) => ['--port', p.host]),
        '--db',
        join(dir, `${name}.sqlite`),
        '--publish',
        broker.url('bench'),
        '--bench',
        name,
        '--status-every',
        '3600',
      ]);
      procs.push(rec.proc);
      benches.push({ ...rec, name });
    }
    await until(
      () => benches.every((b) => (b.out().match(/ open at 115200 baud/g) ?? []).length === 16),
      30_000,
      'ptys open',
    );
    const ws = new WebSocket(wsUrl);
    await new Promise((r, j) => (ws.once('open', r), ws.once('error', j)));
    const latenciesMs: number[] = [];
    const t0Ms = Date.now();
    const w = writer(ptys, t0Ms);
    // Station id `bench-N/serial:<host path>` → pty index.
    const indexOf = new Map(
      ptys.map((p, i) => [`bench-${Math.floor(i / 16) + 1}/${topicLevel(`serial:${p.host}`)}`, i]),
    );
    let measuring = false;
    ws.on('message', (data) => {
      const msg = JSON.parse(String(data)) as { push?: string; data?: { stationId: string; tS: number[] } };
      if (msg.push !== 'samples' || !measuring || !msg.data) return;
      const i = indexOf.get(msg.data.stationId);
      const d0 = i === undefined ? undefined : w.firstT.get(i);
      if (d0 === undefined) return;
      const nowMs = Date.now();
      for (const tS of msg.data.tS) latenciesMs.push(nowMs - (t0Ms + (d0 + tS) * 1000));
    });
    await sleep(3000); // warm up: stations appear, runs start
    measuring = true;
    const watched = [
      ...benches.map((b) => ({ name: `record ${b.name}`, pid: b.proc.pid! })),
      { name: 'serve --subscribe', pid: serve.proc.pid! },
    ];
    const before = watched.map((p) => cpuS(p.pid));
    const wallStart = Date.now();
    await sleep(WINDOW_S * 1000);
    const wall = (Date.now() - wallStart) / 1000;
    const after = watched.map((p) => cpuS(p.pid));
    measuring = false;
    w.stop();
    ws.close();
    const sorted = latenciesMs.sort((a, b) => a - b);
    console.log(`64 remote stations at ${RATE_HZ} Hz through mosquitto, ${WINDOW_S} s window:`);
    console.log(
      `  line written -> sample on a WebSocket client: p50 ${percentile(sorted, 50).toFixed(0)} ms, p95 ${percentile(sorted, 95).toFixed(0)} ms (${sorted.length} samples; expected about ${64 * RATE_HZ * WINDOW_S})`,
    );
    for (let k = 0; k < watched.length; k++)
      console.log(
        `  CPU ${watched[k]!.name}: ${((100 * (after[k]! - before[k]!)) / wall).toFixed(1)} % of a core`,
      );
    if (sorted.length === 0) console.log('  (no samples matched: check the station ids)');
  } finally {
    for (const p of procs) if (p.exitCode === null) p.kill('SIGINT');
    await sleep(3000);
    for (const p of procs) if (p.exitCode === null) p.kill('SIGKILL');
    for (const p of ptys) {
      closeSync(p.fd);
      p.proc.kill('SIGTERM');
    }
    await broker.dispose();
  }
}

async function localServeCpu(dir: string, cli: string, label: string): Promise<number> {
  const ptys: Pty[] = [];
  for (let s = 0; s < 16; s++) ptys.push(await openPty(dir, `${label}-l${s}`));
  const profile = join(dir, 'profile.json');
  // Invented demo pack: a garden sensor's 2S Li-ion.
  writeFileSync(
    profile,
    JSON.stringify({ name: 'garden sensor 2S (demo)', chemistry: 'li-ion', cells: 2, capacityAh: 2.5 }),
  );
  const serve = start(cli, [
    'serve',
    '--port',
    '0',
    '--db',
    join(dir, `${label}-local.sqlite`),
    '--profile',
    profile,
    '--station-port',
    ptys[0]!.host,
  ]);
  try {
    // The other 15 through the API, as the Connect view adds them (older builds took one --station-port).
    const ws = new WebSocket(await serveUrl(serve));
    await new Promise((r, j) => (ws.once('open', r), ws.once('error', j)));
    const profileJson = JSON.parse(readFileSync(profile, 'utf8')) as unknown;
    for (let s = 1; s < ptys.length; s++)
      ws.send(
        JSON.stringify({
          id: s,
          method: 'stations.add',
          params: {
            config: {
              id: `local-${s}`,
              source: { kind: 'serial', path: ptys[s]!.host, baudRate: 115200 },
              profile: profileJson,
            },
          },
        }),
      );
    await sleep(2500);
    ws.close();
    const w = writer(ptys, Date.now());
    await sleep(3000);
    const before = cpuS(serve.proc.pid!);
    const wallStart = Date.now();
    await sleep(WINDOW_S * 1000);
    const pct = (100 * (cpuS(serve.proc.pid!) - before)) / ((Date.now() - wallStart) / 1000);
    w.stop();
    return pct;
  } finally {
    serve.proc.kill('SIGINT');
    await sleep(2000);
    if (serve.proc.exitCode === null) serve.proc.kill('SIGKILL');
    for (const p of ptys) {
      closeSync(p.fd);
      p.proc.kill('SIGTERM');
    }
  }
}

async function main(): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-netbench-'));
  try {
    await remoteBench(dir);
    const now = await localServeCpu(dir, CLI, 'now');
    console.log(`16 local stations at ${RATE_HZ} Hz into serve, ${WINDOW_S} s window:`);
    console.log(`  CPU serve (this build): ${now.toFixed(1)} % of a core`);
    const baseline = process.env.TAPERLINE_BASELINE_CLI;
    if (baseline && existsSync(baseline)) {
      const before = await localServeCpu(dir, baseline, 'base');
      console.log(
        `  CPU serve (baseline ${baseline}): ${before.toFixed(1)} % of a core; ratio this/baseline ${(now / before).toFixed(2)}`,
      );
    } else {
      console.log(
        "  (no baseline: set TAPERLINE_BASELINE_CLI to an older build's dist/cli.cjs to compare in the same run)",
      );
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

void main();

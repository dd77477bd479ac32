/**
 * The unplug soak shared by the benchmark (tests/bench/unplug-bench.ts, 200 cycles) and its
 * bounded test (tests/integration/serial-unplug-soak.test.ts): a real `taperline record`
 * child reads one end of a socat pty pair while this process writes numbered lines into
 * the other; the far end (socat) is killed with SIGTERM and SIGKILL in turn and started
 * again on the same link names.
 *
 * Per cycle it checks that the recorder said "is back" once (no unplug missed), that every
 * line written after the first one it recorded again is in the database (nothing lost once
 * the port is read again: lines written before the recorder reopened are flushed by the
 * open, as a real device's would be), and it measures the reconnect time (the device's link
 * appearing -> the receive time of the first recorded line) and the recorder's CPU while
 * the device is away, from /proc/<pid>/stat.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import Database from 'better-sqlite3';
import { SerialPort } from 'serialport';

const repo = resolve(__dirname, '..', '..');
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

export interface SoakOptions {
  cycles: number;
  /** Folder for the links and the database. */
  dir: string;
  /** How long the device stays away, drawn evenly from this range (ms). */
  downMs: [number, number];
  /** Lines written after the first recorded one in each cycle. */
  linesPerCycle?: number;
  /** Writer interval (ms). */
  writeEveryMs?: number;
  log?: (text: string) => void;
}

export interface SoakResult {
  cycles: number;
  missedUnplugs: number;
  /** Lines written after the first recorded line of their cycle that never reached the database. */
  lostLines: number;
  linesWritten: number;
  /** Device link back -> first recorded line, per cycle (ms). */
  reconnectMs: number[];
  /** Device link back -> this process's own open of the device end (ms): the baseline. */
  bareOpenMs: number[];
  /** Recorder CPU while the device was away, % of one core. */
  idleCpuPct: number;
  /** Recorder CPU over the whole soak, % of one core. */
  totalCpuPct: number;
  /** Cycles that could not complete, with why (empty when all went through). */
  failures: string[];
}

/** utime + stime of a process in seconds (proc(5): fields 14 and 15, in clock ticks). */
export function cpuSeconds(pid: number): number {
  const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
  // The command name (field 2) may hold spaces; fields after it start behind its ')'.
  const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
  // Linux reports these in USER_HZ ticks, 100 a second on every architecture (proc(5), times(2)).
  return (Number(fields[11]) + Number(fields[12])) / 100;
}

class Socat {
  private proc: ChildProcess | null = null;
  constructor(
    readonly device: string,
    readonly host: string,
  ) {}
  /** Starts socat; resolves with the time both links exist (polled every 1 ms). */
  async start(): Promise<number> {
    const p = spawn('socat', [`pty,raw,echo=0,link=${this.device}`, `pty,raw,echo=0,link=${this.host}`], {
      stdio: 'ignore',
    });
    this.proc = p;
    for (let i = 0; i < 5000; i++) {
      if (p.exitCode !== null) throw new Error(`socat exited with ${p.exitCode}`);
      if (existsSync(this.device) && existsSync(this.host)) return Date.now();
      await sleep(1);
    }
    throw new Error('socat did not create its ptys within 5 s');
  }
  async kill(signal: NodeJS.Signals): Promise<void> {
    const p = this.proc;
    this.proc = null;
    if (!p || p.exitCode !== null || p.signalCode !== null) return;
    const gone = new Promise<void>((r) => p.once('exit', () => r()));
    p.kill(signal);
    await gone;
  }
}

function openPortOnce(path: string): Promise<SerialPort> {
  const port = new SerialPort({ path, baudRate: 115200, autoOpen: false });
  return new Promise((res, rej) => port.open((e) => (e ? rej(e) : res(port))));
}

/** Opens the device end, retrying for 2 s (a failure is reported by the caller, not thrown past it). */
async function openPort(path: string): Promise<SerialPort> {
  for (let i = 0; ; i++) {
    try {
      return await openPortOnce(path);
    } catch (err) {
      if (i >= 100) throw err;
      await sleep(20);
    }
  }
}

const SEQ = /(?:^|\s)seq=(\d+)$/;

export async function runUnplugSoak(options: SoakOptions): Promise<SoakResult> {
  const { cycles, dir } = options;
  const linesPerCycle = options.linesPerCycle ?? 20;
  const writeEveryMs = options.writeEveryMs ?? 5;
  const log = options.log ?? (() => undefined);
  const socat = new Socat(join(dir, 'device'), join(dir, 'host'));
  const dbPath = join(dir, 'soak.sqlite');
  const result: SoakResult = {
    cycles,
    missedUnplugs: 0,
    lostLines: 0,
    linesWritten: 0,
    reconnectMs: [],
    bareOpenMs: [],
    idleCpuPct: 0,
    totalCpuPct: 0,
    failures: [],
  };

  let backAt = await socat.start();
  const recorder = spawn(
    process.execPath,
    [
      join(repo, 'bin', 'taperline.cjs'),
      'record',
      '--port',
      socat.host,
      '--db',
      dbPath,
      '--status-every',
      '3600',
    ],
    { cwd: repo, stdio: ['ignore', 'pipe', 'pipe'] },
  );
  let out = '';
  recorder.stdout?.on('data', (d: Buffer) => (out += d.toString()));
  recorder.stderr?.on('data', (d: Buffer) => (out += d.toString()));
  const backCount = () => (out.match(/ is back after /g) ?? []).length;
  const pid = recorder.pid as number;
  const cpuStart = cpuSeconds(pid);
  const wallStart = Date.now();
  let idleCpuS = 0;
  let idleWallS = 0;

  let db: Database.Database | null = null;
  let lastLineId = 0;
  /** seq -> receive time (s) of every numbered line recorded so far. */
  const recorded = new Map<number, number>();
  function readNewLines(): void {
    if (!db) {
      if (!existsSync(dbPath)) return;
      try {
        db = new Database(dbPath, { readonly: true, fileMustExist: true });
      } catch {
        return;
      }
    }
    try {
      const rows = db
        .prepare('SELECT id, rx_s AS rxS, text FROM lines WHERE id > ? ORDER BY id')
        .all(lastLineId) as Array<{ id: number; rxS: number; text: string }>;
      for (const r of rows) {
        lastLineId = r.id;
        const m = SEQ.exec(r.text);
        if (m && !recorded.has(Number(m[1]))) recorded.set(Number(m[1]), r.rxS);
      }
    } catch {
      // The schema may not exist yet on the first poll.
    }
  }
  async function waitFor(cond: () => boolean, ms: number): Promise<boolean> {
    const end = Date.now() + ms;
    for (;;) {
      readNewLines();
      if (cond()) return true;
      if (Date.now() > end) return false;
      await sleep(20);
    }
  }

  let seq = 0;
  try {
    if (!(await waitFor(() => / open at /.test(out), 15_000)))
      throw new Error(`the recorder did not open the port: ${out}`);
    for (let cycle = 0; cycle <= cycles; cycle++) {
      // The device is back (cycle 0: first plug): open its end, write numbered lines.
      const writer = await openPort(socat.device);
      if (cycle > 0) result.bareOpenMs.push(Date.now() - backAt);
      const firstSeq = seq + 1;
      const written: number[] = [];
      let writeError: Error | null = null;
      const writeOne = () => {
        seq++;
        written.push(seq);
        writer.write(`vbat=7.400 ibat=0.500 seq=${seq}\n`, (e) => (e ? (writeError = e) : undefined));
      };
      const timer = setInterval(writeOne, writeEveryMs);
      const gotFirst = await waitFor(() => written.some((s) => recorded.has(s)), 10_000);
      clearInterval(timer);
      if (!gotFirst || writeError) {
        result.failures.push(
          `cycle ${cycle}: no line recorded within 10 s${writeError ? ` (${String(writeError)})` : ''}`,
        );
        if (cycle > 0) result.missedUnplugs++;
        await new Promise<void>((r) => writer.close(() => r()));
        break;
      }
      const firstRecorded = written.find((s) => recorded.has(s)) as number;
      if (cycle > 0) {
        const firstRx = Math.min(
          ...written.filter((s) => recorded.has(s)).map((s) => recorded.get(s) as number),
        );
        result.reconnectMs.push(firstRx * 1000 - backAt);
      }
      for (let i = 0; i < linesPerCycle; i++) {
        writeOne();
        await sleep(writeEveryMs);
      }
      await new Promise<void>((r) => writer.drain(() => r()));
      const last = seq;
      await waitFor(() => recorded.has(last), 5000);
      for (let s = firstRecorded; s <= last; s++) if (!recorded.has(s)) result.lostLines++;
      result.linesWritten += last - firstSeq + 1;
      if (cycle > 0 && !(await waitFor(() => backCount() >= cycle, 2000))) {
        result.missedUnplugs++;
        result.failures.push(`cycle ${cycle}: the recorder never said the port was back`);
      }
      await new Promise<void>((r) => writer.close(() => r()));
      if (cycle === cycles) break;

      // Unplug: SIGTERM and SIGKILL in turn; stay away for a while; measure CPU meanwhile.
      await socat.kill(cycle % 2 === 0 ? 'SIGTERM' : 'SIGKILL');
      const [lo, hi] = options.downMs;
      const downMs = lo + Math.random() * (hi - lo);
      // The first 100 ms belong to noticing the unplug; the rest is idle time.
      await sleep(Math.min(100, downMs / 2));
      const c0 = cpuSeconds(pid);
      const w0 = Date.now();
      await sleep(downMs - Math.min(100, downMs / 2));
      idleCpuS += cpuSeconds(pid) - c0;
      idleWallS += (Date.now() - w0) / 1000;
      backAt = await socat.start();
      if (cycle % 20 === 19) log(`  ${cycle + 1} cycles`);
    }
    result.idleCpuPct = idleWallS > 0 ? (100 * idleCpuS) / idleWallS : 0;
    result.totalCpuPct = (100 * (cpuSeconds(pid) - cpuStart)) / ((Date.now() - wallStart) / 1000);
  } finally {
    if (recorder.exitCode === null) {
      const gone = new Promise<void>((r) => recorder.once('exit', () => r()));
      recorder.kill('SIGTERM');
      await gone;
    }
    (db as Database.Database | null)?.close();
    await socat.kill('SIGTERM');
  }
  return result;
}

export function median(values: number[]): number {
  if (values.length === 0) return NaN;
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

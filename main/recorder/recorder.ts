/**
 * The recording database: one SQLite file holding runs, samples, events and every raw
 * line. Writes are queued and committed in batches; reads go through the RunReader.
 */
import Database from 'better-sqlite3';
import { EventEmitter } from 'node:events';
import { accessSync, constants as fsConstants, existsSync, mkdirSync, statSync } from 'node:fs';
import { hostname } from 'node:os';
import { dirname } from 'node:path';
import type { EngineEvent, TimedSample } from '../../shared/engine/types';
import { describeDbError, RecorderOpenError } from './errors';
import { defaultDbPath } from './paths';
import { createRunReader } from './reader';
import { RunRollup, slotFromRow, slotParams, type RollupSlot } from './rollup';
import { migrate, SERIES_COLUMNS } from './schema';
import type {
  Recorder,
  RecorderEvents,
  RecorderHealth,
  RunEndReason,
  RunReader,
  RunStart,
  RunTotals,
  StoredLine,
} from './types';

export interface RecorderOptions {
  /** Longest time between commits. */
  flushIntervalMs?: number;
  /** Commit at once when this many rows are queued. */
  batchRows?: number;
  /** Rows kept for retry while writes fail; beyond this the oldest rows are dropped and counted. */
  maxBacklogRows?: number;
  /** Wait between retries after a failed write. */
  retryMs?: number;
  /** Checkpoint (and truncate) the WAL when it grows past this size. */
  walCheckpointBytes?: number;
  /** How long to wait for a lock held by another program before reporting it. */
  busyTimeoutMs?: number;
}

type Op =
  | { kind: 'run'; params: unknown[] }
  | { kind: 'line'; runId: number; line: StoredLine }
  | { kind: 'sample'; runId: number; seq: number; s: TimedSample }
  | { kind: 'event'; runId: number; event: EngineEvent | { type: 'sent'; t: number; text: string } }
  | { kind: 'slot'; runId: number; slot: RollupSlot }
  | { kind: 'end'; runId: number; endRxS: number; reason: RunEndReason };

interface LiveRun {
  seq: number;
  rollup: RunRollup;
  lastRxS: number | null;
  lastT: number;
}

const HOST = hostname();

function pidAlive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (err) {
    return (err as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/**
 * Open (or create) a recording database with the connection settings every Taperline
 * process uses. Throws RecorderOpenError with a sentence a person can act on.
 */
export function openDatabase(
  dbPath: string,
  options: { readonly?: boolean; busyTimeoutMs?: number } = {},
): Database.Database {
  let db: Database.Database;
  try {
    if (!options.readonly) mkdirSync(dirname(dbPath), { recursive: true });
    db = new Database(dbPath, {
      readonly: options.readonly ?? false,
      fileMustExist: options.readonly ?? false,
    });
  } catch (err) {
    throw new RecorderOpenError(
      `${describeDbError(folderProblem(dbPath) ?? err, dbPath)}; nothing was recorded — fix that or give another --db FILE`,
    );
  }
  try {
    // A lock held by another program is waited for briefly, never long enough to stall the live display.
    db.pragma(`busy_timeout = ${options.busyTimeoutMs ?? 200}`);
    if (!options.readonly) {
      db.pragma('journal_mode = WAL');
      // synchronous = FULL: in WAL mode NORMAL already survives a crash of the app, but a
      // power cut (a bench power strip tripping during a week-long burn-in) can roll back
      // every commit since the last checkpoint. Commits are batched (at most 4 a second
      // while recording live), so the one fsync per commit that FULL costs is small.
      db.pragma('synchronous = FULL');
      db.pragma('journal_size_limit = 67108864');
      // 16 MiB of page cache: a large batch (max-speed replay) commits without spilling pages early.
      db.pragma('cache_size = -16384');
      migrate(db);
    }
  } catch (err) {
    db.close();
    if (err instanceof RecorderOpenError) throw err;
    const msg =
      err instanceof Error && err.message.startsWith('the database was written')
        ? `${dbPath}: ${err.message}`
        : describeDbError(err, dbPath);
    throw new RecorderOpenError(`${msg}; nothing was recorded — fix that or give another --db FILE`);
  }
  return db;
}

/** SQLite says only "cannot open"; the folder itself tells whether it is read-only. */
function folderProblem(dbPath: string): NodeJS.ErrnoException | null {
  const dir = dirname(dbPath);
  if (!existsSync(dir)) return null;
  try {
    accessSync(existsSync(dbPath) ? dbPath : dir, fsConstants.W_OK);
    return null;
  } catch (err) {
    return err as NodeJS.ErrnoException;
  }
}

/** A reader of a recording database without the write side (replay, diagnose, report). */
export function openRunReader(dbPath: string): RunReader & { close(): void } {
  let db: Database.Database;
  try {
    db = openDatabase(dbPath);
  } catch (err) {
    // A read-only file is still readable; migrations were applied when it was written.
    db = openDatabase(dbPath, { readonly: true });
    void err;
  }
  return Object.assign(createRunReader(db), { close: () => db.close() });
}

/** Open the recording database at `dbPath` (default: the user's data folder). */
export function openRecorder(dbPath: string = defaultDbPath(), options: RecorderOptions = {}): Recorder {
  const flushIntervalMs = options.flushIntervalMs ?? 250;
  const batchRows = options.batchRows ?? 5000;
  const maxBacklogRows = options.maxBacklogRows ?? 200_000;
  const retryMs = options.retryMs ?? 2000;
  const walCheckpointBytes = options.walCheckpointBytes ?? 32 * 1024 * 1024;
  const db = openDatabase(dbPath, { busyTimeoutMs: options.busyTimeoutMs });
  const reader = createRunReader(db);
  const emitter = new EventEmitter();

  const slotCols = SERIES_COLUMNS.map(([, c]) => c);
  const st = {
    insertRun: db.prepare(
      `INSERT INTO runs (id, station_id, station_label, profile_name, chemistry, profile_json, start_rx_s, writer_pid, writer_host)
       VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)`,
    ),
    line: db.prepare(
      'INSERT INTO lines (run_id, rx_s, kind, text, reason, detail, too_long) VALUES (?, ?, ?, ?, ?, ?, ?)',
    ),
    sample: db.prepare(
      `INSERT OR REPLACE INTO samples (run_id, t, seq, rx_s, device_s, vbat_v, ibat_a, temp_c, ntc_raw, vin_v, iin_a, chg, flt, src, extra_json)
       VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
    ),
    event: db.prepare('INSERT INTO events (run_id, t, type, end_t, json) VALUES (?, ?, ?, ?, ?)'),
    closeGap: db.prepare(
      "UPDATE events SET end_t = ?, json = ? WHERE id = (SELECT max(id) FROM events WHERE run_id = ? AND type = 'gap' AND t = ? AND end_t IS NULL)",
    ),
    slot: db.prepare(
      `INSERT OR REPLACE INTO rollup VALUES (${new Array(6 + 4 * slotCols.length).fill('?').join(', ')})`,
    ),
    totals: db.prepare(
      'UPDATE runs SET duration_s = ?, ah = ?, wh = ?, lines = ?, rejected = ?, summary_json = ? WHERE id = ?',
    ),
    lastRx: db.prepare('UPDATE runs SET last_rx_s = max(coalesce(last_rx_s, 0), ?) WHERE id = ?'),
    end: db.prepare(
      'UPDATE runs SET end_rx_s = ?, end_reason = ?, writer_pid = NULL, writer_host = NULL WHERE id = ?',
    ),
    maxRunId: db.prepare<[], { id: number | null }>('SELECT max(id) AS id FROM runs'),
    resumable: db.prepare<
      [string],
      {
        id: number;
        end_rx_s: number | null;
        end_reason: string | null;
        profile_json: string;
        last_rx_s: number | null;
      }
    >(
      'SELECT id, end_rx_s, end_reason, profile_json, last_rx_s FROM runs WHERE station_id = ? ORDER BY id DESC LIMIT 1',
    ),
    reopen: db.prepare(
      'UPDATE runs SET end_rx_s = NULL, end_reason = NULL, writer_pid = ?, writer_host = ? WHERE id = ?',
    ),
    maxSeq: db.prepare<[number], { seq: number | null; t: number | null }>(
      'SELECT max(seq) AS seq, max(t) AS t FROM samples WHERE run_id = ?',
    ),
    openSlots: db.prepare<[number], Record<string, number | null>>(
      'SELECT * FROM rollup WHERE run_id = ? AND idx = (SELECT max(idx) FROM rollup r2 WHERE r2.run_id = rollup.run_id AND r2.level_s = rollup.level_s)',
    ),
  };

  // Runs left open by a process that no longer exists (crash, kill -9, power cut) end as interrupted.
  const openRuns = db
    .prepare<[], { id: number; writer_pid: number | null; writer_host: string | null }>(
      'SELECT id, writer_pid, writer_host FROM runs WHERE end_reason IS NULL',
    )
    .all();
  const closeInterrupted = db.prepare(
    `UPDATE runs SET end_reason = 'interrupted', writer_pid = NULL, writer_host = NULL,
       end_rx_s = coalesce((SELECT max(rx_s) FROM lines WHERE lines.run_id = runs.id), last_rx_s, start_rx_s),
       lines = max(lines, (SELECT count(*) FROM lines WHERE lines.run_id = runs.id AND kind NOT IN ('sent'))),
       rejected = max(rejected, (SELECT count(*) FROM lines WHERE lines.run_id = runs.id AND kind = 'rejected'))
     WHERE id = ?`,
  );
  db.transaction(() => {
    for (const r of openRuns) {
      const live =
        r.writer_pid !== null &&
        r.writer_host === HOST &&
        r.writer_pid !== process.pid &&
        pidAlive(r.writer_pid);
      if (!live) closeInterrupted.run(r.id);
    }
  })();

  let queue: Op[] = [];
  const pendingTotals = new Map<number, RunTotals>();
  const pendingLastRx = new Map<number, number>();
  const live = new Map<number, LiveRun>();
  let lastAllocatedId = 0;
  let problem: string | null = null;
  let dropped = 0;
  let retryAt = 0;
  let flushesSinceWalCheck = 0;
  let closed = false;

  function enqueue(op: Op): void {
    if (closed) return;
    queue.push(op);
    if (queue.length > maxBacklogRows) {
      // Keep run starts and ends; give up the oldest lines and samples first, a tenth of the
      // cap at a time so a long outage does not rescan the backlog on every row.
      let toDrop = queue.length - Math.floor(maxBacklogRows * 0.9);
      const keep: Op[] = [];
      for (const o of queue) {
        if (toDrop > 0 && o.kind !== 'run' && o.kind !== 'end') {
          toDrop--;
          dropped++;
        } else keep.push(o);
      }
      queue = keep;
    }
    if (queue.length >= batchRows && problem === null) flush();
  }

  function writeOp(op: Op): void {
    switch (op.kind) {
      case 'run':
        st.insertRun.run(...op.params);
        return;
      case 'line': {
        const l = op.line;
        st.line.run(op.runId, l.rxS, l.kind, l.text, l.reason ?? null, l.detail ?? null, l.tooLong ? 1 : 0);
        return;
      }
      case 'sample': {
        const s = op.s;
        const extraKeys = Object.keys(s.extra);
        st.sample.run(
          op.runId,
          s.t,
          op.seq,
          s.rxS,
          s.deviceS ?? null,
          s.vbatV ?? null,
          s.ibatA ?? null,
          s.tempC ?? null,
          s.ntcRaw ?? null,
          s.vinV ?? null,
          s.iinA ?? null,
          s.chg === undefined ? null : s.chg ? 1 : 0,
          s.flt === undefined ? null : s.flt ? 1 : 0,
          s.src ?? null,
          extraKeys.length > 0 ? JSON.stringify(s.extra) : null,
        );
        return;
      }
      case 'event': {
        const e = op.event;
        const json = JSON.stringify(e);
        if (e.type === 'gap' && e.endT !== null) {
          if (st.closeGap.run(e.endT, json, op.runId, e.t).changes > 0) return;
        }
        st.event.run(op.runId, e.t, e.type, e.type === 'gap' ? e.endT : null, json);
        return;
      }
      case 'slot':
        st.slot.run(...slotParams(op.runId, op.slot));
        return;
      case 'end':
        st.end.run(op.endRxS, op.reason, op.runId);
        return;
    }
  }

  const commit = db.transaction((ops: Op[], partialSlots: Array<[number, RollupSlot]>) => {
    for (const op of ops) writeOp(op);
    for (const [runId, slot] of partialSlots) st.slot.run(...slotParams(runId, slot));
    for (const [runId, t] of pendingTotals) {
      st.totals.run(
        t.durationS,
        t.ah,
        t.wh,
        t.lines,
        t.rejected,
        t.phaseS ? JSON.stringify(t.phaseS) : null,
        runId,
      );
    }
    for (const [runId, rx] of pendingLastRx) st.lastRx.run(rx, runId);
  });

  function checkpointIfLarge(): void {
    if (++flushesSinceWalCheck < 20) return;
    flushesSinceWalCheck = 0;
    let walBytes: number;
    try {
      walBytes = statSync(`${dbPath}-wal`).size;
    } catch {
      return;
    }
    // A reader holding an old snapshot can keep a passive checkpoint from finishing; TRUNCATE
    // waits (busy_timeout) and resets the file so it does not grow without bound.
    if (walBytes > walCheckpointBytes) db.pragma('wal_checkpoint(TRUNCATE)');
  }

  function flush(): void {
    if (closed) return;
    const hasWork = queue.length > 0 || pendingTotals.size > 0 || pendingLastRx.size > 0;
    if (!hasWork) return;
    const ops = queue;
    const partial: Array<[number, RollupSlot]> = [];
    for (const [runId, run] of live) for (const slot of run.rollup.partial()) partial.push([runId, slot]);
    try {
      commit(ops, partial);
      queue = [];
      pendingTotals.clear();
      pendingLastRx.clear();
      if (problem !== null) {
        const was = problem;
        problem = null;
        emitter.emit('recovered', {
          message: `recording to ${dbPath} works again after: ${was}${dropped > 0 ? `; ${dropped} rows had been dropped` : '; nothing was lost'}`,
        });
      }
      checkpointIfLarge();
    } catch (err) {
      // The transaction rolled back: the file holds every earlier commit intact, and this
      // batch stays queued for the next attempt.
      const described = describeDbError(err, dbPath);
      retryAt = Date.now() + retryMs;
      if (problem !== described) {
        problem = described;
        emitter.emit('problem', {
          level: 'critical',
          message:
            `recording stopped: ${described}. The live display continues and everything already recorded is intact; ` +
            `new rows are kept in memory and written again every ${Math.round(retryMs / 1000)} s ` +
            `(beyond ${maxBacklogRows} rows the oldest are dropped and counted). Free space or fix the folder's permissions.`,
        });
      }
    }
  }

  const timer = setInterval(() => {
    if (problem !== null && Date.now() < retryAt) return;
    flush();
  }, flushIntervalMs);
  timer.unref();

  function liveRun(runId: number): LiveRun {
    let run = live.get(runId);
    if (!run) {
      run = { seq: 0, rollup: new RunRollup(), lastRxS: null, lastT: -Infinity };
      live.set(runId, run);
    }
    return run;
  }

  const recorder: Recorder = Object.assign(emitter, reader, {
    dbPath,
    startRun(start: RunStart, opts: { resumeWithinS?: number } = {}) {
      const profileJson = JSON.stringify(start.profileJson ?? null);
      if (opts.resumeWithinS !== undefined) {
        const prev = st.resumable.get(start.stationId);
        const endRx = prev?.end_rx_s ?? prev?.last_rx_s ?? null;
        if (
          prev &&
          prev.end_reason === 'interrupted' &&
          prev.profile_json === profileJson &&
          endRx !== null &&
          start.startRxS - endRx <= opts.resumeWithinS
        ) {
          st.reopen.run(process.pid, HOST, prev.id);
          const m = st.maxSeq.get(prev.id);
          const slots = stOpenSlots(prev.id);
          live.set(prev.id, {
            seq: (m?.seq ?? -1) + 1,
            rollup: new RunRollup(slots),
            lastRxS: endRx,
            lastT: m?.t ?? -Infinity,
          });
          return { runId: prev.id, resumed: true, lastRxS: endRx };
        }
      }
      let maxId = lastAllocatedId;
      try {
        maxId = Math.max(maxId, st.maxRunId.get()?.id ?? 0);
      } catch {
        // Unreadable just now (locked): the in-memory counter is enough for this process.
      }
      const runId = maxId + 1;
      lastAllocatedId = runId;
      live.set(runId, { seq: 0, rollup: new RunRollup(), lastRxS: null, lastT: -Infinity });
      enqueue({
        kind: 'run',
        params: [
          runId,
          start.stationId,
          start.stationLabel,
          start.profileName,
          start.chemistry,
          profileJson,
          start.startRxS,
          process.pid,
          HOST,
        ],
      });
      flush();
      return { runId, resumed: false, lastRxS: null };
    },
    addLine(runId: number, line: StoredLine) {
      enqueue({ kind: 'line', runId, line });
      pendingLastRx.set(runId, Math.max(pendingLastRx.get(runId) ?? 0, line.rxS));
    },
    addSent(runId: number, sent: { text: string; rxS: number; t: number }) {
      enqueue({ kind: 'line', runId, line: { rxS: sent.rxS, text: sent.text, kind: 'sent' } });
      enqueue({ kind: 'event', runId, event: { type: 'sent', t: sent.t, text: sent.text } });
    },
    addSample(runId: number, sample: TimedSample) {
      const run = liveRun(runId);
      enqueue({ kind: 'sample', runId, seq: run.seq++, s: sample });
      for (const slot of run.rollup.add(sample)) enqueue({ kind: 'slot', runId, slot });
    },
    addEvent(runId: number, event: EngineEvent) {
      enqueue({ kind: 'event', runId, event });
    },
    updateTotals(runId: number, totals: RunTotals) {
      pendingTotals.set(runId, totals);
    },
    endRun(runId: number, endRxS: number, reason: RunEndReason, totals?: RunTotals) {
      if (totals) pendingTotals.set(runId, totals);
      const run = live.get(runId);
      if (run) for (const slot of run.rollup.partial()) enqueue({ kind: 'slot', runId, slot });
      live.delete(runId);
      enqueue({ kind: 'end', runId, endRxS, reason });
      flush();
    },
    flush,
    health(): RecorderHealth {
      return { ok: problem === null, problem, pending: queue.length, dropped };
    },
    close() {
      if (closed) return;
      clearInterval(timer);
      flush();
      const lost = queue.length;
      closed = true;
      try {
        db.pragma('wal_checkpoint(TRUNCATE)');
      } catch {
        // Checkpointing is an optimisation; the WAL is replayed at the next open anyway.
      }
      db.close();
      if (lost > 0) {
        emitter.emit('problem', {
          level: 'critical',
          message: `closing the recorder with ${lost} rows that could not be written (${problem ?? 'write failed'}); everything recorded before is intact`,
        });
      }
    },
  }) as unknown as Recorder;

  function stOpenSlots(runId: number): RollupSlot[] {
    return st.openSlots.all(runId).map((row) => slotFromRow(row, slotCols));
  }

  return recorder;
}

export type { RecorderEvents };

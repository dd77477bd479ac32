/**
 * The recording database: one SQLite file holding runs, samples, events and every raw
 * line. Writes are queued and committed in batches; reads go through the RunReader.
 */
import { EventEmitter } from 'node:events';
import { rmSync, statSync } from 'node:fs';
import type { EngineEvent, TimedSample } from '@shared/engine/types';
import { closeInterruptedRuns, HOST } from './crash-recovery';
import { openDatabase } from './database';
import { describeDbError, RecorderOpenError } from './errors';
import { defaultDbPath } from './paths';
import { createRunReader } from './reader';
import { RunRollup, slotFromRow, slotParams, type RollupSlot } from './rollup';
import { SERIES_COLUMNS } from './schema';
import { findSpills, readSpill, writeSpill } from './spill';
import type Database from 'better-sqlite3';
import type {
  Recorder,
  RecorderCloseResult,
  RecorderHealth,
  RunEndReason,
  RunInfo,
  RunStart,
  RunTotals,
  SpillImport,
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

/** Run-info keys and their columns (schema migration 3). */
const INFO_COLUMNS: ReadonlyArray<[keyof RunInfo, string]> = [
  ['boardId', 'board_id'],
  ['operator', 'operator'],
  ['firmware', 'firmware'],
  ['batchId', 'batch_id'],
  ['verdictJson', 'verdict_json'],
];

type Op =
  | { kind: 'run'; params: unknown[] }
  | { kind: 'line'; runId: number; line: StoredLine }
  | { kind: 'sample'; runId: number; seq: number; s: TimedSample }
  | { kind: 'event'; runId: number; event: EngineEvent | { type: 'sent'; t: number; text: string } }
  | { kind: 'slot'; runId: number; slot: RollupSlot }
  | { kind: 'end'; runId: number; endRxS: number; reason: RunEndReason }
  | { kind: 'info'; runId: number; info: RunInfo };

interface LiveRun {
  seq: number;
  rollup: RunRollup;
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
    insertRunAuto: db.prepare(
      `INSERT INTO runs (station_id, station_label, profile_name, chemistry, profile_json, start_rx_s, writer_pid, writer_host)
       VALUES (?, ?, ?, ?, ?, ?, ?, ?)`,
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
    info: Object.fromEntries(
      INFO_COLUMNS.map(([key, column]) => [key, db.prepare(`UPDATE runs SET ${column} = ? WHERE id = ?`)]),
    ) as Record<keyof RunInfo, Database.Statement>,
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
    stationOf: db.prepare<[number], { station_id: string }>('SELECT station_id FROM runs WHERE id = ?'),
    reopen: db.prepare(
      'UPDATE runs SET end_rx_s = NULL, end_reason = NULL, writer_pid = ?, writer_host = ? WHERE id = ?',
    ),
    maxSeq: db.prepare<[number], { seq: number | null }>(
      'SELECT max(seq) AS seq FROM samples WHERE run_id = ?',
    ),
    openSlots: db.prepare<[number], Record<string, number | null>>(
      'SELECT * FROM rollup WHERE run_id = ? AND idx = (SELECT max(idx) FROM rollup r2 WHERE r2.run_id = rollup.run_id AND r2.level_s = rollup.level_s)',
    ),
  };

  // Rows a previous close could not write (disk full) come in before anything else.
  const importedSpills: SpillImport[] = [];
  for (const path of findSpills(dbPath)) {
    try {
      const spill = readSpill<Op, RunTotals>(path);
      db.transaction(() => {
        for (const op of spill.ops) writeOp(op);
        for (const [runId, t] of spill.totals)
          st.totals.run(t.durationS, t.ah, t.wh, t.lines, t.rejected, summaryJson(t), runId);
        for (const [runId, rx] of spill.lastRx) st.lastRx.run(rx, runId);
      })();
      rmSync(path, { force: true });
      importedSpills.push({ path, rows: spill.ops.length });
    } catch (err) {
      importedSpills.push({ path, rows: 0, error: describeDbError(err, dbPath) });
    }
  }

  try {
    closeInterruptedRuns(db);
  } catch (err) {
    db.close();
    throw new RecorderOpenError(
      `${describeDbError(err, dbPath)}; nothing was recorded — fix that or give another --db FILE`,
    );
  }

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
        if (toDrop > 0 && o.kind !== 'run' && o.kind !== 'end' && o.kind !== 'info') {
          toDrop--;
          dropped++;
        } else keep.push(o);
      }
      queue = keep;
    }
    if (queue.length >= batchRows && problem === null) flush(false);
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
        let hasExtra = false;
        for (const _key in s.extra) {
          hasExtra = true;
          break;
        }
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
          hasExtra ? JSON.stringify(s.extra) : null,
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
      case 'info':
        for (const [key] of INFO_COLUMNS) {
          const value = op.info[key];
          if (value !== undefined) st.info[key].run(value, op.runId);
        }
        return;
    }
  }

  const commit = db.transaction((ops: Op[], partialSlots: Array<[number, RollupSlot]>) => {
    for (const op of ops) writeOp(op);
    for (const [runId, slot] of partialSlots) st.slot.run(...slotParams(runId, slot));
    for (const [runId, t] of pendingTotals) {
      st.totals.run(t.durationS, t.ah, t.wh, t.lines, t.rejected, summaryJson(t), runId);
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

  let syncMode: 'FULL' | 'NORMAL' = 'FULL';
  let unsynced = false;
  /**
   * Group commit: a batch committed because it is large (max-speed replay) skips its fsync;
   * the next timed or explicit commit fsyncs the WAL, which makes every earlier frame in it
   * durable too. So a power cut still loses at most one flush interval, as in live recording.
   */
  function setSync(mode: 'FULL' | 'NORMAL'): void {
    if (mode === syncMode) return;
    db.pragma(`synchronous = ${mode}`);
    syncMode = mode;
  }

  function flush(durable = true): void {
    if (closed) return;
    const hasWork = queue.length > 0 || pendingTotals.size > 0 || pendingLastRx.size > 0;
    if (!hasWork) {
      if (durable && unsynced) {
        // Nothing new to commit after a burst: a passive checkpoint fsyncs the WAL instead.
        try {
          db.pragma('wal_checkpoint(PASSIVE)');
          unsynced = false;
        } catch {
          // Retried at the next flush.
        }
      }
      return;
    }
    const ops = queue;
    const partial: Array<[number, RollupSlot]> = [];
    for (const [runId, run] of live) for (const slot of run.rollup.partial()) partial.push([runId, slot]);
    try {
      setSync(durable ? 'FULL' : 'NORMAL');
      commit(ops, partial);
      unsynced = !durable;
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
      run = { seq: 0, rollup: new RunRollup() };
      live.set(runId, run);
    }
    return run;
  }

  const recorder: Recorder = Object.assign(emitter, reader, {
    dbPath,
    resumableRun(stationId: string, profileJson: unknown, atRxS: number, withinS: number) {
      const prev = st.resumable.get(stationId);
      const endRx = prev?.end_rx_s ?? prev?.last_rx_s ?? null;
      if (
        !prev ||
        prev.end_reason !== 'interrupted' ||
        prev.profile_json !== JSON.stringify(profileJson ?? null) ||
        endRx === null ||
        atRxS - endRx > withinS
      )
        return null;
      return { runId: prev.id, lastRxS: endRx };
    },
    resumeRun(runId: number) {
      const prev = st.resumable.get(st.stationOf.get(runId)?.station_id ?? '');
      if (!prev || prev.id !== runId || prev.end_reason !== 'interrupted')
        throw new Error(`run ${runId} is not the latest interrupted run of its station`);
      st.reopen.run(process.pid, HOST, runId);
      const m = st.maxSeq.get(runId);
      live.set(runId, { seq: (m?.seq ?? -1) + 1, rollup: new RunRollup(stOpenSlots(runId)) });
      return { runId, resumed: true, lastRxS: prev.end_rx_s ?? prev.last_rx_s ?? null };
    },
    startRun(start: RunStart, opts: { resumeWithinS?: number } = {}) {
      const profileJson = JSON.stringify(start.profileJson ?? null);
      if (opts.resumeWithinS !== undefined) {
        const found = recorder.resumableRun(
          start.stationId,
          start.profileJson,
          start.startRxS,
          opts.resumeWithinS,
        );
        if (found) return recorder.resumeRun(found.runId);
      }
      const columns = [
        start.stationId,
        start.stationLabel,
        start.profileName,
        start.chemistry,
        profileJson,
        start.startRxS,
        process.pid,
        HOST,
      ];
      let runId: number;
      try {
        // The file picks the id, so two processes recording into one file never collide.
        runId = Number(st.insertRunAuto.run(...columns).lastInsertRowid);
      } catch {
        // Cannot write just now (disk full, locked): take the next id in memory and queue the
        // row with the rest, so the live station starts at once and its run is kept for retry.
        let maxId = lastAllocatedId;
        try {
          maxId = Math.max(maxId, st.maxRunId.get()?.id ?? 0);
        } catch {
          // Unreadable too: the in-memory counter is all there is.
        }
        runId = maxId + 1;
        enqueue({ kind: 'run', params: [runId, ...columns] });
      }
      lastAllocatedId = Math.max(lastAllocatedId, runId);
      live.set(runId, { seq: 0, rollup: new RunRollup() });
      return { runId, resumed: false, lastRxS: null };
    },
    addLine(runId: number, line: StoredLine) {
      enqueue({ kind: 'line', runId, line });
      const last = pendingLastRx.get(runId);
      if (last === undefined || line.rxS > last) pendingLastRx.set(runId, line.rxS);
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
    setRunInfo(runId: number, info: RunInfo) {
      // Written at once when the run's row is in the file (a Runs list asked right after shows
      // it); queued with the rest when it is not there yet or the file cannot be written now.
      // An older queued info of the same run must not land after this one.
      if (problem === null && !queue.some((o) => o.kind === 'info' && o.runId === runId)) {
        try {
          let written = true;
          db.transaction(() => {
            for (const [key] of INFO_COLUMNS) {
              const value = info[key];
              if (value !== undefined && st.info[key].run(value, runId).changes === 0) written = false;
            }
          })();
          if (written) return;
        } catch {
          // Queued below and retried with the next flush.
        }
      }
      enqueue({ kind: 'info', runId, info });
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
    importedSpills,
    close(): RecorderCloseResult {
      if (closed) return { unwritten: 0, spill: null };
      clearInterval(timer);
      flush();
      const ops = queue;
      const totals = [...pendingTotals];
      const lastRx = [...pendingLastRx];
      closed = true;
      try {
        db.pragma('wal_checkpoint(TRUNCATE)');
      } catch {
        // Checkpointing is an optimisation; the WAL is replayed at the next open anyway.
      }
      db.close();
      if (ops.length === 0) return { unwritten: 0, spill: null };
      // Never dropped silently: what could not be written goes to a spill file the next open imports.
      const reason = problem ?? 'write failed';
      const spill = writeSpill(dbPath, { ops, totals, lastRx }, reason);
      const result: RecorderCloseResult = {
        unwritten: ops.length,
        reason,
        spill: spill.path,
        ...(spill.path === null ? { spillError: spill.error } : {}),
      };
      emitter.emit('problem', {
        level: 'critical',
        message:
          spill.path !== null
            ? `closing the recorder with ${ops.length} rows that could not be written (${reason}); they were saved to ${spill.path} and the next open of ${dbPath} imports them`
            : `closing the recorder with ${ops.length} rows that could not be written (${reason}) nor saved to a spill file (${spill.error}); they are lost`,
      });
      return result;
    },
  }) as unknown as Recorder;

  function stOpenSlots(runId: number): RollupSlot[] {
    return st.openSlots.all(runId).map((row) => slotFromRow(row, slotCols));
  }

  return recorder;
}

/**
 * The run's summary column: time per phase and the engine's internal-resistance estimate
 * (read back as RunRow.internalResistanceOhm for the Runs view's pack history).
 */
function summaryJson(t: RunTotals): string | null {
  const ir = t.internalResistanceOhm;
  if (!t.phaseS && (ir === undefined || ir === null)) return null;
  return JSON.stringify({ phaseS: t.phaseS ?? {}, internalResistanceOhm: ir ?? null });
}

/** The read side of a recording database: what the Runs view, replay and diagnose ask. */
import type Database from 'better-sqlite3';
import { Readable, type Writable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { stringify } from 'csv-stringify';
import type { EngineEvent, TimedSample } from '@shared/engine/types';
import type { SourceKind } from '@shared/telemetry/types';
import type { FeedLine } from '../station/types';
import { inertCell } from './csv-safe';
import { ROLLUP_LEVELS_S, SERIES_COLUMNS } from './schema';
import type { OverviewBucket, RunEndReason, RunReader, RunRow, SeriesField } from './types';

interface RunDbRow {
  id: number;
  station_id: string;
  station_label: string;
  profile_name: string;
  chemistry: string;
  start_rx_s: number;
  end_rx_s: number | null;
  end_reason: string | null;
  duration_s: number;
  ah: number;
  wh: number;
  lines: number;
  rejected: number;
  board_id?: string | null;
  operator?: string | null;
  firmware?: string | null;
  batch_id?: string | null;
  verdict_json?: string | null;
  summary_json?: string | null;
}

interface SampleDbRow {
  t: number;
  rx_s: number;
  device_s: number | null;
  vbat_v: number | null;
  ibat_a: number | null;
  temp_c: number | null;
  ntc_raw: number | null;
  vin_v: number | null;
  iin_a: number | null;
  chg: number | null;
  flt: number | null;
  src: string | null;
  extra_json: string | null;
}

interface LineDbRow {
  rx_s: number;
  kind: FeedLine['kind'];
  text: string;
  reason: string | null;
  detail: string | null;
  too_long: number;
}

const ENGINE_EVENT_TYPES = "('phase','alarm','alarm-clear','gap')";

/**
 * An overview uses the rollup level whose slots are at most this fraction of a bucket:
 * each slot is counted in the bucket where its first sample lies, so bucket edges are
 * exact to within an eighth of a bucket; finer windows read the samples themselves.
 */
const ROLLUP_SLOT_PER_BUCKET = 0.125;

function toRunRow(r: RunDbRow): RunRow {
  return {
    id: r.id,
    stationId: r.station_id,
    stationLabel: r.station_label,
    profileName: r.profile_name,
    chemistry: r.chemistry,
    startRxS: r.start_rx_s,
    endRxS: r.end_rx_s,
    endReason: r.end_reason as RunEndReason | null,
    durationS: r.duration_s,
    ah: r.ah,
    wh: r.wh,
    lines: r.lines,
    rejected: r.rejected,
    boardId: r.board_id ?? null,
    operator: r.operator ?? null,
    firmware: r.firmware ?? null,
    batchId: r.batch_id ?? null,
    verdict: verdictOf(r.verdict_json),
    internalResistanceOhm: internalResistanceOf(r.summary_json),
  };
}

/**
 * The internal resistance stored in a run's summary; null when none was stored, the summary
 * predates it (then it held only time per phase) or it is unreadable.
 */
export function internalResistanceOf(json: string | null | undefined): number | null {
  if (!json) return null;
  try {
    const v = (JSON.parse(json) as { internalResistanceOhm?: unknown }).internalResistanceOhm;
    return typeof v === 'number' && Number.isFinite(v) && v > 0 ? v : null;
  } catch {
    return null;
  }
}

/** The verdict word of a stored verdict JSON; null when none was stored or it is unreadable. */
function verdictOf(json: string | null | undefined): RunRow['verdict'] {
  if (!json) return null;
  try {
    const v = (JSON.parse(json) as { verdict?: unknown }).verdict;
    return v === 'pass' || v === 'fail' || v === 'incomplete' ? v : null;
  } catch {
    return null;
  }
}

export function toTimedSample(r: SampleDbRow): TimedSample {
  const s: TimedSample = {
    t: r.t,
    rxS: r.rx_s,
    extra: r.extra_json ? (JSON.parse(r.extra_json) as TimedSample['extra']) : {},
  };
  if (r.device_s !== null) s.deviceS = r.device_s;
  if (r.vbat_v !== null) s.vbatV = r.vbat_v;
  if (r.ibat_a !== null) s.ibatA = r.ibat_a;
  if (r.temp_c !== null) s.tempC = r.temp_c;
  if (r.ntc_raw !== null) s.ntcRaw = r.ntc_raw;
  if (r.vin_v !== null) s.vinV = r.vin_v;
  if (r.iin_a !== null) s.iinA = r.iin_a;
  if (r.chg !== null) s.chg = r.chg === 1;
  if (r.flt !== null) s.flt = r.flt === 1;
  if (r.src !== null) s.src = r.src as SourceKind;
  return s;
}

function toFeedLine(r: LineDbRow): FeedLine {
  const line: FeedLine = { rxS: r.rx_s, text: r.text, kind: r.kind };
  if (r.reason !== null) line.reason = r.reason as FeedLine['reason'];
  if (r.detail !== null) line.detail = r.detail;
  return line;
}

const columnOf: Record<SeriesField, string> = Object.fromEntries(
  SERIES_COLUMNS.map(([f, c]) => [f, c]),
) as Record<SeriesField, string>;

/** CSV columns with their units in the header (base units of docs/telemetry.md). */
const CSV_COLUMNS: Array<{ header: string; pick: (s: TimedSample) => unknown }> = [
  { header: 'time (ISO 8601)', pick: (s) => isoWithZone(s.rxS) },
  { header: 't (s since start)', pick: (s) => s.t },
  { header: 'rx time (s since 1970)', pick: (s) => s.rxS },
  { header: 'device time (s)', pick: (s) => s.deviceS },
  { header: 'vbat (V)', pick: (s) => s.vbatV },
  { header: 'ibat (A)', pick: (s) => s.ibatA },
  { header: 'temp (°C)', pick: (s) => s.tempC },
  { header: 'ntc (raw)', pick: (s) => s.ntcRaw },
  { header: 'vin (V)', pick: (s) => s.vinV },
  { header: 'iin (A)', pick: (s) => s.iinA },
  { header: 'chg (0/1)', pick: (s) => (s.chg === undefined ? undefined : s.chg ? 1 : 0) },
  { header: 'flt (0/1)', pick: (s) => (s.flt === undefined ? undefined : s.flt ? 1 : 0) },
  { header: 'src', pick: (s) => s.src },
];

/**
 * Receive time as ISO 8601 with this machine's UTC offset (`2026-12-02T14:05:09.250+01:00`):
 * a spreadsheet reads it as a time, and a person reads the wall clock of the bench.
 */
export function isoWithZone(unixS: number): string {
  const d = new Date(unixS * 1000);
  const offsetMin = -d.getTimezoneOffset();
  const local = new Date(d.getTime() + offsetMin * 60_000).toISOString().slice(0, -1);
  const sign = offsetMin < 0 ? '-' : '+';
  const abs = Math.abs(offsetMin);
  return `${local}${sign}${String(Math.floor(abs / 60)).padStart(2, '0')}:${String(abs % 60).padStart(2, '0')}`;
}

export function createRunReader(db: Database.Database): RunReader {
  const q = {
    list: db.prepare<[], RunDbRow>('SELECT * FROM runs ORDER BY id DESC'),
    get: db.prepare<[number], RunDbRow>('SELECT * FROM runs WHERE id = ?'),
    latest: db.prepare<[], { id: number }>('SELECT id FROM runs ORDER BY id DESC LIMIT 1'),
    profile: db.prepare<[number], { profile_json: string }>('SELECT profile_json FROM runs WHERE id = ?'),
    samples: db.prepare<[number, number, number, number], SampleDbRow>(
      'SELECT * FROM samples WHERE run_id = ? AND t >= ? AND t < ? ORDER BY t, seq LIMIT ?',
    ),
    // Keyset pages: no statement stays open across an await (the writer shares this connection).
    samplePage: db.prepare<[number, number, number, number], SampleDbRow & { seq: number }>(
      'SELECT * FROM samples WHERE run_id = ? AND (t > ? OR (t = ? AND seq > ?)) ORDER BY t, seq LIMIT 2000',
    ),
    extraKeys: db.prepare<[number], { key: string }>(
      'SELECT DISTINCT j.key AS key FROM samples, json_each(samples.extra_json) AS j WHERE samples.run_id = ? AND samples.extra_json IS NOT NULL ORDER BY j.key',
    ),
    events: db.prepare<[number], { json: string }>(
      `SELECT json FROM events WHERE run_id = ? AND type IN ${ENGINE_EVENT_TYPES} ORDER BY id`,
    ),
    rawLines: db.prepare<[number, number, number], LineDbRow>(
      'SELECT rx_s, kind, text, reason, detail, too_long FROM lines WHERE run_id = ? AND rx_s > ? ORDER BY id LIMIT ?',
    ),
    receivedPage: db.prepare<[number, number], LineDbRow & { id: number }>(
      "SELECT id, rx_s, kind, text, reason, detail, too_long FROM lines WHERE run_id = ? AND id > ? AND kind <> 'sent' ORDER BY id LIMIT 2000",
    ),
  };
  /** Every sample row of a run, page by page (keyset paging on (t, seq)). */
  function* samplePages(runId: number): Generator<Array<SampleDbRow & { seq: number }>> {
    let after = { t: -Infinity, seq: -1 };
    for (;;) {
      const page = q.samplePage.all(runId, after.t, after.t, after.seq);
      if (page.length === 0) return;
      yield page;
      const last = page[page.length - 1];
      after = { t: last.t, seq: last.seq };
    }
  }

  const deleteRun = db.transaction((runId: number) => {
    for (const table of ['samples', 'events', 'lines', 'rollup'])
      db.prepare(`DELETE FROM ${table} WHERE run_id = ?`).run(runId);
    db.prepare('DELETE FROM runs WHERE id = ?').run(runId);
  });

  function overview(
    runId: number,
    fields: SeriesField[],
    fromT: number,
    toT: number,
    buckets: number,
  ): OverviewBucket[] {
    const n = Math.max(1, Math.floor(buckets));
    if (!(toT > fromT) || fields.length === 0) return [];
    const widthS = (toT - fromT) / n;
    const level = [...ROLLUP_LEVELS_S].reverse().find((l) => l <= widthS * ROLLUP_SLOT_PER_BUCKET);
    const cols = fields.map((f) => columnOf[f]);
    let sql: string;
    let params: number[];
    if (level !== undefined) {
      const agg = cols.map(
        (c, i) =>
          `min(${c}_min) AS mn${i}, max(${c}_max) AS mx${i}, total(${c}_sum) AS sm${i}, total(${c}_n) AS n${i}`,
      );
      sql = `SELECT CAST((t_min - ?) / ? AS INTEGER) AS b, total(n) AS count, ${agg.join(', ')}
        FROM rollup WHERE run_id = ? AND level_s = ? AND idx >= ? AND idx <= ? AND t_min >= ? AND t_min < ?
        GROUP BY b ORDER BY b`;
      params = [fromT, widthS, runId, level, Math.floor(fromT / level), Math.floor(toT / level), fromT, toT];
    } else {
      const agg = cols.map(
        (c, i) => `min(${c}) AS mn${i}, max(${c}) AS mx${i}, total(${c}) AS sm${i}, count(${c}) AS n${i}`,
      );
      sql = `SELECT CAST((t - ?) / ? AS INTEGER) AS b, count(*) AS count, ${agg.join(', ')}
        FROM samples WHERE run_id = ? AND t >= ? AND t < ? GROUP BY b ORDER BY b`;
      params = [fromT, widthS, runId, fromT, toT];
    }
    const rows = db.prepare(sql).all(...params) as Array<Record<string, number | null>>;
    const out: OverviewBucket[] = [];
    for (let b = 0; b < n; b++)
      out.push({ t0S: fromT + b * widthS, t1S: fromT + (b + 1) * widthS, count: 0, values: {} });
    for (const row of rows) {
      const b = Math.min(n - 1, Math.max(0, row.b as number));
      const bucket = out[b];
      bucket.count += row.count as number;
      fields.forEach((f, i) => {
        const count = row[`n${i}`] as number;
        if (count > 0)
          bucket.values[f] = {
            min: row[`mn${i}`] as number,
            max: row[`mx${i}`] as number,
            mean: (row[`sm${i}`] as number) / count,
          };
      });
    }
    return out;
  }

  return {
    listRuns: () => q.list.all().map(toRunRow),
    getRun(runId) {
      const r = q.get.get(runId);
      return r ? toRunRow(r) : null;
    },
    resolveRunId(run) {
      if (run === 'latest') return q.latest.get()?.id ?? null;
      return q.get.get(run) ? run : null;
    },
    deleteRun: (runId) => deleteRun(runId),
    profileOf(runId) {
      const r = q.profile.get(runId);
      return r ? (JSON.parse(r.profile_json) as unknown) : null;
    },
    overview,
    samples: (runId, fromT, toT, limit = 100_000) =>
      q.samples.all(runId, fromT, toT, limit).map(toTimedSample),
    events: (runId) => q.events.all(runId).map((r) => JSON.parse(r.json) as EngineEvent),
    rawLines: (runId, afterRxS = -Infinity, limit = 1000) =>
      q.rawLines.all(runId, afterRxS, limit).map(toFeedLine),
    *lineIterator(runId) {
      // A cut line is handed back flagged, so a replay rejects it exactly as the live framer did.
      let afterId = -1;
      for (;;) {
        const page = q.receivedPage.all(runId, afterId);
        for (const r of page)
          yield r.too_long ? { text: r.text, rxS: r.rx_s, tooLong: true } : { text: r.text, rxS: r.rx_s };
        if (page.length === 0) return;
        afterId = page[page.length - 1].id;
      }
    },
    allSamples(runId) {
      const out: TimedSample[] = [];
      for (const page of samplePages(runId)) for (const row of page) out.push(toTimedSample(row));
      return out;
    },
    async exportCsv(runId, out: Writable) {
      const extraKeys = q.extraKeys.all(runId).map((r) => r.key);
      // Extra channel names and values come from the device: no cell may run as a formula.
      const header = [...CSV_COLUMNS.map((c) => c.header), ...extraKeys.map((k) => String(inertCell(k)))];
      function* records() {
        for (const page of samplePages(runId))
          for (const row of page) {
            const s = toTimedSample(row);
            yield [
              ...CSV_COLUMNS.map((c) => inertCell(c.pick(s))),
              ...extraKeys.map((k) => inertCell(s.extra[k])),
            ];
          }
      }
      // pipeline carries backpressure and, when `out` errors or closes early (a full disk, an
      // aborted download), destroys the other streams and rejects instead of waiting forever.
      await pipeline(Readable.from(records()), stringify({ header: true, columns: header }), out);
    },
  };
}

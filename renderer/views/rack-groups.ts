/**
 * The Rack's arrangement, apart from the DOM: stations grouped by bench (a remote station's
 * id is `<bench>/<station>`; this machine's stations are one group), a bench whose every
 * station lost its link shown as one stale group, trouble first, and the compact table's
 * rows with their sort and filter.
 */
import { formatNumber, phaseWords } from '../format';
import { troubleRank, type StationModel } from '../store';

/** The group of this machine's own stations. */
export const LOCAL_BENCH = 'this bench';

export function benchOf(model: StationModel): string {
  const slash = model.view.id.indexOf('/');
  return slash > 0 ? model.view.id.slice(0, slash) : LOCAL_BENCH;
}

export interface RackGroup {
  bench: string;
  models: StationModel[];
  /** Every station of a remote bench lost its link (broker or bench away): one stale group. */
  stale: { detail: string; sinceRxS: number | null } | null;
  rank: number;
}

/** Rank of a stale group: below a critical alarm, above a station with a warning. */
const STALE_RANK = 30;

/** `hold`: keep the order of `models` (the tiles stay where the pointer or the focus is). */
export function groupByBench(models: StationModel[], hold = false): RackGroup[] {
  const byBench = new Map<string, StationModel[]>();
  for (const m of models) {
    const bench = benchOf(m);
    let list = byBench.get(bench);
    if (!list) byBench.set(bench, (list = []));
    list.push(m);
  }
  const groups: RackGroup[] = [];
  for (const [bench, list] of byBench) {
    if (!hold) list.sort((a, b) => troubleRank(b) - troubleRank(a) || a.view.id.localeCompare(b.view.id));
    const lost = list.every((m) => m.view.source.state === 'lost');
    const first = list[0]!.view.source;
    const stale =
      bench !== LOCAL_BENCH && lost
        ? {
            detail: first.detail,
            sinceRxS: Math.min(
              ...list.map((m) => (m.view.source.state === 'lost' ? m.view.source.sinceRxS : Infinity)),
            ),
          }
        : null;
    const rank = Math.max(stale ? STALE_RANK : 0, ...list.map((m) => troubleRank(m)));
    groups.push({ bench, models: list, stale, rank });
  }
  if (hold) return groups;
  // Trouble first; this machine's stations before other benches of the same rank.
  return groups.sort(
    (a, b) =>
      b.rank - a.rank ||
      Number(b.bench === LOCAL_BENCH) - Number(a.bench === LOCAL_BENCH) ||
      a.bench.localeCompare(b.bench),
  );
}

export const TABLE_COLUMNS = [
  { key: 'bench', title: 'Bench', numeric: false },
  { key: 'station', title: 'Station', numeric: false },
  { key: 'board', title: 'Board', numeric: false },
  { key: 'phase', title: 'Phase', numeric: false },
  { key: 'vbatV', title: 'V', numeric: true },
  { key: 'ibatA', title: 'A', numeric: true },
  { key: 'tempC', title: '°C', numeric: true },
  { key: 'ah', title: 'Ah', numeric: true },
  { key: 'alarms', title: 'Alarms', numeric: false },
] as const;
export type ColumnKey = (typeof TABLE_COLUMNS)[number]['key'] | 'trouble';

export interface RackRow {
  model: StationModel;
  rank: number;
  stale: boolean;
  values: Record<Exclude<ColumnKey, 'trouble'>, string>;
  numbers: Partial<Record<ColumnKey, number>>;
}

/** The board id a station reports, when the station snapshot carries one. */
function boardOf(model: StationModel): string {
  const board = (model.view as { boardId?: unknown }).boardId;
  return typeof board === 'string' && board !== '' ? board : '–';
}

export function tableRows(groups: RackGroup[]): RackRow[] {
  const rows: RackRow[] = [];
  for (const g of groups) {
    for (const model of g.models) {
      const { view } = model;
      const last = view.state.last;
      const alarms = view.state.activeAlarms;
      const station = g.bench === LOCAL_BENCH ? view.id : view.id.slice(g.bench.length + 1);
      // A remote station's label starts with its bench, already in its own column.
      const label =
        g.bench !== LOCAL_BENCH && view.label.startsWith(`${g.bench}/`)
          ? view.label.slice(g.bench.length + 1)
          : view.label;
      rows.push({
        model,
        rank: Math.max(troubleRank(model), g.stale ? STALE_RANK : 0),
        stale: g.stale !== null,
        values: {
          bench: g.bench,
          station: label && label !== station && view.label !== view.id ? `${station} · ${label}` : station,
          board: boardOf(model),
          phase: phaseWords(view.state.phase, view.profile.chemistry),
          vbatV: formatNumber(last?.vbatV, 2),
          ibatA: formatNumber(last?.ibatA, 2),
          tempC: formatNumber(last?.tempC, 1),
          ah: formatNumber(view.state.metrics.ah, 2),
          alarms: alarms
            .map((a) => `${a.level === 'critical' ? '‼ ' : ''}${a.code}${model.isAcked(a) ? ' (ack)' : ''}`)
            .join(', '),
        },
        numbers: {
          vbatV: last?.vbatV,
          ibatA: last?.ibatA,
          tempC: last?.tempC,
          ah: view.state.metrics.ah,
          alarms: alarms.length,
        },
      });
    }
  }
  return rows;
}

/** Rows whose text holds every word of the filter (any column, case-insensitive). */
export function filterRows(rows: RackRow[], filter: string): RackRow[] {
  const words = filter.toLowerCase().split(/\s+/).filter(Boolean);
  if (words.length === 0) return rows;
  return rows.filter((row) => {
    const text = Object.values(row.values).join(' ').toLowerCase() + ` ${row.model.view.id.toLowerCase()}`;
    return words.every((w) => text.includes(w));
  });
}

export function sortRows(rows: RackRow[], key: ColumnKey, descending: boolean): RackRow[] {
  const sign = descending ? -1 : 1;
  const numeric =
    key === 'trouble' || TABLE_COLUMNS.some((c) => c.key === key && c.numeric) || key === 'alarms';
  return [...rows].sort((a, b) => {
    let order: number;
    if (key === 'trouble') order = a.rank - b.rank;
    else if (numeric) {
      const x = a.numbers[key];
      const y = b.numbers[key];
      // Missing values last, whichever way.
      if (x === undefined || !Number.isFinite(x)) return y === undefined || !Number.isFinite(y) ? 0 : 1;
      if (y === undefined || !Number.isFinite(y)) return -1;
      order = x - y;
    } else order = a.values[key].localeCompare(b.values[key], undefined, { numeric: true });
    return sign * order || b.rank - a.rank || a.model.view.id.localeCompare(b.model.view.id);
  });
}

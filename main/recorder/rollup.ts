/** Per-slot min/max/sum/count of the canonical series, kept while a run is recorded. */
import type { TimedSample } from '@shared/engine/types';
import { ROLLUP_LEVELS_S } from './schema';

const FIELDS = ['vbatV', 'ibatA', 'tempC', 'vinV', 'iinA'] as const;

export interface RollupSlot {
  levelS: number;
  idx: number;
  n: number;
  tMin: number;
  tMax: number;
  /** Per field: [min, max, sum, count]; count 0 = no value in this slot. */
  stats: Array<[number, number, number, number]>;
}

export function emptySlot(levelS: number, idx: number): RollupSlot {
  return {
    levelS,
    idx,
    n: 0,
    tMin: Infinity,
    tMax: -Infinity,
    stats: FIELDS.map(() => [Infinity, -Infinity, 0, 0]),
  };
}

function addValue(st: [number, number, number, number], v: number | undefined): void {
  if (v === undefined || !Number.isFinite(v)) return;
  if (v < st[0]) st[0] = v;
  if (v > st[1]) st[1] = v;
  st[2] += v;
  st[3]++;
}

/** Field by field, in FIELDS order (written out: this runs for every sample at every level). */
function addTo(slot: RollupSlot, s: TimedSample): void {
  slot.n++;
  if (s.t < slot.tMin) slot.tMin = s.t;
  if (s.t > slot.tMax) slot.tMax = s.t;
  const st = slot.stats;
  addValue(st[0], s.vbatV);
  addValue(st[1], s.ibatA);
  addValue(st[2], s.tempC);
  addValue(st[3], s.vinV);
  addValue(st[4], s.iinA);
}

/** One run's open slots, one per level. `add` returns the slots it completed. */
export class RunRollup {
  readonly open: RollupSlot[];

  constructor(resumeFrom: RollupSlot[] = []) {
    this.open = ROLLUP_LEVELS_S.map(
      (l) => resumeFrom.find((s) => s.levelS === l) ?? emptySlot(l, Number.NaN),
    );
  }

  add(sample: TimedSample): RollupSlot[] {
    const done: RollupSlot[] = [];
    for (let i = 0; i < this.open.length; i++) {
      let slot = this.open[i];
      const idx = Math.floor(sample.t / slot.levelS);
      if (idx !== slot.idx) {
        if (slot.n > 0) done.push(slot);
        slot = emptySlot(slot.levelS, idx);
        this.open[i] = slot;
      }
      addTo(slot, sample);
    }
    return done;
  }

  /** Copies of the slots still filling, written at each flush so readers see them. */
  partial(): RollupSlot[] {
    return this.open
      .filter((s) => s.n > 0)
      .map((s) => ({ ...s, stats: s.stats.map((x) => [...x] as [number, number, number, number]) }));
  }
}

/** Row values in the column order of the `rollup` table. */
export function slotParams(runId: number, slot: RollupSlot): Array<number | null> {
  const out: Array<number | null> = [runId, slot.levelS, slot.idx, slot.n, slot.tMin, slot.tMax];
  for (const [mn, mx, sum, n] of slot.stats) out.push(n > 0 ? mn : null, n > 0 ? mx : null, sum, n);
  return out;
}

/** Rebuild a slot from its stored row (resuming a run after a restart). */
export function slotFromRow(row: Record<string, number | null>, columns: readonly string[]): RollupSlot {
  return {
    levelS: row.level_s as number,
    idx: row.idx as number,
    n: row.n as number,
    tMin: row.t_min as number,
    tMax: row.t_max as number,
    stats: columns.map((c) => {
      const n = (row[`${c}_n`] as number) ?? 0;
      return [
        n > 0 ? (row[`${c}_min`] as number) : Infinity,
        n > 0 ? (row[`${c}_max`] as number) : -Infinity,
        (row[`${c}_sum`] as number) ?? 0,
        n,
      ];
    }),
  };
}

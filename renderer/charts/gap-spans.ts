/**
 * The stretches without telemetry of a run, from its gap events. A live gap is announced when it
 * starts (`endT` null) and again when it ends, both with the same start time: the later word wins.
 */
import type { EngineEvent } from '@shared/engine/types';
import type { GapSpan } from './phase-bands-plugin';

export function gapSpans(events: readonly EngineEvent[]): GapSpan[] {
  const byStart = new Map<number, GapSpan>();
  for (const e of events) {
    if (e.type !== 'gap') continue;
    const endT = e.endT ?? (e.durationS !== undefined ? e.t + e.durationS : null);
    const known = byStart.get(e.t);
    if (known && known.t1 !== null && endT === null) continue;
    byStart.set(e.t, { t0: e.t, t1: endT });
  }
  return [...byStart.values()].sort((a, b) => a.t0 - b.t0);
}

/** Phase intervals on the run's time axis, from the engine's phase events (never decided here). */
import type { EngineEvent, Phase } from '@shared/engine/types';

export interface PhaseSpan {
  phase: Phase;
  t0: number;
  /** End of the span; the ongoing last span ends at `endT` (the latest known time). */
  t1: number;
}

export function phaseSpans(events: readonly EngineEvent[], endT: number): PhaseSpan[] {
  const spans: PhaseSpan[] = [];
  for (const e of events) {
    if (e.type !== 'phase') continue;
    const last = spans[spans.length - 1];
    if (last) {
      last.t1 = e.t;
      if (last.phase === e.phase) continue;
    }
    spans.push({ phase: e.phase, t0: e.t, t1: Math.max(e.t, endT) });
  }
  const last = spans[spans.length - 1];
  if (last) last.t1 = Math.max(last.t0, endT);
  return spans.filter((s) => s.t1 > s.t0 || s === last);
}

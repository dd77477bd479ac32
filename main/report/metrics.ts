/** Figures the Run report prints that the run summary does not carry. */
import type { ResolvedProfile } from '@shared/chemistry/types';
import { estimateInternalResistance } from '@shared/engine/diagnosis';
import type { EngineEvent, Phase, RunSummary, TimedSample } from '@shared/engine/types';

export interface PhaseSegment {
  phase: Phase;
  startT: number;
  endT: number;
}

export interface GapRow {
  t: number;
  endT: number | null;
  reason: string;
}

export interface ReportMetrics {
  durationS: number;
  ah: number;
  wh: number;
  /** Energy drawn from the source over the intervals where vin and iin are both known. */
  sourceWh: number | null;
  /** Pack energy / source energy over those same intervals, 0..1. */
  efficiency: number | null;
  internalResistanceOhm: number | null;
  peakTempC: number | null;
  maxVbatV: number | null;
  minVinV: number | null;
  phaseS: Partial<Record<Phase, number>>;
}

export function phaseSegments(events: readonly EngineEvent[], endT: number): PhaseSegment[] {
  const segments: PhaseSegment[] = [];
  for (const e of events) {
    if (e.type !== 'phase') continue;
    const last = segments[segments.length - 1];
    if (last) last.endT = e.t;
    segments.push({ phase: e.phase, startT: e.t, endT: Math.max(e.t, endT) });
  }
  return segments;
}

export function reportMetrics(
  profile: ResolvedProfile,
  samples: readonly TimedSample[],
  summary: RunSummary,
): ReportMetrics {
  let sourceJ = 0;
  let packJ = 0;
  let bothS = 0;
  let peakTempC = -Infinity;
  let maxVbatV = -Infinity;
  let minVinV = Infinity;
  for (let i = 0; i < samples.length; i++) {
    const s = samples[i];
    if (s.tempC !== undefined && Number.isFinite(s.tempC) && s.tempC > peakTempC) peakTempC = s.tempC;
    if (s.vbatV !== undefined && s.vbatV > maxVbatV) maxVbatV = s.vbatV;
    if (s.vinV !== undefined && s.vinV < minVinV) minVinV = s.vinV;
    if (i === 0) continue;
    const p = samples[i - 1];
    const dt = s.t - p.t;
    if (dt <= 0 || dt > Math.max(10, profile.silenceS)) continue;
    if (s.vinV === undefined || s.iinA === undefined || p.vinV === undefined || p.iinA === undefined)
      continue;
    if (s.vbatV === undefined || s.ibatA === undefined || p.vbatV === undefined || p.ibatA === undefined)
      continue;
    sourceJ += ((p.vinV * p.iinA + s.vinV * s.iinA) / 2) * dt;
    packJ += ((p.vbatV * p.ibatA + s.vbatV * s.ibatA) / 2) * dt;
    bothS += dt;
  }
  const sourceWh = bothS > 0 ? sourceJ / 3600 : null;
  return {
    durationS: summary.durationS,
    ah: summary.ah,
    wh: summary.wh,
    sourceWh,
    efficiency: sourceWh !== null && sourceJ > 0 ? packJ / sourceJ : null,
    internalResistanceOhm: estimateInternalResistance(profile, samples),
    peakTempC: Number.isFinite(peakTempC) ? peakTempC : null,
    maxVbatV: Number.isFinite(maxVbatV) ? maxVbatV : null,
    minVinV: Number.isFinite(minVinV) ? minVinV : null,
    phaseS: summary.phaseS,
  };
}

/** Interruptions: recorded gaps, silence alarms, and holes in the sample times. */
export function gapRows(
  profile: ResolvedProfile,
  samples: readonly TimedSample[],
  events: readonly EngineEvent[],
): GapRow[] {
  const rows: GapRow[] = [];
  for (const e of events) {
    if (e.type === 'gap') rows.push({ t: e.t, endT: e.endT, reason: e.reason });
    if (e.type === 'alarm' && e.code === 'silence')
      rows.push({ t: e.t, endT: null, reason: `silence alarm: ${e.message}` });
  }
  const holeS = Math.max(profile.silenceS, 10);
  for (let i = 1; i < samples.length; i++) {
    const dt = samples[i].t - samples[i - 1].t;
    if (dt > holeS) {
      const t = samples[i - 1].t;
      // A hole the engine already recorded as a gap is listed once.
      if (!rows.some((r) => r.endT !== null && Math.abs(r.t - t) <= holeS)) {
        rows.push({ t, endT: samples[i].t, reason: `no sample for ${Math.round(dt)} s` });
      }
    }
  }
  return rows.sort((a, b) => a.t - b.t);
}

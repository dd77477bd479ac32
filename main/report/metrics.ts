/** The Run report's figures: the engine's metrics plus what only the samples show. */
import type { ResolvedProfile } from '@shared/chemistry/types';
import type { EngineEvent, Phase, RunMetrics, RunSummary, TimedSample } from '@shared/engine/types';

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

/**
 * The Metrics section's figures. Charge, energy, source energy, efficiency, internal resistance
 * and time per phase are the engine's own (what the dashboard showed); only the extremes the
 * engine does not track are taken from the samples here.
 */
export interface ReportMetrics {
  durationS: number;
  ah: number;
  wh: number;
  sourceWh: number | null;
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
  samples: readonly TimedSample[],
  summary: RunSummary,
  metrics: RunMetrics,
): ReportMetrics {
  let peakTempC = -Infinity;
  let maxVbatV = -Infinity;
  let minVinV = Infinity;
  for (const s of samples) {
    if (s.tempC !== undefined && Number.isFinite(s.tempC) && s.tempC > peakTempC) peakTempC = s.tempC;
    if (s.vbatV !== undefined && s.vbatV > maxVbatV) maxVbatV = s.vbatV;
    if (s.vinV !== undefined && s.vinV < minVinV) minVinV = s.vinV;
  }
  return {
    durationS: summary.durationS,
    ah: summary.ah,
    wh: summary.wh,
    sourceWh: metrics.sourceWh,
    efficiency: metrics.efficiency,
    internalResistanceOhm: metrics.internalResistanceOhm,
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

/**
 * The Bench view's charge outlook in words: charge level and time to full as ranges, and what
 * comes next ("CV at 12.60 V in about 40 min"). The numbers come from the pure estimate in
 * shared/engine/metrics/charge-outlook.ts; this file only gathers its inputs from a station and
 * words the result (lead-acid says bulk / absorption / float).
 */
import { chemistryHasCv } from '@shared/chemistry/defaults';
import {
  chargeOutlook,
  slopePerS,
  type ChargeOutlook,
  type Range,
} from '@shared/engine/metrics/charge-outlook';
import type { StationModel } from '../store';

/** Windows over which the pack voltage's rise rate is measured: the recent and the longer trend. */
const SHORT_WINDOW_S = 180;
const LONG_WINDOW_S = 900;

export function outlookFor(model: StationModel): ChargeOutlook {
  const { profile, state } = model.view;
  const t = state.t;
  const series = model.series;
  const short = slopePerS(series.points('vbatV', t - SHORT_WINDOW_S, t, 120));
  const long = slopePerS(series.points('vbatV', t - LONG_WINDOW_S, t, 240));
  const rise =
    short !== null && long !== null
      ? { low: short, high: long }
      : short !== null
        ? { low: short, high: short }
        : null;
  const capacityStated = !(profile.defaulted ?? []).includes('capacityAh');
  return chargeOutlook({
    chemistry: profile.chemistry,
    hasCv: chemistryHasCv(profile.chemistry),
    phase: state.phase,
    capacityAh: capacityStated ? profile.capacityAh : null,
    ahIn: state.metrics.ah,
    currentA: state.last?.ibatA ?? null,
    setA: profile.chargeCurrentA,
    terminationA: profile.terminationA,
    regulationV: profile.regulationVPerCell * profile.cells,
    floatV: profile.floatVPerCell === null ? null : profile.floatVPerCell * profile.cells,
    preconditionV: profile.preconditionVPerCell * profile.cells,
    vbatV: state.last?.vbatV ?? null,
    riseVPerS: rise,
    engineSocPct: state.metrics.socPct,
    engineCvS: state.phase === 'cv' || state.phase === 'cc' ? state.metrics.etaCvS : null,
  });
}

/** Seconds as a person says them: "12 min", "1 h 05 min", "2 d 3 h". */
export function approxDuration(s: number): string {
  if (!Number.isFinite(s)) return '–';
  const min = Math.max(1, Math.round(s / 60));
  if (min < 90) return `${min} min`;
  const h = Math.floor(min / 60);
  if (h < 48) return `${h} h ${String(min % 60).padStart(2, '0')} min`;
  return `${Math.floor(h / 24)} d ${h % 24} h`;
}

/** A range of seconds: "about 40 min" when narrow, else "40 min – 1 h 05 min". */
export function approxRange(r: Range): string {
  const mid = (r.low + r.high) / 2;
  if (r.high - r.low <= Math.max(120, 0.2 * mid)) return `about ${approxDuration(mid)}`;
  return `${approxDuration(r.low)} – ${approxDuration(r.high)}`;
}

export function pctRange(r: Range): string {
  const lo = Math.round(r.low);
  const hi = Math.round(r.high);
  return hi - lo <= 2 ? `about ${Math.round((r.low + r.high) / 2)} %` : `${lo}–${hi} %`;
}

function stageWord(step: 'cc' | 'cv' | 'done', chemistry: string): string {
  const lead = chemistry === 'lead-acid';
  if (step === 'cc') return lead ? 'Bulk' : 'CC';
  if (step === 'cv') return lead ? 'Absorption' : 'CV';
  return lead ? 'Float' : 'Done';
}

export interface OutlookRows {
  level: string;
  full: string;
  next: string;
}

/** The three rows of the metrics list. `doneForS` = how long the charge has been done. */
export function outlookRows(model: StationModel): OutlookRows {
  const { profile, state } = model.view;
  const chem = profile.chemistry;
  const capacityStated = !(profile.defaulted ?? []).includes('capacityAh');
  if (state.phase === 'done') {
    const since = Math.max(0, state.t - state.phaseSinceT);
    return {
      level: 'Full',
      full: `Full for ${approxDuration(since)}`,
      next:
        chem === 'lead-acid' && profile.floatVPerCell !== null
          ? `Floating at ${(profile.floatVPerCell * profile.cells).toFixed(2)} V`
          : 'Nothing: the charge has ended',
    };
  }
  if (state.phase === 'fault')
    return { level: '–', full: '–', next: 'The charger stopped on a fault: see Alarms' };
  if (state.phase === 'idle')
    return { level: '–', full: '–', next: 'Waits for the source (no charge current)' };
  const o = outlookFor(model);
  const level = o.socPct
    ? pctRange(o.socPct)
    : capacityStated
      ? 'estimating…'
      : '– (the profile states no capacityAh)';
  const full = o.fullInS ? approxRange(o.fullInS) : capacityStated ? 'estimating…' : '–';
  let next = '–';
  if (o.next) {
    const word = stageWord(o.next.step, chem);
    const at =
      o.next.atV !== null
        ? ` at ${o.next.atV.toFixed(2)} V`
        : o.next.step === 'done' && chem !== 'nimh'
          ? ` when the current falls to ${profile.terminationA.toFixed(2)} A`
          : o.next.step === 'done'
            ? ' on the −ΔV / dT/dt end'
            : '';
    next = `${word}${at}${o.next.inS ? ` in ${approxRange(o.next.inS)}` : ''}`;
  }
  return { level, full, next };
}

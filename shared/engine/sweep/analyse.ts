/**
 * The source sweep, start to end: P–V points from the run, the sweeps in it, a fit per sweep
 * (restarted on the steady stretch when the light changed), the maximum power point inside
 * the swept range, the advice, the panel-temperature shift and the whole-run MPPT efficiency.
 */
import type { TimedSample } from '../types';
import { adviceFor } from './advice';
import { chooseFit } from './choose-fit';
import { dayEfficiency, type DayEfficiency, type SweepAtTime } from './efficiency';
import { findMaximum } from './maximum';
import { extraChannel, pointsFromSamples } from './points';
import { checkSteadiness } from './steadiness';
import { temperatureShift, type TemperatureShift } from './temperature';
import type { FittedCurve, MaximumPowerPoint, SweepPoint } from './types';
import { findSweepWindows, medianVoltageAtEnd, type SweepWindow } from './windows';

export interface SweepOptions {
  /** The profile's input set point, shown beside the result. */
  setpointV: number | null;
  /** The panel's voltage temperature coefficient, %/C (profile `panelTempCoeffPctPerC`). */
  panelTempCoeffPctPerC?: number | null;
  /** Extra channel carrying the panel temperature. */
  panelTempKey?: string;
}

export interface SweepReport {
  ok: boolean;
  /** Why there is no usable sweep (ok = false). */
  reason: string | null;
  mppV: number | null;
  mppW: number | null;
  setpointV: number | null;
  operatingV: number | null;
  lossPct: number | null;
  fit: { points: number; rmsW: number; model: FittedCurve['model'] } | null;
  advice: string | null;
  /** The sweep analysed (run seconds), and how many sweeps the run holds. */
  window: { fromS: number; toS: number } | null;
  sweeps: number;
  irradiance: {
    changed: boolean;
    changePct: number;
    evidence: string | null;
    /** The steady stretch the fit was restarted on, when the light changed. */
    restartedOn: { fromS: number; toS: number } | null;
  } | null;
  temperature: TemperatureShift | null;
  day: DayEfficiency | null;
  /** The fitted curve, tabulated for display across the swept range. */
  curve: { vV: number; pW: number }[];
  /** Other sweeps of the run that were refused, with why. */
  refused: { fromS: number; toS: number; reason: string }[];
}

type WindowResult =
  | {
      ok: true;
      curve: FittedCurve;
      mpp: MaximumPowerPoint;
      irradiance: NonNullable<SweepReport['irradiance']>;
    }
  | { ok: false; reason: string; irradiance: SweepReport['irradiance'] };

/** Fewest points and narrowest span a (restarted) fit may rest on. */
const MIN_POINTS = 30;
const MIN_SPAN_SHARE = 0.08;
const CURVE_STEPS = 120;

function spanOk(points: readonly SweepPoint[]): boolean {
  let lo = Infinity;
  let hi = -Infinity;
  for (const p of points) {
    lo = Math.min(lo, p.vV);
    hi = Math.max(hi, p.vV);
  }
  return points.length >= MIN_POINTS && hi - lo >= MIN_SPAN_SHARE * hi;
}

/** Most points a fit rests on: more are thinned evenly in time (the fit cost grows with them). */
const MAX_FIT_POINTS = 600;

function thin(points: readonly SweepPoint[]): readonly SweepPoint[] {
  if (points.length <= MAX_FIT_POINTS) return points;
  const stride = points.length / MAX_FIT_POINTS;
  return Array.from({ length: MAX_FIT_POINTS }, (_, k) => points[Math.floor(k * stride)]);
}

export function analyseWindow(all: readonly SweepPoint[]): WindowResult {
  const points = thin(all);
  let curve = chooseFit(points);
  if (!curve) return { ok: false, reason: 'too few points to fit a curve', irradiance: null };
  const steady = checkSteadiness(points, curve);
  const irradiance: NonNullable<SweepReport['irradiance']> = {
    changed: steady.changed,
    changePct: steady.changeShare * 100,
    evidence: steady.evidence,
    restartedOn: null,
  };
  if (steady.changed) {
    const stretch = points.slice(steady.longest.from, steady.longest.to);
    const why = `${steady.evidence ?? 'the light changed during the sweep'}`;
    if (!spanOk(stretch)) {
      return {
        ok: false,
        reason: `${why}; no stretch of steady light covers enough of the sweep: sweep again when the light is steady`,
        irradiance,
      };
    }
    curve = chooseFit(stretch);
    if (!curve) return { ok: false, reason: `${why}; the steady stretch could not be fitted`, irradiance };
    const again = checkSteadiness(stretch, curve);
    if (again.changed) {
      return {
        ok: false,
        reason: `${why}; no stretch of steady light found: sweep again when the light is steady`,
        irradiance,
      };
    }
    irradiance.restartedOn = { fromS: stretch[0].tS, toS: stretch[stretch.length - 1].tS };
  }
  const max = findMaximum(curve);
  if (!max.ok) {
    const prefix = irradiance.restartedOn ? `${irradiance.evidence}; on the steady stretch, ` : '';
    return { ok: false, reason: prefix + max.reason, irradiance };
  }
  return { ok: true, curve, mpp: max.mpp, irradiance };
}

function tabulate(curve: FittedCurve): { vV: number; pW: number }[] {
  const out: { vV: number; pW: number }[] = [];
  for (let k = 0; k <= CURVE_STEPS; k++) {
    const vV = curve.vMinV + ((curve.vMaxV - curve.vMinV) * k) / CURVE_STEPS;
    out.push({ vV, pW: curve.powerW(vV) });
  }
  return out;
}

export function analyseSweep(samples: readonly TimedSample[], options: SweepOptions): SweepReport {
  const points = pointsFromSamples(samples);
  const report: SweepReport = {
    ok: false,
    reason: null,
    mppV: null,
    mppW: null,
    setpointV: options.setpointV,
    operatingV: medianVoltageAtEnd(points),
    lossPct: null,
    fit: null,
    advice: null,
    window: null,
    sweeps: 0,
    irradiance: null,
    temperature: null,
    day: null,
    curve: [],
    refused: [],
  };
  if (points.length === 0) {
    report.reason = 'no samples carry both source voltage (vin) and source current (iin)';
    return report;
  }
  const windows = findSweepWindows(points);
  report.sweeps = windows.length;
  if (windows.length === 0) {
    report.reason =
      'no sweep found: the source voltage never moved across a wide range (at least 8 % of its value, ' +
      `${MIN_POINTS} samples or more); turn the set point slowly from one end of its range to the other`;
    return report;
  }
  const usable: (SweepAtTime & {
    window: SweepWindow;
    irradiance: NonNullable<SweepReport['irradiance']>;
  })[] = [];
  for (const w of windows) {
    const r = analyseWindow(points.slice(w.from, w.to));
    if (r.ok)
      usable.push({
        tS: (w.fromS + w.toS) / 2,
        curve: r.curve,
        mpp: r.mpp,
        window: w,
        irradiance: r.irradiance,
      });
    else {
      report.refused.push({ fromS: w.fromS, toS: w.toS, reason: r.reason });
      if (w === windows[windows.length - 1] && usable.length === 0) report.irradiance = r.irradiance;
    }
  }
  if (usable.length === 0) {
    const last = report.refused[report.refused.length - 1];
    report.reason = last.reason;
    report.window = { fromS: last.fromS, toS: last.toS };
    return report;
  }
  const best = usable[usable.length - 1];
  report.ok = true;
  report.window = { fromS: best.window.fromS, toS: best.window.toS };
  report.mppV = best.mpp.vV;
  report.mppW = best.mpp.pW;
  report.fit = { points: best.curve.points, rmsW: best.curve.rmsW, model: best.curve.model };
  report.irradiance = best.irradiance;
  report.curve = tabulate(best.curve);
  const opV = report.operatingV;
  if (opV !== null) {
    const inRange = opV >= best.curve.vMinV && opV <= best.curve.vMaxV;
    const opW = inRange ? best.curve.powerW(opV) : null;
    report.lossPct = opW === null ? null : Math.max(0, ((best.mpp.pW - opW) / best.mpp.pW) * 100);
    report.advice = adviceFor(best.mpp.vV, best.mpp.pW, opV, opW).text;
  }
  const coeff = options.panelTempCoeffPctPerC;
  if (coeff !== undefined && coeff !== null) {
    const temps = extraChannel(samples, options.panelTempKey ?? 'tpanel');
    const inSweep = temps
      .filter((x) => x.tS >= best.window.fromS && x.tS <= best.window.toS)
      .map((x) => x.value);
    report.temperature = temperatureShift(
      best.mpp.vV,
      coeff,
      inSweep,
      temps.map((x) => x.value),
    );
  }
  report.day = dayEfficiency(points, usable);
  return report;
}

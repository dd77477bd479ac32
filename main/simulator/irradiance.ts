/**
 * Sunlight on the panel over a day: a sine-shaped arc from sunrise through noon to sunset,
 * dimmed by seeded clouds (each a smooth dip with raised-cosine edges). Demo weather only.
 */
import type { Rng } from './rng';

export interface DayParams {
  sunriseH: number;
  sunsetH: number;
  /** Irradiance at solar noon on a clear day, W/m2. */
  peakWPerM2: number;
}

export interface CloudParams {
  /** Clouds per hour of daylight, on average. */
  perHour: number;
  minDurationS: number;
  maxDurationS: number;
  /** Fraction of the light a cloud removes at its thickest, 0..1. */
  minDepth: number;
  maxDepth: number;
}

export interface Cloud {
  startS: number;
  durationS: number;
  depth: number;
}

/** Clear-sky irradiance at a local clock time (hours). */
export function clearSkyWPerM2(day: DayParams, clockH: number): number {
  if (clockH <= day.sunriseH || clockH >= day.sunsetH) return 0;
  const x = (clockH - day.sunriseH) / (day.sunsetH - day.sunriseH);
  return day.peakWPerM2 * Math.pow(Math.sin(Math.PI * x), 1.3);
}

/** Seeded cloud events over `[0, spanS)` of run time. */
export function makeClouds(rng: Rng, params: CloudParams, spanS: number): Cloud[] {
  const clouds: Cloud[] = [];
  if (params.perHour <= 0) return clouds;
  const meanGapS = 3600 / params.perHour;
  let t = rng.between(0, meanGapS);
  while (t < spanS) {
    const durationS = rng.between(params.minDurationS, params.maxDurationS);
    clouds.push({ startS: t, durationS, depth: rng.between(params.minDepth, params.maxDepth) });
    t += durationS - meanGapS * Math.log(Math.max(1e-9, 1 - rng.next()));
  }
  return clouds;
}

/** Fraction of the light that gets through the clouds at run time `tS`, 0..1. */
export function cloudTransmission(clouds: readonly Cloud[], tS: number): number {
  let transmission = 1;
  for (const c of clouds) {
    const u = (tS - c.startS) / c.durationS;
    if (u <= 0 || u >= 1) continue;
    // Thick in the middle, thinning at both edges over a fifth of the cloud each.
    const edge = Math.min(1, u / 0.2, (1 - u) / 0.2);
    const shape = 0.5 - 0.5 * Math.cos(Math.PI * edge);
    transmission *= 1 - c.depth * shape;
  }
  return transmission;
}

/**
 * A connection between charger and pack: a contact resistance that rises in steps (a
 * corroding or loosening terminal) and, from some moment on, breaks for a few seconds at a
 * time. Seeded, so the same seed gives the same steps and dropouts.
 */
import type { Rng } from './rng';

export interface ContactParams {
  baseOhm: number;
  /** Resistance steps: mean time between them and the range of each step. */
  stepEveryS: number;
  stepOhm: [number, number];
  /** Dropouts begin at this run time; mean time between them and their length range. */
  dropoutsFromS: number;
  dropoutEveryS: number;
  dropoutS: [number, number];
}

export interface Contact {
  resistanceOhm(tS: number): number;
  connected(tS: number): boolean;
}

/** A contact that is perfect: zero ohms, never open. */
export const SOLID_CONTACT: Contact = { resistanceOhm: () => 0, connected: () => true };

export function makeContact(rng: Rng, p: ContactParams, spanS: number): Contact {
  const steps: { atS: number; ohm: number }[] = [];
  for (let t = rng.between(0.3, 1.3) * p.stepEveryS; t < spanS; t += rng.between(0.5, 1.5) * p.stepEveryS) {
    steps.push({ atS: t, ohm: rng.between(p.stepOhm[0], p.stepOhm[1]) });
  }
  const dropouts: { fromS: number; toS: number }[] = [];
  for (let t = p.dropoutsFromS; t < spanS; t += rng.between(0.5, 1.5) * p.dropoutEveryS) {
    const lengthS = rng.between(p.dropoutS[0], p.dropoutS[1]);
    dropouts.push({ fromS: t, toS: t + lengthS });
  }
  return {
    resistanceOhm(tS) {
      let ohm = p.baseOhm;
      for (const s of steps) if (s.atS <= tS) ohm += s.ohm;
      return ohm;
    },
    connected(tS) {
      return !dropouts.some((d) => tS >= d.fromS && tS < d.toS);
    },
  };
}

/**
 * Whether a run a crash left open may be continued: only when the same pack is plainly
 * still on charge. The station identity and profile already match (the recorder only offers
 * the station's own latest run with the same profile, within the resume window); here the
 * telemetry must agree too: the run was charging when the recorder stopped, the first sample
 * after the restart is charging, the pack voltage is continuous and the device clock did not
 * start again. Anything else is a new charge (or a pack swap) and gets a new run.
 */
import type { ResolvedProfile } from '@shared/chemistry/types';
import type { Phase, TimedSample } from '@shared/engine/types';
import type { Sample } from '@shared/telemetry/types';

/**
 * Largest pack-voltage step per cell across the gap that still counts as the same pack on
 * charge. From memory: a cell on charge moves far less than this in ten minutes at up to
 * 1 C outside the first and last minutes, while a pack put on after another one was full
 * (the case this guards: two charges merged into one run) starts several tenths lower.
 */
export const RESUME_MAX_STEP_V_PER_CELL = 0.1;

/** A charge that ended (or failed) is not continued, whatever comes next. */
const ENDED: readonly Phase[] = ['done', 'fault'];

export interface ResumeEvidence {
  profile: ResolvedProfile;
  /** The interrupted run's state rebuilt from its recorded lines. */
  lastPhase: Phase;
  last: TimedSample | null;
  /** The first sample received after the restart (null: none came with a pack voltage). */
  first: Sample | null;
  gapS: number;
}

export type ResumeVerdict = { resume: boolean; why: string };

export function resumeVerdict(e: ResumeEvidence): ResumeVerdict {
  const gap = `${e.gapS.toFixed(0)} s gap`;
  if (ENDED.includes(e.lastPhase))
    return { resume: false, why: `the run was in phase ${e.lastPhase} when the recorder stopped` };
  if (e.last?.vbatV === undefined)
    return { resume: false, why: 'the run had no pack voltage to compare with' };
  if (e.last.chg === false || (e.last.ibatA !== undefined && e.last.ibatA <= 0))
    return { resume: false, why: 'the pack was not charging when the recorder stopped' };
  if (e.first?.vbatV === undefined)
    return { resume: false, why: 'no pack voltage arrived after the restart to compare with' };
  if (e.first.flt === true) return { resume: false, why: 'the charger reports a fault after the restart' };
  if (e.first.chg === false || (e.first.ibatA !== undefined && e.first.ibatA <= 0))
    return { resume: false, why: 'the pack is not charging after the restart' };
  if (e.first.deviceS !== undefined && e.last.deviceS !== undefined && e.first.deviceS < e.last.deviceS)
    return {
      resume: false,
      why: `the device clock started again (t=${e.last.deviceS.toFixed(1)} s before, t=${e.first.deviceS.toFixed(1)} s after)`,
    };
  const stepV = e.first.vbatV - e.last.vbatV;
  const limitV = RESUME_MAX_STEP_V_PER_CELL * e.profile.cells;
  const volts = `pack voltage ${e.last.vbatV.toFixed(3)} V -> ${e.first.vbatV.toFixed(3)} V`;
  if (Math.abs(stepV) > limitV)
    return {
      resume: false,
      why: `${volts} is not continuous (more than ${limitV.toFixed(2)} V apart; another pack?)`,
    };
  return { resume: true, why: `same station, still charging, ${volts}, ${gap}` };
}

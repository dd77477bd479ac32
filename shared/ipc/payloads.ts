/**
 * The data the backend sends to the views (replies and pushes): plain serialisable types,
 * shared by the shell (main/) and the renderer, which may not import main/.
 */
import type { ResolvedProfile } from '../chemistry/types';
import type { RunState } from '../engine/types';
import type { RejectReason } from '../telemetry/types';
import type { SweepReport } from '../engine/sweep/analyse';

/** State of a line source (serial port, simulator, replay). */
export type SourceStatus =
  | { state: 'connecting'; detail: string }
  | { state: 'open'; detail: string }
  /** Telemetry interrupted (unplug, vanished device); the source keeps retrying. */
  | { state: 'lost'; detail: string; sinceRxS: number }
  | { state: 'closed'; detail: string };

/** One received line as the Line feed shows it. */
export interface FeedLine {
  rxS: number;
  text: string;
  kind: 'sample' | 'header' | 'firmware' | 'blank' | 'rejected' | 'sent';
  reason?: RejectReason;
  detail?: string;
}

export interface StationSnapshot {
  id: string;
  label: string;
  sourceLabel: string;
  source: SourceStatus;
  runId: number | null;
  profile: ResolvedProfile;
  state: RunState;
  lines: number;
  rejected: number;
  recording: { ok: boolean; problem: string | null };
  /** The board under test: id, operator, firmware version, burn-in batch (null when unknown). */
  board?: {
    boardId: string | null;
    operator: string | null;
    firmware: string | null;
    batchId: string | null;
  };
}

export type RunEndReason =
  'completed' | 'stopped' | 'interrupted' | 'profile-changed' | 'board-changed' | 'batch-started';

export interface RunRow {
  id: number;
  stationId: string;
  stationLabel: string;
  profileName: string;
  chemistry: string;
  /** Receive time of the run's start / end, seconds since the Unix epoch. */
  startRxS: number;
  endRxS: number | null;
  endReason: RunEndReason | null;
  durationS: number;
  ah: number;
  wh: number;
  lines: number;
  rejected: number;
  /** The board under test, who ran it, its firmware, its burn-in batch (null when unknown). */
  boardId?: string | null;
  operator?: string | null;
  firmware?: string | null;
  batchId?: string | null;
  /** The checks' verdict, when the run was judged. */
  verdict?: 'pass' | 'fail' | 'incomplete' | null;
  /** The engine's last internal-resistance estimate of the run, ohms (whole pack); null when none. */
  internalResistanceOhm?: number | null;
}

/** Canonical sample columns that overview queries can bucket. */
export type SeriesField = 'vbatV' | 'ibatA' | 'tempC' | 'vinV' | 'iinA';

/** One time bucket of an overview: min/max/mean of each requested field over [t0S, t1S). */
export interface OverviewBucket {
  t0S: number;
  t1S: number;
  count: number;
  values: Partial<Record<SeriesField, { min: number; max: number; mean: number }>>;
}

/** The live source sweep of one station (Sweep view): its recent P–V points and the engine's report. */
export interface SweepPayload {
  stationId: string;
  /** Recent source samples, oldest first: run time, volts, watts (columns). */
  points: { tS: number[]; vV: number[]; pW: number[] };
  /** The engine's analysis of those samples (the fit may lag the newest points by a few seconds). */
  report: SweepReport;
}

/**
 * The verdict of a recorded run, computed when the run ends and stored with it, so the Runs
 * view can show and filter verdicts without re-reading every run.
 */
import type { ResolvedProfile } from '@shared/chemistry/types';
import { runChecks, type CheckReport } from '@shared/engine/checks';
import type { Recorder } from '../recorder/types';

/** Judges a run from what the recorder holds and stores the verdict; null when nothing to judge. */
export function storeRunVerdict(
  recorder: Recorder,
  runId: number,
  profile: ResolvedProfile,
  boardId: string | null,
): CheckReport | null {
  if (!profile.expect) return null;
  // Everything queued must be in the file before it is read back.
  recorder.flush();
  const samples = recorder.allSamples(runId);
  if (samples.length === 0) return null;
  const report = runChecks({ profile, samples, events: recorder.events(runId), board: boardId });
  recorder.setRunInfo(runId, { verdictJson: JSON.stringify(report) });
  return report;
}

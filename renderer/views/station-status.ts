/**
 * The source and recording badges of a station, worded and coloured by what they mean: red
 * only for trouble (a lost port, a recording that failed). A scenario or replay that reached its
 * end, and a replay that is deliberately not recorded again, are plain information.
 */
import { h } from '../dom';
import type { StationView } from '../wire';

/** A replay station reads a recorded run again (its source label says so). */
export function isReplayStation(view: Pick<StationView, 'sourceLabel'>): boolean {
  return view.sourceLabel.startsWith('replay:');
}

export function sourceBadge(view: StationView): HTMLElement {
  const { state, detail } = view.source;
  const word = state === 'closed' ? 'ended' : state;
  return h(
    'span',
    {
      class: `source-state source-${state === 'closed' ? 'ended' : state}`,
      title: detail,
      'data-state': state,
    },
    // The detail is long when all is well; it is spelled out only when the source stopped.
    `Source ${view.sourceLabel}: ${word}${detail && state !== 'open' ? ` — ${detail}` : ''}`,
  );
}

export function recordingBadge(view: StationView): HTMLElement {
  const { ok, problem } = view.recording;
  if (ok)
    return h(
      'span',
      { class: 'rec-state', 'data-state': 'recording' },
      view.runId !== null ? `● Recording run ${view.runId}` : 'Not recording',
    );
  // The station manager words a deliberate "no database" as "not recording: …" and a replay as
  // "not recorded (…)": neither is a failure.
  if (problem?.startsWith('not recording') || problem?.startsWith('not recorded'))
    return h(
      'span',
      { class: 'rec-state', 'data-state': 'off' },
      isReplayStation(view)
        ? 'Replay: not recorded again (the original run is kept as it was)'
        : 'Not recording (no database is open for this session)',
    );
  return h(
    'span',
    { class: 'rec-state rec-bad', 'data-state': 'failed', role: 'alert' },
    `✖ Recording failed: ${problem ?? 'unknown problem'}`,
  );
}

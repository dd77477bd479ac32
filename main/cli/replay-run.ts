/**
 * The replay loop itself, shared by `taperline replay` and the replay benchmark so that the
 * figures measure the command's own path: lines (as bytes when the input allows) -> the
 * pipeline -> events serialised into one buffered output.
 */
import type { ResolvedProfile } from '@shared/chemistry/types';
import type { EngineEvent, RunSummary } from '@shared/engine/types';
import type { LineInput } from './line-input';
import { ProfiledRun } from '@shared/engine/assumed-profile';
import { formatEventText, formatSummaryText, summaryRecord } from './replay-format';

/** Prints events as NDJSON (--events) or as readable lines, in blocks of about 64 kB. */
export class EventSink {
  private buffer = '';

  constructor(
    private readonly ndjson: boolean,
    private readonly write: (text: string) => void,
  ) {}

  event(event: EngineEvent): void {
    this.buffer += (this.ndjson ? JSON.stringify(event) : formatEventText(event)) + '\n';
    if (this.buffer.length > 1 << 16) this.flush();
  }

  finish(summary: RunSummary): void {
    this.buffer += this.ndjson ? JSON.stringify(summaryRecord(summary)) + '\n' : formatSummaryText(summary);
    this.flush();
  }

  private flush(): void {
    this.write(this.buffer);
    this.buffer = '';
  }
}

export interface ReplayRunOptions {
  /** 'max', or a multiple of real time to pace the replay on the run clock. */
  speed: number | 'max';
  onNote?: (note: string) => void;
}

/** Replays every line of the input into the sink; resolves once the summary is written. */
export async function replayInto(
  input: LineInput,
  profile: ResolvedProfile | null,
  sink: EventSink,
  options: ReplayRunOptions,
): Promise<void> {
  const speed = options.speed;
  let lastSampleT: number | null = null;
  const run = new ProfiledRun(
    profile,
    speed === 'max'
      ? (outcome) => writeEvents(sink, outcome.events)
      : (outcome) => {
          writeEvents(sink, outcome.events);
          // Only a paced replay needs the run clock (kept out of the fast path: a number
          // stored in a closure costs an allocation per line).
          if (outcome.sample) lastSampleT = outcome.sample.t;
        },
    options.onNote,
  );
  if (speed === 'max' && input.forEachBytes) {
    await input.forEachBytes((bytes, from, to, rxS, tooLong) => run.pushBytes(bytes, from, to, rxS, tooLong));
  } else if (speed === 'max') {
    await input.forEach((text, rxS, tooLong) => run.push(text, rxS, tooLong));
  } else {
    // Paced on the run clock: wait until the last sample's time, divided by speed, has passed.
    const startedMs = performance.now();
    for await (const line of input.lines()) {
      run.push(line.text, line.rxS, line.tooLong);
      if (lastSampleT === null) continue;
      const aheadMs = (lastSampleT / speed) * 1000 - (performance.now() - startedMs);
      if (aheadMs > 1) await new Promise((resolve) => setTimeout(resolve, aheadMs));
    }
  }
  sink.finish(run.finish().summary());
}

function writeEvents(sink: EventSink, events: readonly EngineEvent[]): void {
  for (let k = 0; k < events.length; k++) sink.event(events[k]);
}

/**
 * Replays a recorded run as a live source: its received lines, read again in order from the
 * recorder and handed to a station's pipeline at `speed` times the original pace (or as fast
 * as the event loop allows for `max`). Same LineSource contract as a serial port.
 *
 * The speed only decides when a line is handed on. Each line keeps its recorded receive
 * spacing (moved to start now) and its cut (`tooLong`) flag, so the app's replay reads exactly
 * what `taperline replay --db` reads and gives the same times, Ah and Wh.
 */
import { EventEmitter } from 'node:events';
import type { RunReader } from '../recorder/types';
import type { LineSource, LineSourceEvents, SourceLine } from './types';

/** Lines handed out per timer turn, so a fast replay never starves the event loop. */
const MAX_LINES_PER_TURN = 500;
/** Longest single wait, so stop() is never held up by a long gap in the recording. */
const MAX_WAIT_MS = 250;

export class ReplaySource extends EventEmitter<LineSourceEvents> implements LineSource {
  readonly label: string;
  /** The lines carry the recording's clock: the station manager must not tick silence on wall time. */
  readonly recordedClock = true as const;
  private iterator: Iterator<{ text: string; rxS: number; tooLong?: boolean }> | null = null;
  private pending: SourceLine | null = null;
  private firstRecordedRxS: number | null = null;
  private startedS = 0;
  private timer: NodeJS.Timeout | null = null;
  private state: 'idle' | 'running' | 'stopped' = 'idle';

  constructor(
    private readonly reader: RunReader,
    private readonly runId: number,
    /** Recorded seconds per wall-clock second; null = as fast as possible. */
    private readonly speed: number | null,
    private readonly now: () => number = () => Date.now() / 1000,
  ) {
    super();
    if (speed !== null && !(Number.isFinite(speed) && speed > 0))
      throw new Error(`replay speed must be positive, got ${speed}`);
    this.label = `replay:run ${runId}`;
  }

  start(): void {
    if (this.state !== 'idle') return;
    if (!this.reader.getRun(this.runId)) {
      this.state = 'stopped';
      this.emit('status', { state: 'closed', detail: `run ${this.runId} is not in the recording database` });
      return;
    }
    this.state = 'running';
    this.iterator = this.reader.lineIterator(this.runId);
    this.startedS = this.now();
    const pace = this.speed === null ? 'as fast as possible' : `at ${this.speed}x`;
    this.emit('status', { state: 'open', detail: `replaying run ${this.runId} ${pace}` });
    this.schedule(0);
  }

  async stop(): Promise<void> {
    if (this.timer) clearTimeout(this.timer);
    this.timer = null;
    if (this.state === 'running')
      this.emit('status', { state: 'closed', detail: `replay of run ${this.runId} stopped` });
    this.state = 'stopped';
  }

  private schedule(ms: number): void {
    this.timer = setTimeout(() => this.turn(), Math.min(ms, MAX_WAIT_MS));
  }

  private turn(): void {
    this.timer = null;
    if (this.state !== 'running' || !this.iterator) return;
    for (let sent = 0; sent < MAX_LINES_PER_TURN; sent++) {
      const line = this.pending ?? this.next();
      this.pending = null;
      if (!line) {
        this.state = 'stopped';
        this.emit('status', { state: 'closed', detail: `replay of run ${this.runId} finished` });
        return;
      }
      this.firstRecordedRxS ??= line.rxS;
      const recordedOffsetS = line.rxS - this.firstRecordedRxS;
      if (this.speed !== null) {
        const waitMs = (this.startedS + recordedOffsetS / this.speed - this.now()) * 1000;
        if (waitMs > 1) {
          this.pending = line;
          this.schedule(waitMs);
          return;
        }
      }
      // The recorded spacing, not the paced one: a run without device time keeps its durations.
      this.emit('line', { text: line.text, rxS: this.startedS + recordedOffsetS, tooLong: line.tooLong });
      if (this.state !== 'running') return;
    }
    this.schedule(0);
  }

  private next(): SourceLine | null {
    const step = this.iterator!.next();
    if (step.done) return null;
    const { text, rxS, tooLong } = step.value;
    return { text, rxS, tooLong: tooLong === true };
  }
}

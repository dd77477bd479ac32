/**
 * The simulated charger as a live line source: plays a scenario on the wall clock with time
 * compression (speedup 60 = a 4-hour charge in 4 minutes), answers a few commands sent to
 * it, and stops cleanly. Same LineSource contract as a serial port.
 */
import { EventEmitter } from 'node:events';
import type { LineSource, LineSourceEvents } from '../sources/types';
import type { LineShape } from '@shared/telemetry/format-line';
import { getScenario } from './scenarios';
import { createTelemetryRun, FIRMWARE_VERSION, type TelemetryRun, type TimedLine } from './telemetry';

export interface SimulatorSourceOptions {
  shape: LineShape;
  sampleIntervalS: number;
  /** Simulated seconds per wall-clock second (1 = real time). */
  speedup: number;
  seed?: number;
  checksum?: boolean;
  ntc?: boolean;
  durationS?: number;
}

/** Most lines handed out in one timer turn, so a huge speedup cannot starve the event loop. */
const MAX_LINES_PER_TURN = 500;
/** Longest wait between timer turns, so `stop()` and replies are never held up long. */
const MAX_WAIT_MS = 250;

const nowS = (): number => Date.now() / 1000;

class SimulatorSource extends EventEmitter<LineSourceEvents> implements LineSource {
  readonly label: string;
  private readonly run: TelemetryRun;
  private iterator: Iterator<TimedLine> | null = null;
  private pending: TimedLine | null = null;
  private timer: NodeJS.Timeout | null = null;
  private startedAtS = 0;
  private state: 'idle' | 'running' | 'stopped' = 'idle';

  constructor(
    private readonly name: string,
    private readonly options: SimulatorSourceOptions,
  ) {
    super();
    if (!(Number.isFinite(options.speedup) && options.speedup > 0)) {
      throw new Error(`speedup must be a positive number, got ${String(options.speedup)}`);
    }
    this.run = createTelemetryRun(getScenario(name), options);
    this.label = `simulator:${name}`;
  }

  start(): void {
    if (this.state !== 'idle') return;
    this.state = 'running';
    this.emit('status', { state: 'connecting', detail: `starting simulated charger "${this.name}"` });
    this.iterator = this.run.lines();
    this.startedAtS = nowS();
    this.emit('status', {
      state: 'open',
      detail: `simulated charger "${this.name}" at ${this.options.speedup}x, one sample every ${this.options.sampleIntervalS} s`,
    });
    this.pump();
  }

  /** Hands out every line that is due on the compressed clock, then sleeps until the next. */
  private pump(): void {
    this.timer = null;
    if (this.state !== 'running' || !this.iterator) return;
    const elapsedSimS = (nowS() - this.startedAtS) * this.options.speedup;
    let handed = 0;
    while (handed < MAX_LINES_PER_TURN) {
      if (!this.pending) {
        const next = this.iterator.next();
        if (next.done) {
          this.finish();
          return;
        }
        this.pending = next.value;
      }
      if (this.pending.simS > elapsedSimS) break;
      this.emit('line', { text: this.pending.text, rxS: nowS(), tooLong: false });
      this.pending = null;
      handed++;
    }
    const waitMs =
      handed >= MAX_LINES_PER_TURN || !this.pending
        ? 0
        : Math.min(
            MAX_WAIT_MS,
            Math.max(1, ((this.pending.simS - elapsedSimS) / this.options.speedup) * 1000),
          );
    this.timer = setTimeout(() => this.pump(), waitMs);
  }

  private finish(): void {
    this.state = 'stopped';
    this.emit('status', {
      state: 'closed',
      detail: `simulated charger "${this.name}" reached the end of its scenario`,
    });
  }

  async stop(): Promise<void> {
    if (this.timer) clearTimeout(this.timer);
    this.timer = null;
    if (this.state === 'stopped') return;
    this.state = 'stopped';
    this.emit('status', { state: 'closed', detail: `simulated charger "${this.name}" stopped` });
  }

  async send(text: string, ending: '\n' | '\r\n' | '\r' | ''): Promise<void> {
    if (this.state !== 'running')
      throw new Error(`simulated charger "${this.name}" is not running; nothing was sent`);
    this.emit('sent', { text: text + ending, rxS: nowS() });
    const reply = this.answer(text.trim());
    // The firmware answers on its next pass, after the command has been seen on the line.
    setImmediate(() => {
      if (this.state === 'running') this.emit('line', { text: reply, rxS: nowS(), tooLong: false });
    });
  }

  /** The invented command set of the demo firmware. */
  private answer(command: string): string {
    const r = this.run.bench.readings();
    switch (command.toLowerCase()) {
      case 'status?':
        return `# status stage ${r.mode} at ${r.tS.toFixed(0)} s, ${r.vbatV.toFixed(3)} V ${r.ibatA.toFixed(3)} A, fault ${r.fault ?? 'none'}`;
      case 'version?':
        return `# charger fw ${FIRMWARE_VERSION} (Taperline built-in simulator, scenario ${this.name})`;
      case 'help?':
        return '# commands: status? version? help?';
      default:
        return `# unknown command: ${command.length > 40 ? `${command.slice(0, 40)}...` : command}`;
    }
  }
}

/**
 * A live source playing a scenario. Throws at once for an unknown scenario or a bad option.
 * Lines carry the wall-clock receive time; `t` inside them is the compressed device time.
 */
export function createSimulatorSource(name: string, options: SimulatorSourceOptions): LineSource {
  return new SimulatorSource(name, options);
}

/**
 * A telemetry file (or standard input, `-`) as a station's source: read in large chunks
 * through the shared LineFramer and handed on as fast as the station takes them. A plain
 * file has no receive times, so the lines carry a synthetic clock (`intervalS` per line, as
 * `taperline replay` does) and the station treats it as a recorded clock.
 */
import { createReadStream, type ReadStream } from 'node:fs';
import { EventEmitter } from 'node:events';
import { LineFramer } from '@shared/telemetry/framer';
import { describeSource, type FileSourceConfig } from '@shared/sources/schemas';
import type { LineSource, LineSourceEvents } from './types';

export function createFileSource(config: FileSourceConfig): LineSource {
  const label = describeSource(config);
  const intervalS = config.intervalS ?? 1;
  const emitter = new EventEmitter<LineSourceEvents>();
  let input: ReadStream | NodeJS.ReadStream | null = null;
  let state: 'idle' | 'running' | 'stopped' = 'idle';
  let index = 0;
  const framer = new LineFramer((text, tooLong) => {
    emitter.emit('line', { text, rxS: index * intervalS, tooLong });
    index++;
  });

  function finish(detail: string): void {
    if (state !== 'running') return;
    state = 'stopped';
    emitter.emit('status', { state: 'closed', detail });
  }

  return Object.assign(emitter, {
    label,
    recordedClock: true,
    start() {
      if (state !== 'idle') return;
      state = 'running';
      const stream =
        config.path === '-' ? process.stdin : createReadStream(config.path, { highWaterMark: 1 << 16 });
      input = stream;
      stream.on('open', () => emitter.emit('status', { state: 'open', detail: `reading ${label}` }));
      if (config.path === '-') emitter.emit('status', { state: 'open', detail: `reading ${label}` });
      stream.on('data', (chunk: Buffer | string) =>
        framer.push(typeof chunk === 'string' ? Buffer.from(chunk) : chunk),
      );
      stream.on('end', () => {
        framer.end();
        finish(`${label}: read to the end (${index} lines)`);
      });
      stream.on('error', (err: Error) => {
        emitter.emit('problem', `cannot read ${label}: ${err.message}`);
        finish(`${label}: ${err.message}`);
      });
    },
    async stop() {
      if (input && input !== process.stdin) (input as ReadStream).destroy();
      input = null;
      finish(`${label} closed`);
      state = 'stopped';
    },
  });
}

/** The sources a station can have by default: a serial port or the built-in simulated charger. */
import { createSerialSource } from '../serial/serial-source';
import { createSimulatorSource } from '../simulator';
import type { LineSource } from '../sources/types';
import type { SourceConfig } from './types';

export function defaultMakeSource(config: SourceConfig, options: { now: () => number }): LineSource {
  if (config.kind === 'serial') return createSerialSource(config, { now: options.now });
  return createSimulatorSource(config.scenario, {
    shape: config.shape ?? 'kv',
    sampleIntervalS: config.sampleIntervalS ?? 1,
    speedup: config.speedup ?? 1,
  });
}

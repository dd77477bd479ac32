/** The built-in simulated charger playing a scenario on the wall clock. */
import { describeSource, SOURCE_KIND_TITLES, simulatorSourceSchema } from '@shared/sources/schemas';
import { createSimulatorSource } from '../../simulator';
import type { SourceKindModule } from '../kind';

export const simulatorKind: SourceKindModule<'simulator'> = {
  kind: 'simulator',
  schema: simulatorSourceSchema,
  title: SOURCE_KIND_TITLES.simulator,
  label: describeSource,
  create: (config) =>
    createSimulatorSource(config.scenario, {
      shape: config.shape ?? 'kv',
      sampleIntervalS: config.sampleIntervalS ?? 1,
      speedup: config.speedup ?? 1,
    }),
};

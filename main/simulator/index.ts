/**
 * The built-in simulated charger: physical demo scenarios, their telemetry lines, and a
 * live line source that plays them on the wall clock.
 */
import { getScenario } from './scenarios';
import { createTelemetryRun, type TelemetryOptions } from './telemetry';

export { listScenarios, getScenario, SCENARIO_NAMES, type ScenarioSummary } from './scenarios';
export { createSimulatorSource, type SimulatorSourceOptions } from './source';
export {
  createTelemetryRun,
  checkTelemetryOptions,
  DEFAULT_SEED,
  type TelemetryOptions,
  type TimedLine,
  type TelemetryRun,
} from './telemetry';
export type { Scenario, ProfileJson, ExpectedOutcome } from './types';

/**
 * Every line the simulated charger prints for a scenario (firmware `#` messages, the CSV
 * header when the shape is CSV, then one sample per interval), as fast as it can be
 * computed. Throws at once for an unknown scenario or a bad option. The same name,
 * options and seed always give the same lines.
 */
export function simulatedLines(name: string, options: TelemetryOptions): Generator<string> {
  // Built eagerly, so an unknown name or a bad option throws here and not at the first line.
  const run = createTelemetryRun(getScenario(name), options);
  return (function* () {
    for (const line of run.lines()) yield line.text;
  })();
}

/**
 * Test helper (not a test): plays a simulator scenario through the one pipeline and keeps,
 * beside each sample, the simulator's truth at that instant (the panel's true maximum power
 * point, its temperature, the light).
 */
import { parseProfile } from '@shared/chemistry/profile';
import type { ResolvedProfile } from '@shared/chemistry/types';
import { createPipeline } from '@shared/engine/pipeline';
import type { EngineEvent, TimedSample } from '@shared/engine/types';
import { getScenario } from '../../main/simulator/scenarios';
import { createTelemetryRun } from '../../main/simulator/telemetry';

export interface Truth {
  t: number;
  mppV: number;
  mppW: number;
  irradianceWPerM2: number;
  panelTempC: number | null;
}

export interface SimulatedSweep {
  profile: ResolvedProfile;
  samples: TimedSample[];
  truth: Truth[];
  lines: string[];
  events: EngineEvent[];
}

export function simulateSweep(name: string, seed = 1): SimulatedSweep {
  const scenario = getScenario(name);
  const parsed = parseProfile(scenario.profile);
  if (!parsed.ok) throw new Error(parsed.error);
  const run = createTelemetryRun(scenario, { shape: 'kv', sampleIntervalS: 1, seed });
  const pipeline = createPipeline(parsed.profile);
  const samples: TimedSample[] = [];
  const truth: Truth[] = [];
  const lines: string[] = [];
  const events: EngineEvent[] = [];
  let rxS = 1_700_000_000;
  for (const line of run.lines()) {
    lines.push(line.text);
    const out = pipeline.pushLine(line.text, rxS++, false);
    events.push(...out.events);
    if (!out.sample) continue;
    const r = run.bench.readings();
    if (!r.truthMpp) throw new Error(`${name}: no panel truth`);
    samples.push(out.sample);
    truth.push({
      t: out.sample.t,
      mppV: r.truthMpp.vV,
      mppW: r.truthMpp.pW,
      irradianceWPerM2: r.irradianceWPerM2,
      panelTempC: r.panelTempC,
    });
  }
  return { profile: parsed.profile, samples, truth, lines, events };
}

/** The truth at the sample nearest to run time `tS`. */
export function truthAt(truth: readonly Truth[], tS: number): Truth {
  let best = truth[0];
  for (const x of truth) if (Math.abs(x.t - tS) < Math.abs(best.t - tS)) best = x;
  return best;
}

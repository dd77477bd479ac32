import { getScenario } from './main/simulator/scenarios';
import { createTelemetryRun } from './main/simulator/telemetry';
import { parseProfile } from '@shared/chemistry/profile';
import { createPipeline } from '@shared/engine/pipeline';
import { analyseSweep } from '@shared/engine/sweep';
for (const name of ['sweep-trimmer', 'sweep-clouds']) {
  const sc = getScenario(name);
  const run = createTelemetryRun(sc, { shape: 'kv', sampleIntervalS: 1, seed: 1 });
  const prof = parseProfile(sc.profile);
  if (!prof.ok) throw new Error(prof.error);
  const pipe = createPipeline(prof.profile);
  const samples = []; const truth: any[] = [];
  let rx = 1000;
  for (const l of run.lines()) {
    const out = pipe.pushLine(l.text, rx++, false);
    if (out.sample) { samples.push(out.sample); const r = run.bench.readings(); truth.push({ t: r.tS, mpp: r.truthMpp, T: r.panelTempC, irr: r.irradianceWPerM2, sp: r.setpointV, mode: r.mode }); }
  }
  console.time('analyse');
  const rep = analyseSweep(samples, { setpointV: prof.profile.inputSetpointV, panelTempCoeffPctPerC: prof.profile.panelTempCoeffPctPerC });
  console.timeEnd('analyse');
  const { curve, ...rest } = rep;
  console.log(name, JSON.stringify(rest));
  for (const k of [100, 400, 600, 900, 1500]) console.log(truth[k]);
  console.log(samples[500]);
}

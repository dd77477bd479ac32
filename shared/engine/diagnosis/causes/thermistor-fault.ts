/**
 * thermistor-fault: the temperature reading is the sensor failing, not the pack. Signs: the raw
 * ntc value pinned at an ADC rail (open or shorted NTC), temperatures that jump impossibly fast,
 * or readings outside what an NTC channel can report.
 */
import type { DiagnosisContext } from '../context';
import { clamp01, fmtC, fmtT } from '../format';
import { ntcRails, SENSOR_RANGE_C, temperatureJumps } from '../temperature';
import type { Cause } from '../types';

export function scoreThermistorFault(ctx: DiagnosisContext): Cause {
  const evidence: string[] = [];
  let score = 0;
  score += pinned(ctx, evidence);
  const jumps = temperatureJumps(ctx.samples, ctx.end);
  if (jumps.length > 0) {
    const first = jumps[0];
    score += Math.min(0.6, 0.45 + 0.05 * (jumps.length - 1));
    evidence.push(
      `temperature jumped from ${fmtC(first.fromC)} to ${fmtC(first.toC)} in ${first.dtS.toFixed(1)} s at ${fmtT(first.t)}` +
        (jumps.length > 1 ? ` (${jumps.length} such jumps)` : '') +
        '; a pack cannot change that fast',
    );
  }
  score += outOfRange(ctx, evidence);
  return {
    code: 'thermistor-fault',
    confidence: clamp01(Math.min(0.95, score)),
    evidence,
    next: [
      ctx.profile.thermistor?.model === 'beta'
        ? `Unplug the thermistor and measure it with an ohmmeter: it should read about ${ctx.profile.thermistor.r25} Ω at 25 °C (R25 of the profile).`
        : 'Unplug the thermistor and measure it with an ohmmeter; compare with its resistance table at room temperature.',
      'Check the thermistor wire and connector: an open wire reads as the top ADC rail, a short as the bottom one (with the usual pull-up wiring).',
      "Check the profile's thermistor model and divider (pullupOhm / pulldownOhm, adcMax) against the board.",
      'Compare the reading with a thermometer on the pack before trusting it again.',
    ],
  };
}

function pinned(ctx: DiagnosisContext, evidence: string[]): number {
  const rails = ntcRails(ctx.profile);
  const { samples, end } = ctx;
  let count = 0;
  let withRaw = 0;
  let firstT: number | null = null;
  let lastT = 0;
  let value = 0;
  for (let i = 0; i < end; i++) {
    const raw = samples[i].ntcRaw;
    if (raw === undefined) continue;
    withRaw++;
    const atRail = rails
      ? raw <= rails.lowRaw || raw >= rails.highRaw || !Number.isFinite(raw)
      : !Number.isFinite(raw);
    if (!atRail) continue;
    count++;
    if (firstT === null) firstT = samples[i].t;
    lastT = samples[i].t;
    value = raw;
  }
  if (withRaw === 0 || count === 0 || firstT === null) return 0;
  const railName =
    rails && value <= rails.lowRaw ? 'bottom rail (a shorted NTC)' : 'top rail (an open NTC or broken wire)';
  evidence.push(
    `raw ntc read ${Number.isFinite(value) ? value : 'no value'} ${rails?.unit ?? ''}`.trimEnd() +
      `, pinned at the ADC ${railName}, ` +
      (count === 1 ? `at ${fmtT(firstT)}` : `in ${count} samples from ${fmtT(firstT)} to ${fmtT(lastT)}`),
  );
  let score = count >= 3 ? 0.7 : 0.55;
  if (ctx.fault && ctx.t - firstT <= Math.max(5, 3 * ctx.typicalDtS)) {
    score += 0.15;
    const lagS = Math.round(ctx.t - firstT);
    evidence.push(
      lagS === 0
        ? 'the fault came the moment the reading pinned'
        : `the fault came ${lagS} s after the reading pinned`,
    );
  }
  return score;
}

function outOfRange(ctx: DiagnosisContext, evidence: string[]): number {
  const { samples, end } = ctx;
  let count = 0;
  let firstT = 0;
  let firstC = 0;
  for (let i = 0; i < end; i++) {
    const c = samples[i].tempC;
    if (c === undefined) continue;
    if (Number.isFinite(c) && c >= SENSOR_RANGE_C[0] && c <= SENSOR_RANGE_C[1]) continue;
    if (count === 0) {
      firstT = samples[i].t;
      firstC = c;
    }
    count++;
  }
  if (count === 0) return 0;
  evidence.push(
    `temperature read ${Number.isFinite(firstC) ? fmtC(firstC) : 'no finite value'} at ${fmtT(firstT)}, outside the ` +
      `${SENSOR_RANGE_C[0]}..${SENSOR_RANGE_C[1]} °C an NTC channel reports (${count} sample(s))`,
  );
  return 0.2;
}

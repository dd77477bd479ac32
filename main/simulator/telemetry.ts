/**
 * Turns the bench into what the simulated charger's firmware prints: boot messages, a CSV
 * header when the shape is CSV, then one telemetry line per sample interval (with the
 * firmware's measurement noise and rounding), and a `#` line whenever the firmware has
 * something to say. Deterministic for a seed.
 */
import {
  csvHeaderLine,
  formatTelemetryLine,
  type LineShape,
  type LineValue,
} from '@shared/telemetry/format-line';
import { createBench, type Bench, type BenchReadings } from './bench';
import { createRng, type Rng } from './rng';
import type { Scenario } from './types';

export const FIRMWARE_VERSION = '0.3';
/** Longest physics step; sample intervals longer than this are split. */
const MAX_STEP_S = 1;
/** The firmware prints this when its thermistor input is lost (its lowest table entry, invented). */
const NO_THERMISTOR_TEMP_C = -40;
/** Below this the current sense is read as zero (offset clamp, common practice). */
const CURRENT_ZERO_CLAMP_A = 0.002;
export const DEFAULT_SEED = 1;

export interface TelemetryOptions {
  shape: LineShape;
  sampleIntervalS: number;
  /** Simulated seconds to produce; default: the scenario's duration. */
  durationS?: number;
  checksum?: boolean;
  seed?: number;
  /** Print raw thermistor counts (`ntc`) instead of `temp`; default: the scenario's choice. */
  ntc?: boolean;
}

export interface TimedLine {
  text: string;
  /** Simulated time of the line, seconds since the charger booted. */
  simS: number;
}

export interface TelemetryRun {
  readonly scenario: Scenario;
  readonly bench: Bench;
  /** The run's lines; a run plays once. */
  lines(): Generator<TimedLine>;
}

const SHAPES: readonly LineShape[] = ['kv', 'csv', 'json'];

/** Checks the options a person passes; throws an Error that says what is wrong. */
export function checkTelemetryOptions(o: TelemetryOptions): void {
  if (!SHAPES.includes(o.shape))
    throw new Error(`unknown line shape "${String(o.shape)}"; use one of ${SHAPES.join(', ')}`);
  if (!(Number.isFinite(o.sampleIntervalS) && o.sampleIntervalS > 0)) {
    throw new Error(`sample interval must be a positive number of seconds, got ${String(o.sampleIntervalS)}`);
  }
  if (o.durationS !== undefined && !(Number.isFinite(o.durationS) && o.durationS >= 0)) {
    throw new Error(`duration must be zero or a positive number of seconds, got ${String(o.durationS)}`);
  }
  if (o.seed !== undefined && !Number.isFinite(o.seed))
    throw new Error(`seed must be a number, got ${String(o.seed)}`);
}

function decimalsOf(intervalS: number): number {
  for (let d = 0; d < 4; d++)
    if (Math.abs(intervalS * 10 ** d - Math.round(intervalS * 10 ** d)) < 1e-9) return d;
  return 3;
}

function fieldKeys(useNtc: boolean): string[] {
  return ['t', 'vbat', 'ibat', useNtc ? 'ntc' : 'temp', 'vin', 'iin', 'chg', 'flt', 'src'];
}

/** What the firmware's ADCs report for the bench's true values. */
function measured(
  r: BenchReadings,
  useNtc: boolean,
  adcMax: number | null,
  noise: Rng,
): Record<string, LineValue> {
  const ibat = r.ibatA === 0 ? 0 : r.ibatA + noise.normal(0.0015);
  const values: Record<string, LineValue> = {
    t: r.tS,
    vbat: Math.max(0, r.vbatV + noise.normal(0.002)),
    ibat: Math.abs(ibat) < CURRENT_ZERO_CLAMP_A ? 0 : ibat,
  };
  if (useNtc) {
    const atRail = adcMax !== null && (r.ntcReading >= adcMax || r.ntcReading <= 0);
    const counts = atRail ? r.ntcReading : Math.round(r.ntcReading + noise.normal(0.7));
    values.ntc = adcMax === null ? counts : Math.min(adcMax, Math.max(0, counts));
  } else {
    values.temp = r.chargerTempC === null ? NO_THERMISTOR_TEMP_C : r.chargerTempC + noise.normal(0.05);
  }
  values.vin = Math.max(0, r.vinV + (r.vinV > 0 ? noise.normal(0.01) : 0));
  const iin = r.iinA === 0 ? 0 : r.iinA + noise.normal(0.001);
  values.iin = Math.max(0, Math.abs(iin) < CURRENT_ZERO_CLAMP_A ? 0 : iin);
  values.chg = r.chg;
  values.flt = r.flt;
  values.src = r.src;
  return values;
}

export function createTelemetryRun(scenario: Scenario, options: TelemetryOptions): TelemetryRun {
  checkTelemetryOptions(options);
  const seed = options.seed ?? DEFAULT_SEED;
  const durationS = options.durationS ?? scenario.durationS;
  const bench = createBench(scenario.bench, seed, Math.max(durationS, scenario.durationS));
  const useNtc = options.ntc ?? scenario.reportsNtc;
  const th = scenario.bench.thermistor;
  const adcMax = th.pullupOhm !== undefined || th.pulldownOhm !== undefined ? (th.adcMax ?? 4095) : null;
  const format = {
    checksum: options.checksum === true,
    digits: { t: decimalsOf(options.sampleIntervalS), vbat: 3, ibat: 3, temp: 1, vin: 2, iin: 3 },
  };
  const keys = fieldKeys(useNtc);

  let used = false;
  // One bench, one pass: a second pass would continue from where the first one stopped.
  function lines(): Generator<TimedLine> {
    if (used) throw new Error(`the telemetry run of "${scenario.name}" was already played; create a new one`);
    used = true;
    return play();
  }

  function* play(): Generator<TimedLine> {
    const noise = createRng(seed * 7919 + 17);
    const interval = options.sampleIntervalS;
    const substeps = Math.max(1, Math.ceil(interval / MAX_STEP_S));
    const dtS = interval / substeps;
    yield { text: `# charger boot fw ${FIRMWARE_VERSION}`, simS: 0 };
    if (scenario.board) yield { text: `# board=${scenario.board} fw=${FIRMWARE_VERSION}`, simS: 0 };
    const c = scenario.bench.charger;
    yield {
      text: `# config ${c.chemistry} ${c.cells}s set ${c.chargeCurrentA.toFixed(2)} A, ${(c.regulationVPerCell * c.cells).toFixed(2)} V`,
      simS: 0,
    };
    if (options.shape === 'csv') yield { text: csvHeaderLine(keys, { checksum: format.checksum }), simS: 0 };
    const emit = (): TimedLine => {
      const r = bench.readings();
      return {
        text: formatTelemetryLine(measured(r, useNtc, adcMax, noise), options.shape, format),
        simS: r.tS,
      };
    };
    // The first sample comes after one measurement interval, like a firmware that averages.
    const samples = Math.floor(durationS / interval + 1e-9);
    for (let k = 1; k <= samples; k++) {
      for (let j = 0; j < substeps; j++) {
        for (const message of bench.step(dtS)) yield { text: `# ${message}`, simS: bench.readings().tS };
      }
      yield emit();
    }
  }

  return { scenario, bench, lines };
}

/**
 * `taperline sweep`: the source's maximum power point from a set-point sweep in a run
 * (telemetry file, standard input or a recorded run), read through the same pipeline as a live
 * port, with the advice for the input set point. Exit 0 with a result, 3 when the data hold no
 * usable sweep (the reason on standard error), 2 for a usage error.
 */
import type { Command } from 'commander';
import { analyseSweep, type SweepReport } from '@shared/engine/sweep';
import { collectRun } from '../report/collect-run';
import { openLineInput } from './line-input';
import { positiveNumber } from './options';
import { loadProfileFile } from './profile-file';

interface SweepCliOptions {
  run: string;
  db?: string;
  profile?: string;
  json?: boolean;
  interval: string;
}

/** Exit status when the data hold no usable sweep. */
export const NO_SWEEP_EXIT = 3;

export function registerSweep(program: Command): void {
  program
    .command('sweep')
    .description(
      "Find a solar source's maximum power point from a sweep of the input set point, and say which way to turn it.",
    )
    .argument('[file]', 'telemetry file, - for standard input, or a .sqlite recording')
    .option('--run <id|latest>', 'which recorded run (with a database)', 'latest')
    .option('--db <file>', 'read a recorded run from this database')
    .option('--profile <file>', 'profile JSON (its inputSetpointV is shown beside the result)')
    .option('--json', 'print the result as one JSON object')
    .option('--interval <seconds>', 'seconds between lines that carry no device time', '1')
    .action(async (file: string | undefined, options: SweepCliOptions) => {
      const intervalS = positiveNumber('--interval', options.interval, 'seconds');
      const profile = options.profile ? loadProfileFile(options.profile) : null;
      const input = openLineInput(file, { db: options.db, run: options.run, intervalS });
      const run = await collectRun(input, profile);
      if (run.assumedProfileNote) process.stderr.write(`taperline: ${run.assumedProfileNote}\n`);
      const report = analyseSweep(run.samples, {
        setpointV: run.profile.inputSetpointV,
        panelTempCoeffPctPerC: run.profile.panelTempCoeffPctPerC ?? null,
      });
      process.stdout.write(options.json ? JSON.stringify(sweepJson(report)) + '\n' : formatSweepText(report));
      if (!report.ok) {
        process.stderr.write(`taperline: no usable sweep: ${report.reason}\n`);
        process.exitCode = NO_SWEEP_EXIT;
      }
    });
}

const round = (x: number | null, digits: number): number | null =>
  x === null || !Number.isFinite(x) ? null : Number(x.toFixed(digits));

/** The contract's fields first, then what this project adds (advice, light, temperature, whole run). */
export function sweepJson(r: SweepReport): Record<string, unknown> {
  return {
    mppV: round(r.mppV, 3),
    mppW: round(r.mppW, 3),
    setpointV: r.setpointV,
    operatingV: round(r.operatingV, 3),
    lossPct: round(r.lossPct, 2),
    fit: r.fit ? { points: r.fit.points, rmsW: round(r.fit.rmsW, 4), model: r.fit.model } : null,
    advice: r.advice,
    ...(r.ok ? {} : { reason: r.reason }),
    window: r.window,
    sweeps: r.sweeps,
    irradiance: r.irradiance && {
      changed: r.irradiance.changed,
      changePct: round(r.irradiance.changePct, 1),
      evidence: r.irradiance.evidence,
      restartedOn: r.irradiance.restartedOn,
    },
    temperature: r.temperature && {
      sweepTempC: round(r.temperature.sweepTempC, 1),
      coeffPctPerC: r.temperature.coeffPctPerC,
      shiftVPerC: round(r.temperature.shiftVPerC, 4),
      at25CV: round(r.temperature.at25CV, 2),
      text: r.temperature.text,
    },
    mpptEfficiency: r.day && {
      efficiency: round(r.day.efficiency, 4),
      takenWh: round(r.day.takenWh, 3),
      availableWh: round(r.day.availableWh, 3),
      coverage: round(r.day.coverage, 3),
      sweeps: r.day.sweeps,
    },
    refused: r.refused,
  };
}

export function formatSweepText(r: SweepReport): string {
  if (!r.ok) {
    return `No usable sweep: ${r.reason}\n`;
  }
  const v = (x: number | null, d = 2): string => (x === null ? 'unknown' : `${x.toFixed(d)} V`);
  const lines = [
    `Maximum power point: ${v(r.mppV)}, ${(r.mppW ?? 0).toFixed(2)} W ` +
      `(${r.fit?.model} fit of ${r.fit?.points} points, residual ${(r.fit?.rmsW ?? 0).toFixed(3)} W rms)`,
    `Sweep: ${r.window?.fromS.toFixed(0)}–${r.window?.toS.toFixed(0)} s (${r.sweeps} sweep${r.sweeps === 1 ? '' : 's'} in the run)`,
    `Operating point at the end: ${v(r.operatingV)}` +
      (r.lossPct === null ? '' : `, ${r.lossPct.toFixed(1)} % below the maximum`) +
      `; profile set point ${r.setpointV === null ? 'not set' : v(r.setpointV)}`,
    `Advice: ${r.advice}`,
  ];
  if (r.irradiance?.changed) {
    const on = r.irradiance.restartedOn;
    lines.push(
      `Light: ${r.irradiance.evidence}` +
        (on
          ? `; the fit was restarted on the steady stretch ${on.fromS.toFixed(0)}–${on.toS.toFixed(0)} s`
          : ''),
    );
  } else lines.push('Light: steady during the sweep');
  if (r.temperature) lines.push(`Panel temperature: ${r.temperature.text}`);
  if (r.day && r.day.efficiency !== null) {
    lines.push(
      `Whole run: MPPT efficiency about ${(r.day.efficiency * 100).toFixed(1)} % (energy taken over energy ` +
        `available at the maximum power point, as EN 50530 defines it; estimated from ${r.day.sweeps} ` +
        `sweep${r.day.sweeps === 1 ? '' : 's'} and the steady stretches, covering ${(r.day.coverage * 100).toFixed(0)} % of the run)`,
    );
  }
  return lines.join('\n') + '\n';
}

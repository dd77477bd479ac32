/** The `taperline` command line (docs/cli.md). Each command lives in its own module. */
import { Command, CommanderError } from 'commander';
import { UsageError } from './errors';
import { registerReplay } from './replay';
import { registerSimulate } from './simulate';
import { registerPorts } from './ports';
import { registerRecord } from './record';
import { registerServe } from './serve';
import { registerReport } from './report';
import { registerDiagnose } from './diagnose';
import { registerCheck } from './check';

export async function runCli(argv: string[]): Promise<number> {
  const program = new Command('taperline')
    .description('Watch, record, replay and explain battery charger telemetry.')
    .exitOverride()
    .configureOutput({ writeErr: (s) => process.stderr.write(s) });
  for (const register of [
    registerReplay,
    registerSimulate,
    registerPorts,
    registerRecord,
    registerServe,
    registerReport,
    registerDiagnose,
    registerCheck,
  ]) {
    register(program);
  }
  try {
    await program.parseAsync(argv, { from: 'user' });
    return typeof process.exitCode === 'number' ? process.exitCode : 0;
  } catch (err) {
    if (err instanceof CommanderError) {
      return err.exitCode === 0 ? 0 : 2;
    }
    if (err instanceof UsageError) {
      process.stderr.write(`taperline: ${err.message}\n`);
      return 2;
    }
    throw err;
  }
}

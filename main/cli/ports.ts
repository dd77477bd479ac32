/** `taperline ports`: the serial ports this machine has, to pick one for `record --port`. */
import type { Command } from 'commander';
import { listPorts, PortListError, type PortEntry } from '../serial/list';

function table(ports: PortEntry[]): string {
  const rows = ports.map((p) => [
    p.path,
    p.manufacturer ?? '',
    p.serialNumber ?? '',
    p.vendorId && p.productId ? `${p.vendorId}:${p.productId}` : '',
    p.byId.join(' '),
  ]);
  const header = ['PORT', 'MAKER', 'SERIAL NO.', 'USB ID', 'STABLE NAME (by-id)'];
  const widths = header.map((h, i) => Math.max(h.length, ...rows.map((r) => r[i].length)));
  return [header, ...rows]
    .map((r) =>
      r
        .map((c, i) => c.padEnd(widths[i]))
        .join('  ')
        .trimEnd(),
    )
    .join('\n');
}

export function registerPorts(program: Command): void {
  program
    .command('ports')
    .description('List the serial ports of this machine (path, maker, serial number, USB id, stable name).')
    .option('--json', 'print a JSON array instead of a table')
    .action(async (options: { json?: boolean }) => {
      let ports: PortEntry[];
      try {
        ports = await listPorts();
      } catch (err) {
        if (!(err instanceof PortListError)) throw err;
        process.stderr.write(`taperline: ${err.message}\n`);
        process.exitCode = 2;
        return;
      }
      if (options.json) {
        process.stdout.write(`${JSON.stringify(ports, null, 2)}\n`);
      } else if (ports.length === 0) {
        process.stdout.write(
          'No serial ports found. Plug the charger’s USB-serial bridge in, or give record --port PATH directly.\n',
        );
      } else {
        process.stdout.write(`${table(ports)}\n`);
      }
    });
}

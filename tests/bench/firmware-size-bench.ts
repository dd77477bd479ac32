/**
 * Flash and RAM the telemetry library costs on an ATmega328P: the ChargerAvr sketch built
 * with avr-gcc against the Arduino AVR core, with and without its library calls
 * (-DTAPERLINE_BASELINE keeps the same readings and sends them as raw bytes). Prints
 * figures; the goal (under 2 KB flash, 100 B RAM) is reported, not asserted.
 */
import { execFileSync } from 'node:child_process';
import { buildPath, make } from '../firmware/firmware-build';

const BUILD = 'build-bench';

function sizes(elf: string): { text: number; data: number; bss: number } {
  const out = execFileSync('avr-size', ['-A', elf], { encoding: 'utf8' });
  const section = (name: string) => Number(new RegExp(`^\\.${name}\\s+(\\d+)`, 'm').exec(out)?.[1] ?? 0);
  return { text: section('text'), data: section('data'), bss: section('bss') };
}

for (const shape of ['TL_KV', 'TL_CSV', 'TL_JSON']) {
  make(['avr'], { SKETCH_DEFS: `-DTAPERLINE_SHAPE=${shape}` }, BUILD);
  const withLib = sizes(buildPath(BUILD, 'avr', 'ChargerAvr.elf'));
  const base = sizes(buildPath(BUILD, 'avr', 'ChargerAvr-baseline.elf'));
  // Flash holds .text and the initial values of .data; RAM holds .data and .bss.
  const flash = withLib.text + withLib.data - (base.text + base.data);
  const ram = withLib.data + withLib.bss - (base.data + base.bss);
  console.log(
    `ChargerAvr ${shape.padEnd(7)} flash ${withLib.text + withLib.data} B (without the library ${base.text + base.data} B): ` +
      `library ${flash} B = ${((100 * flash) / 32256).toFixed(1)} % of the 32256 B an ATmega328P leaves beside its serial bootloader, goal < 2048 B ${flash < 2048 ? 'met' : 'NOT met'}; ` +
      `RAM ${withLib.data + withLib.bss} B (without ${base.data + base.bss} B): library ${ram} B incl. its 80 B line buffer, goal < 100 B ${ram < 100 ? 'met' : 'NOT met'}`,
  );
}

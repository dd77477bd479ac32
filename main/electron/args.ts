/**
 * Which of the desktop app's command-line arguments go to the backend child. Electron and
 * Chromium add switches of their own (and Playwright adds `--inspect`, `--remote-debugging-port`),
 * so only the options `taperline serve` knows are passed on, each with its value.
 */

/** Options of `taperline serve` that take a value. */
const VALUE_OPTIONS = new Set(['--simulate', '--speedup', '--db', '--station-port', '--baud', '--profile']);
/** Options of `taperline serve` without a value. */
const FLAG_OPTIONS = new Set(['--no-record']);

export function backendArgsFrom(argv: readonly string[]): string[] {
  const out: string[] = [];
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i];
    const eq = arg.indexOf('=');
    const name = eq > 0 ? arg.slice(0, eq) : arg;
    if (FLAG_OPTIONS.has(arg)) out.push(arg);
    else if (VALUE_OPTIONS.has(name) && eq > 0) out.push(name, arg.slice(eq + 1));
    else if (VALUE_OPTIONS.has(name) && i + 1 < argv.length) out.push(name, argv[++i]);
  }
  return out;
}

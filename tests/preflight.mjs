#!/usr/bin/env node
/**
 * Runs first in `npm test`: are the system tools the tests use installed? Takes well under a
 * second. Missing ones are installed with apt-get when running as root (as .ci/run does),
 * unless TAPERLINE_PREFLIGHT_INSTALL=0; otherwise it stops with one line naming them and the
 * command that installs them, instead of minutes of spawn errors later.
 */
import { spawnSync } from 'node:child_process';
import { accessSync, constants } from 'node:fs';
import { delimiter, join } from 'node:path';

/** [what the tests need, how to find it, the Debian package that provides it] */
const NEEDS = [
  ['socat', { cmd: 'socat' }, 'socat'],
  ['chromium', { file: '/usr/bin/chromium' }, 'chromium'],
  ['udevadm', { cmd: 'udevadm' }, 'udev'],
  ['Xvfb', { cmd: 'Xvfb' }, 'xvfb'],
  ['mosquitto', { cmd: 'mosquitto', dirs: ['/usr/sbin'] }, 'mosquitto'],
  ['ser2net', { cmd: 'ser2net', dirs: ['/usr/sbin'] }, 'ser2net'],
  ['gcc', { cmd: 'gcc' }, 'gcc'],
  ['make', { cmd: 'make' }, 'make'],
  ['python3', { cmd: 'python3' }, 'python3'],
  ['pkg-config', { cmd: 'pkg-config' }, 'pkg-config'],
  ['avr-gcc', { cmd: 'avr-gcc' }, 'gcc-avr'],
  ['avr-libc', { file: '/usr/lib/avr/include/avr/io.h' }, 'avr-libc'],
  [
    'Arduino AVR core',
    { file: '/usr/share/arduino/hardware/arduino/avr/cores/arduino/Arduino.h' },
    'arduino-core-avr',
  ],
  ['simavr', { cmd: 'simavr' }, 'simavr'],
  ['libsimavr headers', { file: '/usr/include/simavr/sim_avr.h' }, 'libsimavr-dev'],
  ['libelf headers', { file: '/usr/include/libelf.h' }, 'libelf-dev'],
];

function isExecutable(path) {
  try {
    accessSync(path, constants.X_OK);
    return true;
  } catch {
    return false;
  }
}

function found(how) {
  if (how.file) {
    try {
      accessSync(how.file, constants.R_OK);
      return true;
    } catch {
      return false;
    }
  }
  // Daemons live in /usr/sbin, which a user's PATH may leave out.
  const dirs = [...(process.env.PATH ?? '').split(delimiter).filter(Boolean), ...(how.dirs ?? [])];
  return dirs.some((dir) => isExecutable(join(dir, how.cmd)));
}

const missing = () => NEEDS.filter(([, how]) => !found(how));

let absent = missing();
if (absent.length === 0) process.exit(0);

const packages = [...new Set(absent.map(([, , pkg]) => pkg))];
const isRoot = typeof process.getuid === 'function' && process.getuid() === 0;
const mayInstall = process.env.TAPERLINE_PREFLIGHT_INSTALL !== '0';
// TAPERLINE_APT_GET lets the preflight's own test watch the calls without installing anything.
const aptGet = process.env.TAPERLINE_APT_GET ?? '/usr/bin/apt-get';

if (isRoot && mayInstall && isExecutable(aptGet)) {
  console.log(`preflight: installing ${packages.join(' ')} with apt-get`);
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  const opts = { stdio: 'inherit', env };
  const update = spawnSync(aptGet, ['update', '-qq'], opts);
  const install =
    update.status === 0
      ? spawnSync(aptGet, ['install', '-y', '-qq', '--no-install-recommends', ...packages], opts)
      : update;
  absent = missing();
  if (install.status === 0 && absent.length === 0) process.exit(0);
}

const names = absent.map(([name, , pkg]) => (name === pkg ? name : `${name} (${pkg})`)).join(', ');
const still = [...new Set(absent.map(([, , pkg]) => pkg))].join(' ');
console.error(
  `preflight: the tests need system tools that are missing: ${names}. Install them with: sudo apt-get install -y ${still}`,
);
process.exit(1);

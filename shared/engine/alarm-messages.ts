/**
 * What each alarm says: what happened, with the numbers, and what to do. Built only when an
 * alarm is raised, never per sample.
 */
import type { ResolvedProfile } from '../chemistry/types';
import { formatRunClock } from './time-format';

const f = (x: number, digits: number): string => (x === x ? x.toFixed(digits) : '?');
const minutes = (s: number): string => `${Math.round(s / 60)} min`;

export function overtempMessage(tempC: number, highC: number, cutoffC = highC): string {
  if (tempC <= cutoffC)
    return (
      `Pack at ${f(tempC, 1)} °C, above the ${f(highC, 0)} °C top of the charge window of this profile ` +
      `(cut-off ${f(cutoffC, 0)} °C); reduce the charge current or cool the pack, and watch that it does not keep rising.`
    );
  return (
    `Pack at ${f(tempC, 1)} °C, above the ${f(cutoffC, 0)} °C charge ${cutoffC === highC ? 'limit' : 'cut-off'} of this profile; ` +
    'stop charging and let it cool; check the thermistor contact and the airflow around the pack.'
  );
}

export function undertempMessage(tempC: number, lowC: number, p: ResolvedProfile): string {
  const why =
    p.chemistry === 'lead-acid' || p.chemistry === 'nimh'
      ? 'a cold pack accepts charge poorly'
      : 'charging a cold lithium cell can plate lithium and damage it';
  return (
    `Pack at ${f(tempC, 1)} °C, below the ${f(lowC, 0)} °C charge limit of this profile (${why}); ` +
    'let it warm up before charging, and check that the thermistor reads the pack, not a cold spot.'
  );
}

export function overvoltageMessage(
  vbatV: number,
  p: ResolvedProfile,
  limitVPerCell = p.overvoltageVPerCell,
  tempC = NaN,
): string {
  const compensated =
    limitVPerCell !== p.overvoltageVPerCell && tempC === tempC
      ? ` (${f(p.overvoltageVPerCell, 2)} V/cell at 25 °C, compensated to ${f(tempC, 1)} °C)`
      : '';
  return (
    `Pack at ${f(vbatV, 2)} V (${f(vbatV / p.cells, 3)} V/cell), above the ${f(limitVPerCell, 2)} V/cell ` +
    `limit for ${p.chemistry}${compensated}; disconnect the charger now, then check its voltage set point and that the ` +
    `pack really has ${p.cells} cell${p.cells === 1 ? '' : 's'} in series as the profile says.`
  );
}

export function stallMessage(
  stalledS: number,
  vPerCell: number,
  ahSince: number,
  phase: string,
  p: ResolvedProfile,
): string {
  return (
    `No progress for ${minutes(stalledS)} in ${phase}: the pack held at ${f(vPerCell * p.cells, 2)} V ` +
    `(${f(vPerCell, 3)} V/cell) and only ${f(ahSince, 3)} Ah went in; check the charger output, ` +
    'the wiring and the pack connection, and whether the current sensor reads.'
  );
}

export function preconditionTimeoutMessage(precondS: number, vPerCell: number, p: ResolvedProfile): string {
  return (
    `The pack is still below the ${f(p.preconditionVPerCell, 2)} V/cell precondition threshold ` +
    `(now ${f(vPerCell, 3)} V/cell) after ${minutes(precondS)} of precondition (limit ${f(p.preconditionTimeoutMin, 0)} min); ` +
    'a cell may be damaged or shorted: stop, measure each cell, and do not force a full-current charge.'
  );
}

export function preconditionFaultMessage(vPerCell: number, p: ResolvedProfile): string {
  return (
    `The charger raised its fault output during precondition at ${f(vPerCell, 3)} V/cell ` +
    `(threshold ${f(p.preconditionVPerCell, 2)} V/cell); it gave up recovering the pack: ` +
    'a cell may be damaged; stop and measure each cell before trying again.'
  );
}

export function timerMessage(chargeS: number, currentA: number, p: ResolvedProfile): string {
  return (
    `Charging has run ${minutes(chargeS)}, the ${f(p.timerMin ?? 0, 0)} min safety timer of this profile, ` +
    `without reaching termination (now ${f(currentA, 3)} A, ends at ${f(p.terminationA, 3)} A); ` +
    'stop and check for a weak or damaged cell, a load on the pack, or a capacityAh that is too small.'
  );
}

export function inputLowMessage(vinV: number, vbatV: number, setpointV: number | null): string {
  const limit =
    setpointV !== null && vinV <= setpointV * 1.01
      ? `at or under the ${f(setpointV, 1)} V input set point`
      : `under the pack voltage ${f(vbatV, 2)} V`;
  return (
    `Source at ${f(vinV, 2)} V is ${limit}: the panel or adapter cannot supply what the charger asks. ` +
    'Expected at dusk or under cloud; otherwise check the source, its cable and the set point.'
  );
}

export function silenceMessage(quietS: number, silenceS: number): string {
  return (
    `No telemetry for ${f(quietS, 0)} s (limit ${f(silenceS, 0)} s); the charger is not being watched. ` +
    'Check the cable and the port, that the board is powered, and the baud rate.'
  );
}

export function faultPinMessage(vbatV: number, ibatA: number, tempC: number): string {
  return (
    `The charger's fault output is asserted (pack ${f(vbatV, 2)} V, ${f(ibatA, 3)} A, ${f(tempC, 1)} °C); ` +
    'look up the fault conditions in the charger datasheet and check the temperature sensor, the input and the pack connection.'
  );
}

export function reverseCurrentMessage(ibatA: number, limitA: number): string {
  return (
    `The pack is discharging into the charger at ${f(ibatA, 3)} A (limit ${f(-limitA, 3)} A, C/50) while a ` +
    'source is present; check for a charger that leaks backwards, a load on the pack, or a current sensor wired the wrong way.'
  );
}

export function sensorFaultMessage(detail: string): string {
  return (
    `Temperature protection is blind: ${detail}. The charge goes on without a temperature limit; ` +
    'stop charging, then check the thermistor, its connector and its wires (an open NTC reads at the ADC rail), ' +
    "and the profile's thermistor settings."
  );
}

export function contactMessage(
  openings: number,
  steps: number,
  windowS: number,
  lastT: number,
  critical: boolean,
): string {
  const parts: string[] = [];
  if (openings > 0) parts.push(`the current dropped to zero and came back ${openings} time(s)`);
  if (steps > 0) parts.push(`the pack voltage stepped ${steps} time(s) with no current step`);
  return (
    `Intermittent contact: ${parts.join(' and ')} in the last ${minutes(windowS)} (the last at ${formatRunClock(lastT)})` +
    (critical ? ', and it keeps repeating' : '') +
    '; check the pack connector, crimps and screw terminals for looseness, corrosion or heat, ' +
    'wiggle each while watching the Line feed, and do not leave the charge unattended until it is fixed.'
  );
}

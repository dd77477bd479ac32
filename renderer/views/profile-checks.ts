/**
 * Checks of a profile as typed in the form, before the backend sees it: values that are allowed
 * but unusual enough to be a slip (40 cells, 20 A on a 6 Ah pack) get a warning; refusals name
 * the form's field labels rather than JSON keys; the safety timer says why it has no default.
 * Pure (no DOM), so it is tested with plain values.
 */
import { CHEMISTRY_DEFAULTS } from '@shared/chemistry/defaults';
import type { Chemistry } from '@shared/chemistry/types';

/**
 * Pack voltage above which a warning asks to check the cell count: 60 V DC, the usual upper
 * bound of extra-low voltage (IEC 61140 protection classes; from memory).
 */
const ELV_LIMIT_V = 60;

/**
 * Charge rates above which a warning is shown, in C: lithium cells are usually charged at
 * 0.5–1C and rarely allow more (Battery University BU-409; common practice); lead-acid bulk at
 * up to about 0.3C (common practice); NiMH rapid charge 0.5–1C (Panasonic "Charge Methods for
 * Nickel Metal Hydride Batteries").
 */
const MAX_C: Record<Chemistry, number> = {
  'li-ion': 1,
  'li-ion-hv': 1,
  lifepo4: 1,
  'lead-acid': 0.3,
  nimh: 1,
};

const num = (v: unknown): number | null => (typeof v === 'number' && Number.isFinite(v) ? v : null);

export function profileWarnings(typed: Record<string, unknown>): string[] {
  const chemistry = typed.chemistry as Chemistry;
  const defaults = CHEMISTRY_DEFAULTS[chemistry];
  if (!defaults) return [];
  const out: string[] = [];
  const cells = num(typed.cells);
  const capacityAh = num(typed.capacityAh);
  const chargeA = num(typed.chargeCurrentA);
  const termA = num(typed.terminationA);
  const regV = num(typed.regulationVPerCell) ?? defaults.regulationVPerCell;
  if (cells !== null && cells * regV > ELV_LIMIT_V)
    out.push(
      `${cells} cells in series make a pack of about ${(cells * regV).toFixed(0)} V, above the ${ELV_LIMIT_V} V limit of extra-low voltage: check the cell count, and treat the pack as a hazardous-voltage installation if it is right.`,
    );
  if (chargeA !== null && capacityAh !== null && capacityAh > 0) {
    const c = chargeA / capacityAh;
    if (c > MAX_C[chemistry])
      out.push(
        `${chargeA} A on a ${capacityAh} Ah pack is ${c.toFixed(1)}C; ${chemistry} cells are usually charged at no more than ${MAX_C[chemistry]}C. Check the datasheet's maximum charge current.`,
      );
  }
  if (chargeA !== null && termA !== null && termA >= chargeA)
    out.push(
      `The termination current (${termA} A) is not below the charge current (${chargeA} A): the charge would end as soon as it starts.`,
    );
  const typedReg = num(typed.regulationVPerCell);
  if (typedReg !== null && typedReg > defaults.overvoltageVPerCell)
    out.push(
      `A regulation voltage of ${typedReg} V/cell is above the ${chemistry} overvoltage limit of ${defaults.overvoltageVPerCell} V/cell.`,
    );
  out.push(...designValueWarnings(typed.expect));
  return out;
}

/** The board's design values (`expect`) with their form labels and units. */
export const DESIGN_VALUES: readonly { key: string; label: string; unit: string }[] = [
  { key: 'chargeCurrentA', label: 'Charge current (CC level)', unit: 'A' },
  { key: 'regulationV', label: 'Regulation voltage (pack)', unit: 'V' },
  { key: 'terminationA', label: 'Termination current', unit: 'A' },
  { key: 'preconditionA', label: 'Precondition current', unit: 'A' },
  { key: 'timerMin', label: 'Safety timer', unit: 'min' },
  { key: 'efficiency', label: 'Efficiency', unit: '0..1' },
  { key: 'tempRiseC', label: 'Temperature rise', unit: '°C' },
  { key: 'inputV', label: 'Input voltage held', unit: 'V' },
  { key: 'chargeTimeMin', label: 'Charge time', unit: 'min' },
];

/** A design value with one bound, or its bounds the wrong way round, is a slip worth saying. */
function designValueWarnings(expect: unknown): string[] {
  if (!expect || typeof expect !== 'object') return [];
  const out: string[] = [];
  for (const { key, label, unit } of DESIGN_VALUES) {
    const range = (expect as Record<string, unknown>)[key];
    if (!Array.isArray(range)) continue;
    const [lo, hi] = [num(range[0]), num(range[1])];
    if ((lo === null) !== (hi === null))
      out.push(
        `Design value ${label}: only the ${lo === null ? 'highest' : 'lowest'} value is typed; give both, a run passes between them.`,
      );
    else if (lo !== null && hi !== null && lo > hi)
      out.push(`Design value ${label}: the lowest (${lo} ${unit}) is above the highest (${hi} ${unit}).`);
  }
  return out;
}

/**
 * Why the safety timer is empty by default, and a value to start from: a charger's timer
 * depends on the charger, so no chemistry default is given (none was found published for any
 * chemistry here, LiFePO4 included). A common choice is 1.5 times the expected charge time,
 * capacity ÷ charge current (common practice).
 */
export function timerHint(typed: Record<string, unknown>): string {
  if (num(typed.timerMin) !== null) return '';
  const why =
    'Safety timer: no default, because the right value depends on your charger and no published value for this chemistry was found.';
  const capacityAh = num(typed.capacityAh);
  const chargeA = num(typed.chargeCurrentA);
  if (capacityAh === null || chargeA === null || chargeA <= 0)
    return `${why} Type the capacity and charge current to see a starting value.`;
  const min = Math.round(((1.5 * capacityAh) / chargeA) * 60);
  return `${why} A common starting value is 1.5 × capacity ÷ charge current = ${min} min (common practice); use your charger's own setting if it has one.`;
}

/** A refusal such as `tempWindowC.1: must be ...` worded with the form's label for that key. */
export function labelMessage(
  key: string | null,
  message: string,
  labelFor: (key: string) => string | null,
): string {
  if (!key) return message;
  const label = labelFor(key) ?? labelFor(key.split('.').slice(0, -1).join('.'));
  if (!label) return message;
  return message.startsWith(`${key}:`) ? `${label}:${message.slice(key.length + 1)}` : `${label}: ${message}`;
}

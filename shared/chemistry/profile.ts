/**
 * Profile validation (docs/profile.md): the user's JSON -> a ResolvedProfile with every
 * limit filled in from the chemistry's defaults, or a refusal that names the bad key and why.
 */
import { z } from 'zod';
import {
  ASSUMED_CAPACITY_AH,
  CHEMISTRY_DEFAULTS,
  DEFAULT_PRECONDITION_TIMEOUT_MIN,
  DEFAULT_SILENCE_S,
  DEFAULT_STALL_MIN,
  PRECONDITION_TIMER_FRACTION,
} from './defaults';
import { keyConversion } from '../telemetry/units';
import type { CanonicalField, FieldMap } from '../telemetry/types';
import { CHEMISTRIES, type Chemistry, type ProfileResult, type ResolvedProfile } from './types';

/** The caution shown wherever a person sets charge limits. */
export const PROFILE_CAUTION =
  'Caution: charging lithium and lead-acid batteries can start fires, release gas and injure. ' +
  'The limits in a profile must come from the cell maker\u2019s datasheet; the defaults here are ' +
  'generic starting points, not a guarantee. Follow local electrical and fire codes, charge on a ' +
  'non-flammable surface, and never leave a charging pack unattended without independent protection ' +
  '(fuse, thermal cut-off, battery management).';

const finite = () => z.number().finite();
const positive = () => z.number().finite().positive();

// Upper bounds: far beyond any charger on a bench, low enough that every figure derived
// from them (C-rates, per-pack voltages, timers in seconds) stays a finite number, so a
// typing slip such as 1e308 is refused by its own key instead of overflowing elsewhere.
const MAX_AH = 1e6;
const MAX_A = 1e5;
const MAX_V_PER_CELL = 10; // no chemistry here comes near 5 V per cell
const MAX_MIN = 1e6; // about two years
const MAX_S = 1e7;
const MAX_CAL = 1e9;
const amps = () => positive().max(MAX_A);
const voltsPerCell = () => positive().max(MAX_V_PER_CELL);
const minutes = () => positive().max(MAX_MIN);

const fieldMappingSchema = z.strictObject({
  key: z.string().min(1).max(200),
  unit: z.string().min(1).max(20).optional(),
  scale: finite()
    .min(-MAX_CAL)
    .max(MAX_CAL)
    .refine((v) => v !== 0, 'must not be 0: every reading would become the offset')
    .optional(),
  offset: finite().min(-MAX_CAL).max(MAX_CAL).optional(),
});

const fieldsSchema = z.strictObject({
  t: fieldMappingSchema.optional(),
  vbat: fieldMappingSchema.optional(),
  ibat: fieldMappingSchema.optional(),
  temp: fieldMappingSchema.optional(),
  ntc: fieldMappingSchema.optional(),
  vin: fieldMappingSchema.optional(),
  iin: fieldMappingSchema.optional(),
  chg: fieldMappingSchema.optional(),
  flt: fieldMappingSchema.optional(),
  src: fieldMappingSchema.optional(),
});

const dividerShape = {
  pullupOhm: positive().max(1e9).optional(),
  pulldownOhm: positive().max(1e9).optional(),
  adcMax: z
    .number()
    .int()
    .positive()
    .max(2 ** 32)
    .optional(),
};

/** `[min, max]` of one design value; a reversed pair is refused with the key named. */
const rangeSchema = () =>
  z
    .tuple([finite(), finite()])
    .refine(([min, max]) => min <= max, { message: 'must be [min, max] with min at most max' });

/** `expect`: what the board was designed to do, each key a `[min, max]` in its unit (board checks). */
const expectSchema = z.strictObject({
  chargeCurrentA: rangeSchema().optional(),
  regulationV: rangeSchema().optional(),
  terminationA: rangeSchema().optional(),
  preconditionA: rangeSchema().optional(),
  timerMin: rangeSchema().optional(),
  efficiency: rangeSchema().optional(),
  tempRiseC: rangeSchema().optional(),
  inputV: rangeSchema().optional(),
  chargeTimeMin: rangeSchema().optional(),
});

const thermistorSchema = z.discriminatedUnion('model', [
  z.strictObject({
    model: z.literal('beta'),
    r25: positive().max(1e9),
    beta: positive().max(1e5),
    ...dividerShape,
  }),
  z.strictObject({
    model: z.literal('steinhart-hart'),
    a: finite(),
    b: finite(),
    c: finite(),
    ...dividerShape,
  }),
]);

/** The profile JSON as a user writes it. Strict: an unknown key is an error naming it. */
export const profileSchema = z.strictObject({
  name: z.string().min(1).max(200).optional(),
  chemistry: z.enum(CHEMISTRIES as [Chemistry, ...Chemistry[]]),
  cells: z.number().int().min(1).max(64),
  capacityAh: positive().max(MAX_AH).optional(),
  chargeCurrentA: amps().optional(),
  terminationA: amps().optional(),
  timerMin: minutes().nullable().optional(),
  tempWindowC: z.tuple([finite(), finite()]).optional(),
  inputSetpointV: positive().max(1e5).nullable().optional(),
  regulationVPerCell: voltsPerCell().optional(),
  overvoltageVPerCell: voltsPerCell().optional(),
  preconditionVPerCell: voltsPerCell().optional(),
  preconditionA: amps().optional(),
  preconditionTimeoutMin: minutes().optional(),
  stallMin: minutes().optional(),
  silenceS: positive().max(MAX_S).optional(),
  // Beyond the common keys of docs/profile.md: the chemistry-specific limits of ResolvedProfile, so a gel battery
  // (float 2.25 V, −5 mV/°C) or a particular NiMH cell can be described without code changes.
  floatVPerCell: voltsPerCell().optional(),
  minusDeltaVPerCell: positive().max(1).optional(),
  dTdtCPerMin: positive().max(100).optional(),
  tempCompVPerCPerCell: finite().min(-0.1).max(0).optional(),
  fields: fieldsSchema.optional(),
  thermistor: thermistorSchema.optional(),
  expect: expectSchema.optional(),
});

export type ProfileInput = z.infer<typeof profileSchema>;

/** Keys a profile may override, for profileFromChemistry. */
export type ProfileOverrides = Omit<ProfileInput, 'chemistry' | 'cells'>;

function show(value: unknown): string {
  if (value === undefined) return 'nothing';
  if (value !== null && typeof value === 'object' && nestingDepth(value, 4) > 3)
    return Array.isArray(value) ? 'a nested array' : 'a nested object';
  try {
    const text = JSON.stringify(value);
    return text.length > 60 ? `${text.slice(0, 57)}...` : text;
  } catch {
    return Array.isArray(value) ? 'an array' : typeof value;
  }
}

/** A profile is at most this deep (fields.vbat.key is 3); deeper input is refused before validation. */
const MAX_PROFILE_DEPTH = 4;

/** Depth of nested objects/arrays, counted without recursion and without going past `limit`. */
function nestingDepth(value: unknown, limit: number): number {
  let deepest = 0;
  const stack: [unknown, number][] = [[value, 1]];
  while (stack.length > 0) {
    const [v, depth] = stack.pop() as [unknown, number];
    if (v === null || typeof v !== 'object') continue;
    if (depth > deepest) deepest = depth;
    if (depth > limit) return depth;
    for (const child of Object.values(v as object)) stack.push([child, depth + 1]);
  }
  return deepest;
}

/** The first key path at which the input nests deeper than a profile can, or null. */
function tooDeep(input: unknown): ProfileResult | null {
  // Not an object at all: the schema says so (and describes the value without printing it).
  if (input === null || typeof input !== 'object' || Array.isArray(input)) return null;
  const stack: [unknown, string[]][] = [[input, []]];
  while (stack.length > 0) {
    const [v, path] = stack.pop() as [unknown, string[]];
    if (v === null || typeof v !== 'object') continue;
    if (path.length >= MAX_PROFILE_DEPTH) {
      const key = path.join('.');
      return {
        ok: false,
        key,
        error:
          `${key}: nested deeper than any profile key can be (the deepest is fields.<field>.key); ` +
          'check that the file is a profile (got a deeply nested value)',
      };
    }
    for (const [k, child] of Object.entries(v as Record<string, unknown>)) stack.push([child, [...path, k]]);
  }
  return null;
}

function fail(key: string, why: string, got: unknown): ProfileResult {
  return { ok: false, key, error: `${key}: ${why} (got ${show(got)})` };
}

/** The keys allowed where an unknown key was found, for the message. */
function knownKeysAt(path: string[], input: unknown): string[] {
  if (path.length === 0) return Object.keys(profileSchema.shape);
  if (path.length === 1 && path[0] === 'fields') return Object.keys(fieldsSchema.shape);
  if (path.length === 1 && path[0] === 'expect') return Object.keys(expectSchema.shape);
  if (path.length === 2 && path[0] === 'fields') return Object.keys(fieldMappingSchema.shape);
  if (path.length === 1 && path[0] === 'thermistor') {
    const model = input && typeof input === 'object' ? (input as Record<string, unknown>).model : undefined;
    const common = Object.keys(dividerShape);
    return ['model', ...(model === 'steinhart-hart' ? ['a', 'b', 'c'] : ['r25', 'beta']), ...common];
  }
  return [];
}

/** Turn the first zod issue into a message that names the key (dotted path) and says why. */
function describeIssue(issue: z.core.$ZodIssue): ProfileResult {
  const path = issue.path.map(String);
  const input = (issue as { input?: unknown }).input;
  switch (issue.code) {
    case 'unrecognized_keys': {
      const key = [...path, issue.keys[0]].join('.');
      const extra = issue.keys.length > 1 ? `; also unknown: ${issue.keys.slice(1).join(', ')}` : '';
      const value =
        input && typeof input === 'object' ? (input as Record<string, unknown>)[issue.keys[0]] : undefined;
      return {
        ok: false,
        key,
        error: `${key}: unknown key; known keys here are ${knownKeysAt(path, input).join(', ')}${extra} (got ${show(value)})`,
      };
    }
    case 'invalid_union': {
      const key = path.join('.') || 'profile';
      const options = (issue as { options?: unknown[] }).options;
      const given = input && typeof input === 'object' ? (input as Record<string, unknown>).model : input;
      return fail(key, `must be one of ${(options ?? []).map((o) => `"${String(o)}"`).join(', ')}`, given);
    }
    case 'invalid_type': {
      const key = path.join('.') || 'profile';
      if (input === undefined) return fail(key, `is required (a ${issue.expected})`, undefined);
      const expected =
        issue.expected === 'int'
          ? 'a whole number'
          : `${/^[aeiou]/.test(issue.expected) ? 'an' : 'a'} ${issue.expected}`;
      return fail(key, `must be ${expected}`, input);
    }
    case 'invalid_value': {
      const key = path.join('.') || 'profile';
      return fail(key, `must be one of ${issue.values.map((v) => `"${String(v)}"`).join(', ')}`, input);
    }
    case 'too_small':
    case 'too_big': {
      const key = path.join('.') || 'profile';
      const bound = issue.code === 'too_small' ? issue.minimum : issue.maximum;
      if (issue.origin === 'array' || issue.origin === 'string') {
        const what = issue.origin === 'array' ? 'items' : 'characters';
        const rel = issue.code === 'too_small' ? 'at least' : 'at most';
        return fail(key, `must have ${rel} ${String(bound)} ${what}`, input);
      }
      const rel =
        issue.code === 'too_small'
          ? issue.inclusive
            ? 'at least'
            : 'above'
          : issue.inclusive
            ? 'at most'
            : 'below';
      return fail(key, `must be ${rel} ${String(bound)}`, input);
    }
    default: {
      const key = path.join('.') || 'profile';
      return fail(key, issue.message, input);
    }
  }
}

/** Cross-field sense of a filled-in profile. `given` = keys the user wrote, to name the one to change. */
function checkConsistency(p: ResolvedProfile, given: Set<string>): ProfileResult | null {
  const origin = (key: string) => (given.has(key) ? '' : ` (default for ${p.chemistry})`);
  const [lowC, highC] = p.tempWindowC;
  if (!(lowC < highC))
    return fail('tempWindowC', 'the low limit must be below the high limit', p.tempWindowC);
  if (lowC < -40 || highC > 80) {
    return fail(
      'tempWindowC',
      'must lie within -40..80 °C; no chemistry here charges outside it',
      p.tempWindowC,
    );
  }
  if (!(p.terminationA < p.chargeCurrentA)) {
    return fail(
      'terminationA',
      `must be below chargeCurrentA ${p.chargeCurrentA} A${origin('chargeCurrentA')}, or the charge would end as it starts` +
        (given.has('terminationA') ? '' : `; the default is ${p.terminationA} A, set terminationA`),
      p.terminationA,
    );
  }
  if (p.preconditionA > p.chargeCurrentA) {
    return fail('preconditionA', `must not exceed chargeCurrentA ${p.chargeCurrentA} A`, p.preconditionA);
  }
  if (!(p.preconditionVPerCell < p.regulationVPerCell)) {
    const key = given.has('preconditionVPerCell') ? 'preconditionVPerCell' : 'regulationVPerCell';
    return fail(
      key,
      `preconditionVPerCell ${p.preconditionVPerCell} V${origin('preconditionVPerCell')} must be below regulationVPerCell ${p.regulationVPerCell} V${origin('regulationVPerCell')}`,
      key === 'preconditionVPerCell' ? p.preconditionVPerCell : p.regulationVPerCell,
    );
  }
  if (!(p.regulationVPerCell < p.overvoltageVPerCell)) {
    const key = given.has('overvoltageVPerCell') ? 'overvoltageVPerCell' : 'regulationVPerCell';
    return fail(
      key,
      `regulationVPerCell ${p.regulationVPerCell} V${origin('regulationVPerCell')} must be below overvoltageVPerCell ${p.overvoltageVPerCell} V${origin('overvoltageVPerCell')}; ` +
        'set both from the cell datasheet (for 4.35 V cells use chemistry "li-ion-hv")',
      key === 'overvoltageVPerCell' ? p.overvoltageVPerCell : p.regulationVPerCell,
    );
  }
  if (p.floatVPerCell !== null && !(p.floatVPerCell < p.regulationVPerCell)) {
    return fail(
      'floatVPerCell',
      `must be below the absorption voltage regulationVPerCell ${p.regulationVPerCell} V`,
      p.floatVPerCell,
    );
  }
  if (p.floatVPerCell !== null && !(p.floatVPerCell > p.preconditionVPerCell)) {
    return fail(
      'floatVPerCell',
      `must be above preconditionVPerCell ${p.preconditionVPerCell} V`,
      p.floatVPerCell,
    );
  }
  return null;
}

const CHEMISTRY_ONLY: ReadonlyArray<[keyof ProfileInput, Chemistry, string]> = [
  ['floatVPerCell', 'lead-acid', 'only lead-acid has a float stage'],
  ['tempCompVPerCPerCell', 'lead-acid', 'temperature compensation applies to lead-acid only'],
  ['minusDeltaVPerCell', 'nimh', '−ΔV termination applies to NiMH only'],
  ['dTdtCPerMin', 'nimh', 'dT/dt termination applies to NiMH only'],
];

/** Units that fit their field, and no device key mapped onto two fields. */
function checkFields(fields: FieldMap): ProfileResult | null {
  const owner = new Map<string, string>();
  for (const [field, mapping] of Object.entries(fields) as [CanonicalField, FieldMap[CanonicalField]][]) {
    if (mapping === undefined) continue;
    const conversion = keyConversion(field, mapping);
    if (typeof conversion === 'string') {
      const key = mapping.unit !== undefined ? `fields.${field}.unit` : `fields.${field}`;
      // The telemetry layer's text names the field itself; lead with the key like every refusal here.
      const why = conversion.replace(/^fields\.[a-z]+(\.unit)?:?\s*/, '');
      return fail(key, why, mapping.unit ?? mapping);
    }
    const previous = owner.get(mapping.key);
    if (previous !== undefined) {
      return fail(
        `fields.${field}.key`,
        `the device key is already mapped to ${previous}; one key feeds one field`,
        mapping.key,
      );
    }
    owner.set(mapping.key, field);
  }
  return null;
}

function resolve(input: ProfileInput): ProfileResult {
  for (const [key, chemistry, why] of CHEMISTRY_ONLY) {
    if (input[key] !== undefined && input.chemistry !== chemistry) {
      return fail(key, `${why}, not ${input.chemistry}; remove it`, input[key]);
    }
  }
  const fieldProblem = input.fields ? checkFields(input.fields) : null;
  if (fieldProblem) return fieldProblem;
  const th = input.thermistor;
  if (th) {
    if (th.pullupOhm !== undefined && th.pulldownOhm !== undefined) {
      return fail(
        'thermistor.pulldownOhm',
        'give pullupOhm or pulldownOhm, not both (one fixed resistor)',
        th.pulldownOhm,
      );
    }
    if (th.model === 'steinhart-hart') {
      const curve = steinhartHartProblem(th.a, th.b, th.c);
      if (curve)
        return fail(curve.key, curve.why, th[curve.key.slice('thermistor.'.length) as 'a' | 'b' | 'c']);
    }
    if (th.adcMax !== undefined && th.pullupOhm === undefined && th.pulldownOhm === undefined) {
      return fail(
        'thermistor.adcMax',
        'only means something with pullupOhm or pulldownOhm; without a divider ntc is read as ohms',
        th.adcMax,
      );
    }
  }

  const d = CHEMISTRY_DEFAULTS[input.chemistry];
  const defaulted: string[] = [];
  const pick = <K extends keyof ProfileInput, V>(key: K, fallback: V): NonNullable<ProfileInput[K]> | V => {
    const v = input[key];
    if (v === undefined) {
      if (fallback !== null) defaulted.push(key);
      return fallback;
    }
    return v as NonNullable<ProfileInput[K]>;
  };

  // Capacity: given; else from the charge current at the chemistry's usual C-rate; else assumed.
  const capacityAh =
    input.capacityAh ??
    (input.chargeCurrentA !== undefined ? input.chargeCurrentA / d.chargeCurrentC : ASSUMED_CAPACITY_AH);
  if (input.capacityAh === undefined) defaulted.push('capacityAh');
  const chargeCurrentA = pick('chargeCurrentA', round6(capacityAh * d.chargeCurrentC));
  const timerMin = input.timerMin ?? null;
  const profile: ResolvedProfile = {
    name: input.name ?? `${input.cells}-cell ${input.chemistry}`,
    chemistry: input.chemistry,
    cells: input.cells,
    capacityAh,
    chargeCurrentA,
    // Capped at half the charge current, as precondition is capped at it: a small charger
    // on a big pack still gets a CV taper to end on (common practice).
    terminationA: pick('terminationA', round6(Math.min(capacityAh * d.terminationC, chargeCurrentA / 2))),
    timerMin,
    tempWindowC: [...pick('tempWindowC', d.tempWindowC)] as [number, number],
    inputSetpointV: input.inputSetpointV ?? null,
    regulationVPerCell: pick('regulationVPerCell', d.regulationVPerCell),
    floatVPerCell: pick('floatVPerCell', d.floatVPerCell),
    overvoltageVPerCell: pick('overvoltageVPerCell', d.overvoltageVPerCell),
    preconditionVPerCell: pick('preconditionVPerCell', d.preconditionVPerCell),
    // Capped at the charge current: a gentle pre-charge is never above the main charge.
    preconditionA: pick('preconditionA', round6(Math.min(capacityAh * d.preconditionC, chargeCurrentA))),
    preconditionTimeoutMin: pick(
      'preconditionTimeoutMin',
      timerMin !== null ? timerMin * PRECONDITION_TIMER_FRACTION : DEFAULT_PRECONDITION_TIMEOUT_MIN,
    ),
    stallMin: pick('stallMin', DEFAULT_STALL_MIN),
    silenceS: pick('silenceS', DEFAULT_SILENCE_S),
    minusDeltaVPerCell: pick('minusDeltaVPerCell', d.minusDeltaVPerCell),
    dTdtCPerMin: pick('dTdtCPerMin', d.dTdtCPerMin),
    tempCompVPerCPerCell: pick('tempCompVPerCPerCell', d.tempCompVPerCPerCell),
    fields: input.fields ?? {},
    defaulted,
  };
  if (th) profile.thermistor = th;
  if (input.expect) profile.expect = input.expect;
  const given = new Set(Object.keys(input));
  return checkConsistency(profile, given) ?? { ok: true, profile };
}

/**
 * Whether Steinhart-Hart coefficients describe an NTC at all: 1/T = a + b ln R + c (ln R)^3
 * (Steinhart and Hart, Deep Sea Research 15 (1968) 497-503) must give a temperature above
 * absolute zero that falls as R rises, checked at 1 kΩ, 10 kΩ and 100 kΩ (the usual NTC range).
 */
function steinhartHartProblem(a: number, b: number, c: number): { key: string; why: string } | null {
  if (a === 0 && b === 0 && c === 0)
    return {
      key: 'thermistor.a',
      why: 'a, b and c are all 0, which is no thermistor curve; take them from the NTC datasheet',
    };
  for (const ohm of [1e3, 1e4, 1e5]) {
    const lnR = Math.log(ohm);
    const inverseK = a + b * lnR + c * lnR ** 3;
    const slope = b + 3 * c * lnR ** 2; // d(1/T)/d(ln R): positive for an NTC
    if (!(inverseK > 0) || !Number.isFinite(1 / inverseK) || !(slope > 0)) {
      return {
        key: 'thermistor.b',
        why:
          `with a=${a}, b=${b}, c=${c} the curve gives no NTC temperature at ${ohm} Ω ` +
          '(1/T must be above 0 and rise with resistance); check the coefficients and their order',
      };
    }
  }
  return null;
}

function round6(x: number): number {
  return Math.round(x * 1e6) / 1e6;
}

/** Validate a profile (docs/profile.md) and fill in every default. Never throws. */
export function parseProfile(input: unknown): ProfileResult {
  const deep = tooDeep(input);
  if (deep) return deep;
  const parsed = profileSchema.safeParse(input, { reportInput: true });
  if (!parsed.success) return describeIssue(parsed.error.issues[0]);
  return resolve(parsed.data);
}

/** A resolved profile from a chemistry and cell count, for demos and tests. Throws on a bad combination. */
export function profileFromChemistry(
  chemistry: Chemistry,
  cells: number,
  overrides: ProfileOverrides = {},
): ResolvedProfile {
  const result = parseProfile({ ...overrides, chemistry, cells });
  if (!result.ok) throw new Error(`profileFromChemistry: ${result.error}`);
  return result.profile;
}

/** The set point per cell at a temperature: lead-acid compensation, none elsewhere. */
export function compensatedVPerCell(
  profile: ResolvedProfile,
  vPerCellAt25C: number,
  tempC: number | undefined,
): number {
  if (profile.tempCompVPerCPerCell === null || tempC === undefined) return vPerCellAt25C;
  // The reference temperature of the lead-acid set points is 25 °C (BU-403; published).
  return vPerCellAt25C + profile.tempCompVPerCPerCell * (tempC - 25);
}

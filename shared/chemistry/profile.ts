/**
 * Profile validation (the profile keys of the README): the user's JSON -> a ResolvedProfile with every
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

const fieldMappingSchema = z.strictObject({
  key: z.string().min(1),
  unit: z.string().min(1).optional(),
  scale: finite().optional(),
  offset: finite().optional(),
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
  pullupOhm: positive().optional(),
  pulldownOhm: positive().optional(),
  adcMax: z.number().int().positive().optional(),
};

const thermistorSchema = z.discriminatedUnion('model', [
  z.strictObject({ model: z.literal('beta'), r25: positive(), beta: positive(), ...dividerShape }),
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
  capacityAh: positive().optional(),
  chargeCurrentA: positive().optional(),
  terminationA: positive().optional(),
  timerMin: positive().nullable().optional(),
  tempWindowC: z.tuple([finite(), finite()]).optional(),
  inputSetpointV: positive().nullable().optional(),
  regulationVPerCell: positive().optional(),
  overvoltageVPerCell: positive().optional(),
  preconditionVPerCell: positive().optional(),
  preconditionA: positive().optional(),
  preconditionTimeoutMin: positive().optional(),
  stallMin: positive().optional(),
  silenceS: positive().optional(),
  // Beyond the README's list: the chemistry-specific limits of ResolvedProfile, so a gel battery
  // (float 2.25 V, −5 mV/°C) or a particular NiMH cell can be described without code changes.
  floatVPerCell: positive().optional(),
  minusDeltaVPerCell: positive().optional(),
  dTdtCPerMin: positive().optional(),
  tempCompVPerCPerCell: finite().max(0).optional(),
  // Solar source: the panel's voltage temperature coefficient in %/C of its datasheet (about
  // -0.3 to -0.45 for crystalline silicon, common practice); the Sweep view uses it to say how
  // the best set point moves with panel temperature (extra channel `tpanel`).
  panelTempCoeffPctPerC: finite().min(-2).max(2).nullable().optional(),
  fields: fieldsSchema.optional(),
  thermistor: thermistorSchema.optional(),
});

export type ProfileInput = z.infer<typeof profileSchema>;

/** Keys a profile may override, for profileFromChemistry. */
export type ProfileOverrides = Omit<ProfileInput, 'chemistry' | 'cells'>;

function show(value: unknown): string {
  if (value === undefined) return 'nothing';
  try {
    const text = JSON.stringify(value);
    return text.length > 60 ? `${text.slice(0, 57)}...` : text;
  } catch {
    return String(value);
  }
}

function fail(key: string, why: string, got: unknown): ProfileResult {
  return { ok: false, key, error: `${key}: ${why} (got ${show(got)})` };
}

/** The keys allowed where an unknown key was found, for the message. */
function knownKeysAt(path: string[], input: unknown): string[] {
  if (path.length === 0) return Object.keys(profileSchema.shape);
  if (path.length === 1 && path[0] === 'fields') return Object.keys(fieldsSchema.shape);
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
    terminationA: pick('terminationA', round6(capacityAh * d.terminationC)),
    timerMin,
    tempWindowC: [...pick('tempWindowC', d.tempWindowC)] as [number, number],
    inputSetpointV: input.inputSetpointV ?? null,
    panelTempCoeffPctPerC: input.panelTempCoeffPctPerC ?? null,
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
  const given = new Set(Object.keys(input));
  return checkConsistency(profile, given) ?? { ok: true, profile };
}

function round6(x: number): number {
  return Math.round(x * 1e6) / 1e6;
}

/** Validate a profile (the README's keys) and fill in every default. Never throws. */
export function parseProfile(input: unknown): ProfileResult {
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

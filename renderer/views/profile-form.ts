/**
 * The profile editor: chemistry presets, cells, capacity, currents, limits, the board's design
 * values and the field mapping, turned into profile JSON (docs/profile.md). An empty box means "the chemistry's
 * default"; what the user typed is sent as typed, so the backend's refusal names the key.
 */
import { keysNotShown, withCarriedKeys } from './profile-carry';
import { CHEMISTRY_DEFAULTS } from '@shared/chemistry/defaults';
import { gardenSensorPack } from '@shared/chemistry/demo-profiles';
import type { ResolvedProfile } from '@shared/chemistry/types';
import { CHEMISTRIES } from '@shared/chemistry/types';
import type { CanonicalField } from '@shared/telemetry/types';
import { h } from '../dom';
import { DESIGN_VALUES, labelMessage, profileWarnings, timerHint } from './profile-checks';

interface NumberField {
  key: string;
  label: string;
  unit: string;
  hint?: string;
}

const BASICS: NumberField[] = [
  { key: 'cells', label: 'Cells in series', unit: '' },
  { key: 'capacityAh', label: 'Capacity', unit: 'Ah' },
  { key: 'chargeCurrentA', label: 'Charge current', unit: 'A' },
  { key: 'terminationA', label: 'Termination current', unit: 'A' },
];

const LIMITS: NumberField[] = [
  { key: 'timerMin', label: 'Safety timer', unit: 'min', hint: 'empty = chemistry default' },
  { key: 'tempWindowC.0', label: 'Charge window, lowest', unit: '°C' },
  { key: 'tempWindowC.1', label: 'Charge window, highest', unit: '°C' },
  { key: 'inputSetpointV', label: 'MPPT / input set point', unit: 'V' },
  { key: 'regulationVPerCell', label: 'Regulation voltage', unit: 'V/cell' },
  { key: 'overvoltageVPerCell', label: 'Overvoltage limit', unit: 'V/cell' },
  { key: 'preconditionVPerCell', label: 'Precondition below', unit: 'V/cell' },
  { key: 'preconditionA', label: 'Precondition current', unit: 'A' },
  { key: 'preconditionTimeoutMin', label: 'Precondition timeout', unit: 'min' },
  { key: 'stallMin', label: 'Stall after', unit: 'min' },
  { key: 'silenceS', label: 'Silence after', unit: 's' },
];

const MAPPED_FIELDS: { field: CanonicalField; words: string; unitHint: string }[] = [
  { field: 't', words: 'device time', unitHint: 's, ms' },
  { field: 'vbat', words: 'pack voltage', unitHint: 'V, mV' },
  { field: 'ibat', words: 'charge current', unitHint: 'A, mA' },
  { field: 'temp', words: 'pack temperature', unitHint: 'C' },
  { field: 'ntc', words: 'thermistor reading', unitHint: 'counts, Ohm' },
  { field: 'vin', words: 'source voltage', unitHint: 'V, mV' },
  { field: 'iin', words: 'source current', unitHint: 'A, mA' },
  { field: 'chg', words: 'charging pin', unitHint: '0/1' },
  { field: 'flt', words: 'fault pin', unitHint: '0/1' },
  { field: 'src', words: 'source kind', unitHint: 'text' },
];

/** Invented demo presets (no real product): starting points to edit, not recommendations. */
export const PRESETS: { label: string; profile: Record<string, unknown> }[] = [
  { label: 'Li-ion (chemistry defaults)', profile: { chemistry: 'li-ion', cells: 1 } },
  { label: 'Li-ion high voltage (chemistry defaults)', profile: { chemistry: 'li-ion-hv', cells: 1 } },
  { label: 'LiFePO4 (chemistry defaults)', profile: { chemistry: 'lifepo4', cells: 4 } },
  { label: 'Lead-acid (chemistry defaults)', profile: { chemistry: 'lead-acid', cells: 6 } },
  { label: 'NiMH (chemistry defaults)', profile: { chemistry: 'nimh', cells: 4 } },
  {
    label: 'Demo: garden sensor, 3S Li-ion 2.5 Ah',
    profile: { name: 'garden-sensor 3S Li-ion', ...gardenSensorPack() },
  },
  {
    label: 'Demo: weather station, 4S LiFePO4 6 Ah on a panel',
    profile: {
      name: 'weather-station 4S LiFePO4',
      chemistry: 'lifepo4',
      cells: 4,
      capacityAh: 6,
      chargeCurrentA: 2,
      inputSetpointV: 17.5,
    },
  },
  {
    label: "Demo: boat's house battery, 12 V lead-acid 100 Ah",
    profile: {
      name: 'boat house battery',
      chemistry: 'lead-acid',
      cells: 6,
      capacityAh: 100,
      chargeCurrentA: 10,
    },
  },
];

/** A table's header row, one column heading per name. */
function columnHeads(names: string[]): HTMLElement {
  return h('thead', {}, h('tr', {}, ...names.map((name) => h('th', { scope: 'col' }, name))));
}

export interface ProfileForm {
  root: HTMLElement;
  /** The profile JSON of the form as typed. */
  read(): Record<string, unknown>;
  fill(profile: Record<string, unknown>): void;
  /** Show a refusal next to the field its key names (or at the top when no field matches). */
  showError(key: string | null, message: string | null): void;
  /** Show the resolved defaults as placeholders. */
  showDefaults(resolved: ResolvedProfile | null): void;
  onChange(cb: () => void): void;
}

export function createProfileForm(idPrefix: string): ProfileForm {
  const inputs = new Map<string, HTMLInputElement | HTMLSelectElement>();
  const errors = new Map<string, HTMLElement>();
  const changeListeners: (() => void)[] = [];
  const summary = h('p', { class: 'form-error', role: 'alert', id: `${idPrefix}-error`, hidden: true });

  const numberRow = (f: NumberField) => {
    const id = `${idPrefix}-${f.key.replace(/\./g, '-')}`;
    const input = h('input', {
      id,
      type: 'text',
      inputmode: 'decimal',
      autocomplete: 'off',
      'data-key': f.key,
      'aria-describedby': `${id}-err`,
    });
    const err = h('span', { class: 'field-error', id: `${id}-err`, 'aria-live': 'polite' });
    inputs.set(f.key, input);
    errors.set(f.key, err);
    return h(
      'div',
      { class: 'form-row' },
      h('label', { for: id }, f.label, f.unit ? h('span', { class: 'unit' }, ` [${f.unit}]`) : null),
      input,
      err,
    );
  };

  const nameId = `${idPrefix}-name`;
  const name = h('input', {
    id: nameId,
    type: 'text',
    autocomplete: 'off',
    'data-key': 'name',
    maxlength: 200,
  });
  inputs.set('name', name);
  errors.set('name', h('span', { class: 'field-error', id: `${nameId}-err` }));
  const chemId = `${idPrefix}-chemistry`;
  const chemistry = h('select', { id: chemId, 'data-key': 'chemistry' });
  for (const c of CHEMISTRIES) chemistry.append(h('option', { value: c }, c));
  inputs.set('chemistry', chemistry);
  errors.set('chemistry', h('span', { class: 'field-error' }));

  const presetId = `${idPrefix}-preset`;
  const preset = h('select', { id: presetId });
  preset.append(h('option', { value: '' }, 'Pick a preset…'));
  PRESETS.forEach((p, i) => preset.append(h('option', { value: String(i) }, p.label)));
  preset.addEventListener('change', () => {
    const p = PRESETS[Number(preset.value)];
    if (p) {
      form.fill(p.profile);
      changed();
    }
  });

  const mappingRows = MAPPED_FIELDS.map(({ field, words, unitHint }) => {
    const keyInput = h('input', {
      type: 'text',
      autocomplete: 'off',
      'data-key': `fields.${field}.key`,
      'aria-label': `Device key for ${words} (${field})`,
      placeholder: field,
    });
    const unitInput = h('input', {
      type: 'text',
      autocomplete: 'off',
      'data-key': `fields.${field}.unit`,
      'aria-label': `Unit of ${words} (${unitHint})`,
      placeholder: unitHint,
    });
    inputs.set(`fields.${field}.key`, keyInput);
    inputs.set(`fields.${field}.unit`, unitInput);
    const err = h('span', { class: 'field-error' });
    errors.set(`fields.${field}`, err);
    return h(
      'tr',
      {},
      h('th', { scope: 'row' }, h('code', {}, field), ` ${words}`),
      h('td', {}, keyInput),
      h('td', {}, unitInput),
      h('td', {}, err),
    );
  });

  const designRows = DESIGN_VALUES.map((f) => {
    const bound = (i: 0 | 1) => {
      const input = h('input', {
        id: `${idPrefix}-expect-${f.key}-${i === 0 ? 'min' : 'max'}`,
        type: 'text',
        inputmode: 'decimal',
        autocomplete: 'off',
        'data-key': `expect.${f.key}.${i}`,
        'aria-label': `${f.label}, ${i === 0 ? 'lowest' : 'highest'} [${f.unit}]`,
      });
      inputs.set(`expect.${f.key}.${i}`, input);
      return input;
    };
    const err = h('span', { class: 'field-error', 'aria-live': 'polite' });
    errors.set(`expect.${f.key}`, err);
    return h(
      'tr',
      {},
      h('th', { scope: 'row' }, f.label, h('span', { class: 'unit' }, ` [${f.unit}]`)),
      h('td', {}, bound(0)),
      h('td', {}, bound(1)),
      h('td', {}, err),
    );
  });

  const caution = h(
    'div',
    { class: 'caution', role: 'note', 'aria-label': 'Safety caution' },
    h('strong', {}, '▲ Caution: '),
    'lithium and lead-acid charging can start fires and injure. Take every limit from the cell maker’s datasheet, not from these defaults; follow local electrical and fire codes, charge on a non-flammable surface, and never leave a charging pack unattended without independent protection (fuse, thermal cut-off, battery management).',
  );

  const warnBox = h('div', {
    class: 'profile-warnings',
    id: `${idPrefix}-warnings`,
    role: 'status',
    hidden: true,
  });
  const timerNote = h('p', { class: 'quiet timer-hint', id: `${idPrefix}-timer-hint` });
  const fieldLabel = (key: string): string | null => {
    const f = [...BASICS, ...LIMITS].find((x) => x.key === key);
    if (f) return f.label;
    if (key === 'tempWindowC') return 'Charge window';
    const design = /^expect\.(\w+)(?:\.([01]))?$/.exec(key);
    if (design) {
      const label = DESIGN_VALUES.find((x) => x.key === design[1])?.label ?? design[1];
      const side = design[2] === undefined ? '' : design[2] === '0' ? ', lowest' : ', highest';
      return `Design value ${label}${side}`;
    }
    if (key === 'name') return 'Profile name';
    if (key === 'chemistry') return 'Chemistry';
    const m = /^fields\.(\w+)(?:\.(key|unit))?$/.exec(key);
    if (m) {
      const words = MAPPED_FIELDS.find((x) => x.field === m[1])?.words ?? m[1];
      return m[2] === 'unit' ? `Unit of ${words}` : `Device key for ${words}`;
    }
    return null;
  };
  const refreshChecks = () => {
    const typed = form.read();
    const warnings = profileWarnings(typed);
    warnBox.hidden = warnings.length === 0;
    warnBox.replaceChildren(
      ...warnings.map((w) => h('p', { class: 'profile-warning' }, h('strong', {}, '▲ Check this: '), w)),
      ...(warnings.length
        ? [
            h(
              'p',
              { class: 'quiet' },
              'These values are allowed, but unusual. Charging lithium and lead-acid batteries can start fires and injure: take every limit from the cell maker’s datasheet and follow local electrical codes.',
            ),
          ]
        : []),
    );
    timerNote.textContent = timerHint(typed);
  };

  const root = h(
    'div',
    { class: 'profile-form' },
    summary,
    warnBox,
    h('div', { class: 'form-row' }, h('label', { for: presetId }, 'Preset'), preset),
    h('div', { class: 'form-row' }, h('label', { for: nameId }, 'Profile name'), name, errors.get('name')!),
    h(
      'div',
      { class: 'form-row' },
      h('label', { for: chemId }, 'Chemistry'),
      chemistry,
      errors.get('chemistry')!,
    ),
    h('fieldset', {}, h('legend', {}, 'Pack'), ...BASICS.map(numberRow)),
    h(
      'fieldset',
      { class: 'limits' },
      h('legend', {}, 'Limits (empty = chemistry default)'),
      caution,
      ...LIMITS.map(numberRow),
      timerNote,
    ),
    h(
      'fieldset',
      { class: 'design-values' },
      h('legend', {}, 'Design values of the board (empty = not checked)'),
      h(
        'p',
        { class: 'quiet design-note' },
        'What the charger board was designed to do, from its schematic and its parts’ datasheets: every run is judged pass or fail against [lowest, highest]. Without better figures, regulation ±1 % and charge current ±10 % are the usual classes of charger ICs’ datasheets; your own datasheet wins.',
      ),
      h(
        'table',
        { class: 'mapping-table design-table' },
        columnHeads(['Value', 'Lowest', 'Highest', '']),
        h('tbody', {}, ...designRows),
      ),
    ),
    h(
      'fieldset',
      {},
      h('legend', {}, 'Field mapping: which key the device prints for each field'),
      h(
        'table',
        { class: 'mapping-table' },
        columnHeads(['Field', 'Device key', 'Unit', '']),
        h('tbody', {}, ...mappingRows),
      ),
    ),
  );

  const changed = () => {
    refreshChecks();
    changeListeners.forEach((cb) => cb());
  };
  root.addEventListener('input', (e) => {
    if (e.target !== preset) changed();
  });

  const value = (input: HTMLInputElement | HTMLSelectElement): unknown => {
    const text = input.value.trim();
    if (text === '') return undefined;
    const n = Number(text);
    return Number.isFinite(n) ? n : text;
  };

  let carried: Record<string, unknown> = {};
  const shownKeys = new Set([
    'name',
    'chemistry',
    'tempWindowC',
    'fields',
    'expect',
    ...[...BASICS, ...LIMITS].map((f) => f.key),
  ]);

  const form: ProfileForm = {
    root,
    read() {
      const out: Record<string, unknown> = {};
      const nameText = name.value.trim();
      if (nameText) out.name = nameText;
      out.chemistry = chemistry.value;
      for (const f of [...BASICS, ...LIMITS]) {
        if (f.key.startsWith('tempWindowC')) continue;
        const v = value(inputs.get(f.key)!);
        if (v !== undefined) out[f.key] = v;
      }
      const lo = value(inputs.get('tempWindowC.0')!);
      const hi = value(inputs.get('tempWindowC.1')!);
      // One bound typed: the other is the chemistry's default ("empty = chemistry default").
      if (lo !== undefined || hi !== undefined) {
        const def = CHEMISTRY_DEFAULTS[chemistry.value as keyof typeof CHEMISTRY_DEFAULTS]?.tempWindowC ?? [
          null,
          null,
        ];
        out.tempWindowC = [lo ?? def[0], hi ?? def[1]];
      }
      const fields: Record<string, Record<string, unknown>> = {};
      for (const { field } of MAPPED_FIELDS) {
        const key = inputs.get(`fields.${field}.key`)!.value.trim();
        const unit = inputs.get(`fields.${field}.unit`)!.value.trim();
        if (!key && !unit) continue;
        fields[field] = { key: key || field, ...(unit ? { unit } : {}) };
      }
      if (Object.keys(fields).length) out.fields = fields;
      const expect: Record<string, unknown[]> = {};
      for (const f of DESIGN_VALUES) {
        const lo = value(inputs.get(`expect.${f.key}.0`)!);
        const hi = value(inputs.get(`expect.${f.key}.1`)!);
        // One bound alone is sent as typed, so the refusal asks for the other.
        if (lo !== undefined || hi !== undefined) expect[f.key] = [lo ?? null, hi ?? null];
      }
      if (Object.keys(expect).length) out.expect = expect;
      return withCarriedKeys(carried, out);
    },
    fill(profile) {
      carried = keysNotShown(profile, shownKeys);
      for (const input of inputs.values()) if (input instanceof HTMLInputElement) input.value = '';
      name.value = typeof profile.name === 'string' ? profile.name : '';
      if (typeof profile.chemistry === 'string') chemistry.value = profile.chemistry;
      for (const f of [...BASICS, ...LIMITS]) {
        if (f.key.startsWith('tempWindowC')) continue;
        const v = profile[f.key];
        if (typeof v === 'number') (inputs.get(f.key) as HTMLInputElement).value = String(v);
      }
      const win = profile.tempWindowC;
      if (Array.isArray(win)) {
        (inputs.get('tempWindowC.0') as HTMLInputElement).value =
          win[0] === null || win[0] === undefined ? '' : String(win[0]);
        (inputs.get('tempWindowC.1') as HTMLInputElement).value =
          win[1] === null || win[1] === undefined ? '' : String(win[1]);
      }
      const expect = (profile.expect ?? {}) as Record<string, unknown>;
      for (const f of DESIGN_VALUES) {
        const range = expect[f.key];
        if (!Array.isArray(range)) continue;
        range.slice(0, 2).forEach((v, i) => {
          if (typeof v === 'number')
            (inputs.get(`expect.${f.key}.${i}`) as HTMLInputElement).value = String(v);
        });
      }
      const fields = (profile.fields ?? {}) as Record<string, { key?: string; unit?: string }>;
      for (const [field, m] of Object.entries(fields)) {
        const k = inputs.get(`fields.${field}.key`) as HTMLInputElement | undefined;
        const u = inputs.get(`fields.${field}.unit`) as HTMLInputElement | undefined;
        if (k && m?.key) k.value = m.key;
        if (u && m?.unit) u.value = m.unit;
      }
      refreshChecks();
    },
    showError(key, message) {
      for (const [k, el] of errors) {
        el.textContent = '';
        inputs.get(k)?.removeAttribute('aria-invalid');
      }
      for (const input of inputs.values()) input.removeAttribute('aria-invalid');
      if (!message) {
        summary.hidden = true;
        summary.textContent = '';
        return;
      }
      summary.hidden = false;
      const worded = labelMessage(key, message, fieldLabel);
      summary.textContent = `Profile refused: ${worded}`;
      message = worded;
      if (!key) return;
      // The most specific field the key names: `fields.vbat.unit`, then `fields.vbat`, ...
      const parts = key.split('.');
      for (let n = parts.length; n > 0; n--) {
        const k = parts.slice(0, n).join('.');
        const el = errors.get(k) ?? (k === 'tempWindowC' ? errors.get('tempWindowC.0') : undefined);
        if (el) {
          el.textContent = message;
          const input =
            inputs.get(key) ??
            inputs.get(k) ??
            inputs.get(`${k}.key`) ??
            inputs.get(`${k}.0`) ??
            (k === 'tempWindowC' ? inputs.get('tempWindowC.0') : undefined);
          input?.setAttribute('aria-invalid', 'true');
          return;
        }
      }
    },
    showDefaults(resolved) {
      if (!resolved) return;
      const r = resolved as unknown as Record<string, unknown>;
      for (const f of [...BASICS, ...LIMITS]) {
        const input = inputs.get(f.key) as HTMLInputElement;
        const v = f.key.startsWith('tempWindowC') ? resolved.tempWindowC[Number(f.key.slice(-1))] : r[f.key];
        input.placeholder = v === null ? 'none' : v === undefined ? '' : `default ${v}`;
      }
    },
    onChange(cb) {
      changeListeners.push(cb);
    },
  };
  refreshChecks();
  return form;
}

/** A resolved profile back into the form's JSON (for editing a running station's profile). */
export function resolvedToJson(p: ResolvedProfile): Record<string, unknown> {
  return {
    name: p.name,
    chemistry: p.chemistry,
    cells: p.cells,
    capacityAh: p.capacityAh,
    chargeCurrentA: p.chargeCurrentA,
    terminationA: p.terminationA,
    ...(p.timerMin !== null ? { timerMin: p.timerMin } : {}),
    tempWindowC: p.tempWindowC,
    ...(p.inputSetpointV !== null ? { inputSetpointV: p.inputSetpointV } : {}),
    ...(p.expect ? { expect: p.expect } : {}),
    fields: p.fields,
  };
}

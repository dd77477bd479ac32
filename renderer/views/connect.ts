/**
 * Connect & profile: pick a serial port (with its maker, serial number and USB ids) or a
 * simulator scenario, set the port's framing, edit the profile with a live preview of how
 * lines read with it, and add the station or apply the profile to a running one. Every
 * change is checked by `profile.validate`; a refusal shows next to the field it names.
 */
import {
  CONNECTABLE_KINDS,
  parseTcpAddress,
  SOURCE_KIND_TITLES,
  type ConnectableSourceConfig,
} from '@shared/sources/schemas';
import type { ResolvedProfile } from '@shared/chemistry/types';
import type { LineOutcome } from '@shared/engine/pipeline';
import type { Api } from '../api';
import { button, h } from '../dom';
import { formatNumber } from '../format';
import type { Navigator, View, ViewTarget } from '../router';
import type { Store } from '../store';
import { errorText } from '../wire';
import { createProfileForm, PRESETS, resolvedToJson, type ProfileForm } from './profile-form';

const BAUD_RATES = [9600, 19200, 38400, 57600, 115200, 230400, 460800, 921600];
const VALIDATE_DEBOUNCE_MS = 250;
/** Invented demo lines (key=value, CSV header + row, JSON, a firmware note) for the preview. */
const DEMO_LINES = [
  '# garden-sensor charger v0.3 (demo line)',
  't=812.5 vbat=11.214 ibat=0.998 temp=27.1 vin=14.9 iin=0.82 chg=1 flt=0',
  '{"t":813.5,"vbat":11.216,"ibat":0.997,"temp":27.1}',
  't=814.5 vbat=11218mV ibat=996mA temp=27.2C',
  't=815.5 vbat=eleven ibat=0.99',
].join('\n');

interface PortRow {
  path: string;
  manufacturer?: string | null;
  serialNumber?: string | null;
  vendorId?: string | null;
  productId?: string | null;
}

export class ConnectView implements View {
  private readonly form: ProfileForm;
  private readonly status = h('p', { class: 'connect-status', role: 'status', 'aria-live': 'polite' });
  private readonly portsHost = h('div', { class: 'ports-host' });
  private readonly scenariosHost = h('div', { class: 'scenarios-host' });
  private readonly previewInput = h('textarea', { id: 'preview-lines', rows: 6, spellcheck: 'false' });
  private readonly previewOut = h('div', { class: 'preview-out', 'aria-live': 'polite' });
  private readonly stationIdInput = h('input', {
    id: 'station-id',
    type: 'text',
    autocomplete: 'off',
    value: 'bench-2',
    maxlength: 64,
  });
  private readonly stationLabelInput = h('input', {
    id: 'station-label',
    type: 'text',
    autocomplete: 'off',
    maxlength: 120,
  });
  private readonly applySelect = h('select', { id: 'apply-station' });
  /** A path typed by hand: a pty, a /dev/serial/by-id/ link, a port the list does not show. */
  private readonly typedPath = h('input', {
    id: 'serial-path',
    type: 'text',
    autocomplete: 'off',
    spellcheck: 'false',
    placeholder: '/dev/pts/7 or /dev/serial/by-id/usb-…',
  });
  private readonly baud = h('select', { id: 'serial-baud' });
  private readonly dataBits = h('select', { id: 'serial-databits' });
  private readonly parity = h('select', { id: 'serial-parity' });
  private readonly stopBits = h('select', { id: 'serial-stopbits' });
  private readonly matchSerial = h('input', { id: 'serial-match', type: 'checkbox', checked: true });
  private readonly speedup = h('input', {
    id: 'sim-speedup',
    type: 'text',
    inputmode: 'decimal',
    value: '60',
  });
  private readonly tcpAddress = h('input', {
    id: 'tcp-address',
    type: 'text',
    placeholder: 'tcp://192.168.1.40:4000',
    spellcheck: 'false',
  });
  private sourceKind: ConnectableSourceConfig['kind'] = 'simulator';
  private selectedPort: PortRow | null = null;
  private selectedScenario: string | null = null;
  private validateTimer = 0;
  private lastValid: ResolvedProfile | null = null;
  private validity: { ok: boolean; message: string | null } = { ok: true, message: null };

  constructor(
    root: HTMLElement,
    private readonly store: Store,
    private readonly api: Api,
    private readonly nav: Navigator,
  ) {
    this.form = createProfileForm('profile');
    this.form.fill(PRESETS[5].profile);
    this.form.onChange(() => this.scheduleValidate());
    for (const b of BAUD_RATES)
      this.baud.append(h('option', { value: String(b), selected: b === 115200 }, String(b)));
    for (const d of [8, 7, 6, 5]) this.dataBits.append(h('option', { value: String(d) }, String(d)));
    for (const p of ['none', 'even', 'odd']) this.parity.append(h('option', { value: p }, p));
    for (const s of [1, 2]) this.stopBits.append(h('option', { value: String(s) }, String(s)));
    this.previewInput.value = DEMO_LINES;
    this.previewInput.addEventListener('input', () => this.scheduleValidate());

    const kindGroup = h('div', { class: 'kind-group', role: 'radiogroup', 'aria-label': 'Kind of source' });
    // The kinds a person can pick, and their words, come from the one table of source kinds.
    for (const kind of CONNECTABLE_KINDS) {
      const words = SOURCE_KIND_TITLES[kind];
      const id = `source-kind-${kind}`;
      const radio = h('input', {
        type: 'radio',
        name: 'source-kind',
        id,
        value: kind,
        checked: kind === this.sourceKind,
      });
      radio.addEventListener('change', () => {
        this.sourceKind = kind;
        this.renderSourcePanes();
      });
      kindGroup.append(h('label', { for: id, class: 'radio-label' }, radio, ` ${words}`));
    }
    const serialPane = h(
      'div',
      { class: 'serial-pane', id: 'serial-pane' },
      h(
        'div',
        { class: 'pane-tools' },
        button('Refresh ports', () => void this.loadPorts(), { class: 'btn' }),
      ),
      this.portsHost,
      h(
        'div',
        { class: 'form-row typed-path' },
        h('label', { for: 'serial-path' }, 'Or type a path'),
        this.typedPath,
        h(
          'span',
          { class: 'quiet' },
          'A typed path is used instead of the list: a pty of a test rig, or a stable /dev/serial/by-id/ name.',
        ),
      ),
      h(
        'div',
        { class: 'serial-settings' },
        labelled('serial-baud', 'Baud rate', this.baud),
        labelled('serial-databits', 'Data bits', this.dataBits),
        labelled('serial-parity', 'Parity', this.parity),
        labelled('serial-stopbits', 'Stop bits', this.stopBits),
        h(
          'div',
          { class: 'form-row' },
          h(
            'label',
            { for: 'serial-match', class: 'check-label' },
            this.matchSerial,
            ' Find this device again by its serial number after a replug',
          ),
        ),
      ),
    );
    const tcpPane = h(
      'div',
      { class: 'tcp-pane', id: 'tcp-pane' },
      labelled('tcp-address', 'Address of the board or serial-to-network server', this.tcpAddress),
      h(
        'p',
        { class: 'quiet' },
        'A raw TCP stream of the same telemetry lines. Lost connections are retried; the run keeps going with a gap.',
      ),
    );
    const simPane = h(
      'div',
      { class: 'sim-pane', id: 'sim-pane' },
      this.scenariosHost,
      labelled('sim-speedup', 'Speed-up (simulated seconds per second)', this.speedup),
    );

    const addBtn = button('Add station', () => void this.addStation(), {
      class: 'btn btn-primary',
      id: 'add-station',
    });
    const applyBtn = button('Apply profile', () => void this.applyProfile(), {
      class: 'btn',
      id: 'apply-profile',
    });

    root.append(
      h(
        'div',
        { class: 'view-head' },
        h('h2', {}, 'Connect & profile'),
        h(
          'p',
          { class: 'quiet' },
          'Choose where telemetry comes from and describe the pack. The profile is checked as you type.',
        ),
      ),
      this.status,
      h(
        'div',
        { class: 'connect-grid' },
        h(
          'section',
          { class: 'panel', 'aria-labelledby': 'source-title' },
          h('h3', { id: 'source-title' }, 'Source'),
          kindGroup,
          simPane,
          serialPane,
          tcpPane,
          h('h3', {}, 'Station'),
          labelled('station-id', 'Station id (letters, digits, . _ -)', this.stationIdInput),
          labelled('station-label', 'Label (optional)', this.stationLabelInput),
          h('div', { class: 'form-actions' }, addBtn),
          h('h3', {}, 'Or change a running station'),
          labelled('apply-station', 'Station', this.applySelect),
          h(
            'p',
            { class: 'quiet' },
            'Applying a profile closes the station’s current run and starts a new one.',
          ),
          h('div', { class: 'form-actions' }, applyBtn),
        ),
        h(
          'section',
          { class: 'panel', 'aria-labelledby': 'profile-title' },
          h('h3', { id: 'profile-title' }, 'Profile'),
          this.form.root,
        ),
        h(
          'section',
          { class: 'panel', 'aria-labelledby': 'preview-title' },
          h('h3', { id: 'preview-title' }, 'Live preview'),
          h(
            'label',
            { for: 'preview-lines', class: 'field-label' },
            'Lines to read with this profile (one per line; a running station’s recent lines fill in when you pick it)',
          ),
          this.previewInput,
          h(
            'div',
            { class: 'form-actions' },
            button('Use the station’s recent lines', () => this.fillPreviewFromStation(), {
              class: 'btn btn-quiet',
            }),
          ),
          this.previewOut,
        ),
      ),
    );
    this.renderSourcePanes();
    store.on('stations', () => this.fillApplySelect());
  }

  show(target: ViewTarget): void {
    this.fillApplySelect();
    void this.loadScenarios();
    if (this.sourceKind === 'serial') void this.loadPorts();
    if (target.view === 'connect' && target.stationId) {
      const model = this.store.stations.get(target.stationId);
      if (model) {
        this.applySelect.value = model.view.id;
        this.form.fill(resolvedToJson(model.view.profile));
        this.fillPreviewFromStation();
      }
    }
    this.scheduleValidate();
  }

  hide(): void {}

  private renderSourcePanes(): void {
    (document.getElementById('serial-pane') ?? this.portsHost.parentElement!).hidden =
      this.sourceKind !== 'serial';
    (document.getElementById('sim-pane') ?? this.scenariosHost.parentElement!).hidden =
      this.sourceKind !== 'simulator';
    (document.getElementById('tcp-pane') ?? this.tcpAddress.parentElement!).hidden =
      this.sourceKind !== 'tcp';
    if (this.sourceKind === 'serial') void this.loadPorts();
  }

  private fillApplySelect(): void {
    const ids = this.store.sortedStations().map((m) => m.view.id);
    const keep = this.applySelect.value;
    this.applySelect.replaceChildren(
      ...ids.map((id) => h('option', { value: id, selected: id === keep }, id)),
    );
  }

  private fillPreviewFromStation(): void {
    const model = this.store.stations.get(this.applySelect.value);
    if (!model) return;
    const lines = model.feed
      .all()
      .filter((r) => r.kind !== 'sent')
      .slice(-20)
      .map((r) => r.text);
    if (lines.length) {
      this.previewInput.value = lines.join('\n');
      this.scheduleValidate();
    }
  }

  private async loadPorts(): Promise<void> {
    this.portsHost.replaceChildren(h('p', { class: 'quiet' }, 'Looking for serial ports…'));
    try {
      const raw = await this.api.request('ports.list', {});
      const ports = (Array.isArray(raw) ? raw : []) as PortRow[];
      if (ports.length === 0) {
        this.portsHost.replaceChildren(
          h(
            'p',
            { class: 'quiet' },
            'No serial ports found. Plug the charger’s USB-serial bridge in and press Refresh.',
          ),
        );
        return;
      }
      const body = h('tbody');
      for (const p of ports) {
        const id = `port-${p.path.replace(/[^A-Za-z0-9]/g, '_')}`;
        const radio = h('input', {
          type: 'radio',
          name: 'port',
          id,
          value: p.path,
          checked: this.selectedPort?.path === p.path,
        });
        radio.addEventListener('change', () => {
          this.selectedPort = p;
          this.typedPath.value = '';
        });
        body.append(
          h(
            'tr',
            {},
            h('td', {}, radio),
            h('td', {}, h('label', { for: id }, h('code', {}, p.path))),
            h('td', {}, p.manufacturer ?? '–'),
            h('td', {}, p.serialNumber ?? '–'),
            h('td', {}, p.vendorId && p.productId ? `${p.vendorId}:${p.productId}` : (p.vendorId ?? '–')),
          ),
        );
      }
      this.portsHost.replaceChildren(
        h(
          'table',
          { class: 'ports-table' },
          h(
            'thead',
            {},
            h(
              'tr',
              {},
              ...['', 'Port', 'Manufacturer', 'Serial number', 'Vendor:product id'].map((c) =>
                h('th', { scope: 'col' }, c),
              ),
            ),
          ),
          body,
        ),
      );
    } catch (err) {
      this.portsHost.replaceChildren(h('p', { class: 'error-text' }, `${errorText(err)}.`));
    }
  }

  private async loadScenarios(): Promise<void> {
    try {
      const raw = await this.api.request('scenarios.list', {});
      const list = (Array.isArray(raw) ? raw : []) as {
        name: string;
        description?: string;
        profile?: Record<string, unknown>;
      }[];
      const group = h('div', {
        class: 'scenario-list',
        role: 'radiogroup',
        'aria-label': 'Simulator scenario',
      });
      for (const s of list) {
        const id = `scenario-${s.name}`;
        const radio = h('input', {
          type: 'radio',
          name: 'scenario',
          id,
          value: s.name,
          checked: (this.selectedScenario ?? list[0]?.name) === s.name,
        });
        radio.addEventListener('change', () => {
          this.selectedScenario = s.name;
          // The scenario's demo profile is the right starting point for its simulated pack.
          if (s.profile) {
            this.form.fill(s.profile);
            this.scheduleValidate();
          }
        });
        group.append(
          h(
            'label',
            { for: id, class: 'scenario' },
            radio,
            h('span', { class: 'scenario-name' }, s.name),
            h('span', { class: 'scenario-desc' }, s.description ?? ''),
          ),
        );
      }
      this.selectedScenario ??= list[0]?.name ?? null;
      this.scenariosHost.replaceChildren(group);
    } catch (err) {
      this.scenariosHost.replaceChildren(
        h('p', { class: 'error-text' }, `The simulator scenarios could not be listed: ${errorText(err)}`),
      );
    }
  }

  private scheduleValidate(): void {
    window.clearTimeout(this.validateTimer);
    this.validateTimer = window.setTimeout(() => void this.validate(), VALIDATE_DEBOUNCE_MS);
  }

  /** Validate the form's profile and preview the lines with it. */
  async validate(): Promise<boolean> {
    const profile = this.form.read();
    try {
      const result = (await this.api.request('profile.validate', { profile })) as {
        ok: boolean;
        error?: string;
        key?: string;
        profile?: ResolvedProfile;
      };
      if (!result.ok) {
        this.validity = { ok: false, message: result.error ?? 'refused' };
        this.form.showError(result.key ?? null, result.error ?? 'refused');
        this.previewOut.replaceChildren(h('p', { class: 'quiet' }, 'The preview waits for a valid profile.'));
        return false;
      }
      this.validity = { ok: true, message: null };
      this.lastValid = result.profile ?? null;
      this.form.showError(null, null);
      this.form.showDefaults(this.lastValid);
      await this.preview(profile);
      return true;
    } catch (err) {
      this.validity = { ok: false, message: errorText(err) };
      this.form.showError(null, errorText(err));
      return false;
    }
  }

  private async preview(profile: Record<string, unknown>): Promise<void> {
    const lines = this.previewInput.value.split(/\r?\n/).slice(0, 200);
    const raw = (await this.api.request('profile.preview', { profile, lines })) as { lines?: LineOutcome[] };
    const outcomes = raw.lines ?? [];
    const body = h('tbody');
    outcomes.forEach((o, i) => {
      body.append(
        h(
          'tr',
          { class: `preview-${o.result.kind}` },
          h('td', { class: 'num' }, String(i + 1)),
          h('td', {}, h('code', {}, lines[i] ?? '')),
          h('td', {}, describeOutcome(o)),
        ),
      );
    });
    this.previewOut.replaceChildren(
      h(
        'table',
        { class: 'preview-table' },
        h(
          'thead',
          {},
          h(
            'tr',
            {},
            h('th', { scope: 'col' }, '#'),
            h('th', { scope: 'col' }, 'Line'),
            h('th', { scope: 'col' }, 'Read as'),
          ),
        ),
        body,
      ),
    );
  }

  private sourceConfig(): Record<string, unknown> | string {
    if (this.sourceKind === 'simulator') {
      if (!this.selectedScenario) return 'Pick a simulator scenario first.';
      const speedup = Number(this.speedup.value);
      if (!Number.isFinite(speedup) || speedup <= 0)
        return `Speed-up must be a positive number (got "${this.speedup.value}").`;
      return { kind: 'simulator', scenario: this.selectedScenario, speedup };
    }
    if (this.sourceKind === 'tcp') {
      const tcp = parseTcpAddress(this.tcpAddress.value);
      if (!tcp) return `Write the address as tcp://HOST:PORT (got "${this.tcpAddress.value}").`;
      return tcp;
    }
    const typed = this.typedPath.value.trim();
    if (typed && !typed.startsWith('/') && !/^COM\d+$/i.test(typed))
      return `"${typed}" is not a port path: type an absolute path such as /dev/ttyUSB0 or /dev/serial/by-id/… (a network port goes under TCP)`;
    if (!typed && !this.selectedPort)
      return 'Pick a serial port, or type its path (press Refresh ports if the list is empty).';
    const p: PortRow = typed ? { path: typed } : this.selectedPort!;
    const config: Record<string, unknown> = {
      kind: 'serial',
      path: p.path,
      baudRate: Number(this.baud.value),
      dataBits: Number(this.dataBits.value),
      parity: this.parity.value,
      stopBits: Number(this.stopBits.value),
    };
    if (this.matchSerial.checked && (p.serialNumber || p.vendorId)) {
      config.match = {
        ...(p.serialNumber ? { serialNumber: p.serialNumber } : {}),
        ...(p.vendorId ? { vendorId: p.vendorId } : {}),
        ...(p.productId ? { productId: p.productId } : {}),
      };
    }
    return config;
  }

  private async addStation(): Promise<void> {
    if (!(await this.validate())) {
      this.status.textContent = `Not added: the profile was refused (${this.validity.message}). Nothing was started.`;
      return;
    }
    const source = this.sourceConfig();
    if (typeof source === 'string') {
      this.status.textContent = source;
      return;
    }
    const id = this.stationIdInput.value.trim();
    const label = this.stationLabelInput.value.trim();
    try {
      await this.api.request('stations.add', {
        config: { id, ...(label ? { label } : {}), source: source as never, profile: this.form.read() },
      });
      this.status.textContent = `Station ${id} added.`;
      this.nav.open({ view: 'bench', stationId: id });
    } catch (err) {
      this.status.textContent = `Station ${id || '(no id)'} was not added: ${errorText(err)}`;
    }
  }

  private async applyProfile(): Promise<void> {
    const stationId = this.applySelect.value;
    if (!stationId) {
      this.status.textContent = 'There is no running station to apply the profile to.';
      return;
    }
    if (!(await this.validate())) {
      this.status.textContent = `Not applied: the profile was refused (${this.validity.message}). Station ${stationId} keeps its profile.`;
      return;
    }
    try {
      await this.api.request('stations.setProfile', { stationId, profile: this.form.read() });
      this.status.textContent = `Station ${stationId} runs with the new profile; a new run started.`;
    } catch (err) {
      this.status.textContent = `Station ${stationId} keeps its profile: ${errorText(err)}`;
    }
  }
}

function labelled(id: string, label: string, control: HTMLElement): HTMLElement {
  return h('div', { class: 'form-row' }, h('label', { for: id }, label), control);
}

function describeOutcome(o: LineOutcome): string {
  const r = o.result;
  switch (r.kind) {
    case 'sample': {
      const s = r.sample;
      const parts = [
        s.vbatV !== undefined ? `pack ${formatNumber(s.vbatV, 3, 'V')}` : null,
        s.ibatA !== undefined ? `current ${formatNumber(s.ibatA, 3, 'A')}` : null,
        s.tempC !== undefined ? `temp. ${formatNumber(s.tempC, 1, '°C')}` : null,
        s.vinV !== undefined ? `source ${formatNumber(s.vinV, 2, 'V')}` : null,
        s.iinA !== undefined ? `source current ${formatNumber(s.iinA, 3, 'A')}` : null,
        s.deviceS !== undefined ? `device time ${s.deviceS} s` : null,
        s.chg !== undefined ? `charging pin ${s.chg ? 'on' : 'off'}` : null,
        s.flt !== undefined ? `fault pin ${s.flt ? 'on' : 'off'}` : null,
        Object.keys(s.extra).length ? `extra: ${Object.keys(s.extra).join(', ')}` : null,
      ].filter(Boolean);
      return `Sample: ${parts.join(', ') || 'no known fields'}`;
    }
    case 'header':
      return `CSV header: ${r.fields.join(', ')}`;
    case 'firmware':
      return `Firmware message: ${r.text}`;
    case 'blank':
      return 'Blank line';
    case 'rejected':
      return `Rejected (${r.reason}): ${r.detail}`;
  }
}

/**
 * Sweep view: the live P–V picture of a station's solar source while its input set point is
 * turned. Points, the fitted curve, the maximum power point, the advice and the light warning
 * all come from the backend's sweep engine by push (`sweep`); this view only draws them, and
 * offers to write the found voltage into the station's profile (`stations.setInputSetpoint`).
 */
import type { SweepPayload } from '@shared/ipc/payloads';
import type { Api } from '../api';
import { button, h } from '../dom';
import type { View, ViewTarget } from '../router';
import type { Store } from '../store';
import { errorText } from '../wire';
import { SweepChart } from './sweep-chart';
import { readSweep } from './sweep-wire';

const volts = (v: number | null, digits = 2): string => (v === null ? '—' : `${v.toFixed(digits)} V`);

export class SweepView implements View {
  private readonly select = h('select', { id: 'sweep-station', 'aria-label': 'Station of the Sweep view' });
  private readonly status = h('p', { id: 'sweep-status', class: 'quiet', role: 'status' });
  private readonly mpp = h('p', { id: 'sweep-mpp', class: 'sweep-mpp' });
  private readonly fit = h('p', { id: 'sweep-fit', class: 'quiet' });
  private readonly operating = h('p', { id: 'sweep-operating' });
  private readonly advice = h('p', { id: 'sweep-advice', class: 'sweep-advice', 'aria-live': 'polite' });
  private readonly light = h('div', { id: 'sweep-light', class: 'sweep-light' });
  private readonly reason = h('p', { id: 'sweep-reason', class: 'sweep-reason' });
  private readonly temperature = h('p', { id: 'sweep-temperature', class: 'quiet' });
  private readonly day = h('p', { id: 'sweep-day', class: 'quiet' });
  private readonly setpoint = h('p', { id: 'sweep-setpoint' });
  private readonly writeStatus = h('span', {
    id: 'sweep-write-status',
    role: 'status',
    'aria-live': 'polite',
  });
  private readonly writeBtn = button('Write into the profile', () => void this.write(), {
    id: 'sweep-write',
    class: 'btn btn-primary',
    disabled: true,
  });
  private readonly canvas = h('canvas', {
    id: 'sweep-chart',
    'aria-label': 'Source power against source voltage',
  });
  private chart: SweepChart | null = null;
  private stationId: string | null = null;
  private visible = false;
  private last: SweepPayload | null = null;

  constructor(
    root: HTMLElement,
    private readonly store: Store,
    private readonly api: Api,
  ) {
    this.select.addEventListener('change', () => void this.setStation(this.select.value));
    root.append(
      h(
        'div',
        { class: 'view-head' },
        h('h2', {}, 'Sweep'),
        h(
          'p',
          { class: 'quiet' },
          "Turn the charger's input set point slowly across its range at steady light; the curve and its maximum follow.",
        ),
        h('label', { for: 'sweep-station', class: 'field-label' }, 'Station'),
        this.select,
      ),
      this.status,
      h(
        'div',
        { class: 'sweep-body' },
        h('div', { class: 'sweep-chart-host' }, this.canvas),
        h(
          'div',
          { class: 'sweep-side' },
          this.mpp,
          this.operating,
          this.advice,
          this.light,
          this.reason,
          this.fit,
          this.temperature,
          this.day,
          h(
            'div',
            { class: 'sweep-write-box' },
            this.setpoint,
            this.writeBtn,
            this.writeStatus,
            h(
              'p',
              { class: 'quiet' },
              "This changes the set point in Taperline's profile (what its alarms and reports compare against) " +
                'and starts a new run; the board keeps its own until you turn its trimmer. Keep the input within ' +
                "the charger's and the panel's datasheet limits: charging can burn and injure.",
            ),
          ),
        ),
      ),
    );
    api.onPush((push) => {
      if (push.push !== 'sweep') return;
      try {
        const payload = readSweep(push.data);
        if (payload.stationId === this.stationId && this.visible) this.render(payload);
      } catch (err) {
        this.status.textContent = `A sweep update could not be read: ${errorText(err)}`;
      }
    });
    store.on('stations', () => {
      if (!this.visible) return;
      this.fillSelect();
      if (!this.stationId || !this.store.stations.has(this.stationId)) {
        const first = this.store.sortedStations()[0];
        if (first) void this.setStation(first.view.id);
      }
    });
    api.onConnection((state) => {
      if (state === 'open' && this.visible && this.stationId) void this.setStation(this.stationId);
    });
  }

  show(target: ViewTarget): void {
    this.visible = true;
    this.chart ??= new SweepChart(this.canvas);
    this.fillSelect();
    const wanted = target.view === 'sweep' ? target.stationId : undefined;
    const first = this.store.sortedStations()[0]?.view.id;
    const id = wanted ?? (this.stationId && this.store.stations.has(this.stationId) ? this.stationId : first);
    if (id) void this.setStation(id);
    else this.status.textContent = 'No station yet: add one in Connect.';
  }

  hide(): void {
    this.visible = false;
    if (this.stationId) void this.unwatch(this.stationId);
  }

  private fillSelect(): void {
    const ids = this.store.sortedStations().map((m) => m.view.id);
    const current = [...this.select.options].map((o) => o.value);
    if (JSON.stringify(ids) === JSON.stringify(current)) return;
    this.select.replaceChildren(...ids.map((id) => h('option', { value: id }, id)));
    if (this.stationId) this.select.value = this.stationId;
  }

  private async unwatch(stationId: string): Promise<void> {
    try {
      await this.api.request('stations.sweep', { stationId, watch: false });
    } catch {
      // The station may be gone already; nothing to stop then.
    }
  }

  private async setStation(id: string): Promise<void> {
    if (this.stationId && this.stationId !== id) void this.unwatch(this.stationId);
    this.stationId = id;
    this.select.value = id;
    this.status.textContent = `Watching the source of ${id}…`;
    try {
      const reply = await this.api.request('stations.sweep', { stationId: id, watch: true });
      if (this.stationId === id && reply) this.render(readSweep(reply));
    } catch (err) {
      this.status.textContent = `The sweep of ${id} cannot be watched: ${errorText(err)}`;
    }
  }

  private render(p: SweepPayload): void {
    this.last = p;
    const r = p.report;
    this.chart?.show(p);
    this.status.textContent = `${p.points.tS.length} source points of the last 40 minutes; ${r.sweeps} sweep${r.sweeps === 1 ? '' : 's'} found.`;
    this.mpp.textContent =
      r.ok && r.mppV !== null && r.mppW !== null
        ? `Maximum power point: ${volts(r.mppV)}, ${r.mppW.toFixed(2)} W`
        : 'Maximum power point: not found yet';
    this.fit.textContent = r.fit
      ? `${r.fit.model === 'single-diode' ? 'Single-diode' : 'Smooth'} fit of ${r.fit.points} points, residual ${r.fit.rmsW.toFixed(3)} W rms`
      : '';
    this.operating.textContent =
      r.operatingV === null
        ? ''
        : `Operating point now: ${volts(r.operatingV)}` +
          (r.ok && r.lossPct !== null ? `, ${r.lossPct.toFixed(1)} % below the maximum` : '');
    this.advice.textContent =
      r.ok && r.advice ? r.advice.charAt(0).toUpperCase() + r.advice.slice(1) + '.' : '';
    const changed = r.irradiance?.changed === true;
    this.light.replaceChildren();
    this.light.removeAttribute('role');
    if (changed) {
      this.light.setAttribute('role', 'alert');
      const on = r.irradiance?.restartedOn;
      this.light.append(
        h(
          'span',
          { class: 'level level-warn' },
          h('span', { class: 'level-icon', 'aria-hidden': 'true' }, '▲'),
          'Light changed',
        ),
        ` ${capital(r.irradiance?.evidence ?? 'the light changed during the sweep')}` +
          (on
            ? `. The fit was restarted on the steady stretch ${on.fromS.toFixed(0)}–${on.toS.toFixed(0)} s.`
            : '.'),
      );
    }
    this.reason.textContent = r.ok ? '' : `No usable sweep yet: ${r.reason ?? ''}`;
    this.temperature.textContent = r.temperature ? capital(r.temperature.text) + '.' : '';
    this.day.textContent =
      r.day && r.day.efficiency !== null
        ? `MPPT efficiency of this stretch about ${(r.day.efficiency * 100).toFixed(1)} % (energy taken over energy ` +
          'available at the maximum power point, as EN 50530 defines it; estimated from the sweeps and steady stretches).'
        : '';
    this.setpoint.textContent = `Profile set point: ${r.setpointV === null ? 'not set' : volts(r.setpointV, 1)}`;
    const canWrite = r.ok && r.mppV !== null;
    this.writeBtn.disabled = !canWrite;
    this.writeBtn.textContent = canWrite
      ? `Write ${volts(r.mppV)} into the profile`
      : 'Write into the profile';
  }

  private async write(): Promise<void> {
    const p = this.last;
    const id = this.stationId;
    if (!p || !id || p.report.mppV === null) return;
    const v = Math.round(p.report.mppV * 100) / 100;
    this.writeBtn.disabled = true;
    this.writeStatus.textContent = `Writing ${v.toFixed(2)} V…`;
    try {
      await this.api.request('stations.setInputSetpoint', { stationId: id, inputSetpointV: v });
      this.writeStatus.textContent = `Written: the profile's set point is ${v.toFixed(2)} V (a new run started).`;
      void this.setStation(id);
    } catch (err) {
      this.writeStatus.textContent = `Not written: ${errorText(err)}`;
      this.writeBtn.disabled = false;
    }
  }
}

function capital(s: string): string {
  return s.charAt(0).toUpperCase() + s.slice(1);
}

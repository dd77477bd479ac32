/**
 * Alarms that reach a person, whatever view is open: a persistent indicator in the top bar
 * (count of active alarms nobody acknowledged, the worst level in words and an icon), a list
 * with Acknowledge all, the page title, and two opt-in signals for someone not looking at the
 * screen: a beep (Web Audio) and, in web mode, the browser's desktop notification. Both are off
 * until the person turns them on (a browser only allows sound and notifications after a click).
 */
import type { AlarmEvent, EngineEvent } from '@shared/engine/types';
import type { Api } from './api';
import { button, h, levelBadge } from './dom';
import { formatRunTime } from './format';
import type { Navigator } from './router';
import type { Store } from './store';
import { errorText } from './wire';

export interface PendingAlarm {
  stationId: string;
  stationLabel: string;
  alarm: AlarmEvent;
}

/** Critical alarms beep again this often while nobody has acknowledged them. */
const REPEAT_BEEP_MS = 30_000;
const PREFS_KEY = 'taperline.alarm-signals';

interface Prefs {
  sound: boolean;
  notify: boolean;
}

function loadPrefs(): Prefs {
  try {
    const raw = JSON.parse(localStorage.getItem(PREFS_KEY) ?? '{}') as Partial<Prefs>;
    return { sound: raw.sound === true, notify: raw.notify === true };
  } catch {
    return { sound: false, notify: false };
  }
}

/** Every active alarm nobody acknowledged, critical first, then newest first. */
export function pendingAlarms(store: Store): PendingAlarm[] {
  const out: PendingAlarm[] = [];
  for (const model of store.stations.values())
    for (const alarm of model.unackedActive())
      out.push({ stationId: model.view.id, stationLabel: model.view.label || model.view.id, alarm });
  return out.sort(
    (a, b) =>
      Number(b.alarm.level === 'critical') - Number(a.alarm.level === 'critical') || b.alarm.t - a.alarm.t,
  );
}

/** The page title: the count first, so it reads in a crowded tab strip. */
export function alarmTitle(base: string, pending: readonly PendingAlarm[]): string {
  if (pending.length === 0) return base;
  const critical = pending.some((p) => p.alarm.level === 'critical');
  return `(${pending.length}) ${critical ? '✖ Critical alarm' : '▲ Warning'} · ${base}`;
}

export class AlarmCenter {
  private baseTitle = 'Taperline';
  private prefs = loadPrefs();
  private audio: AudioContext | null = null;
  private repeatTimer = 0;
  private open = false;
  private readonly indicator: HTMLButtonElement;
  private readonly panel = h('div', {
    class: 'alarm-panel',
    id: 'alarm-panel',
    role: 'dialog',
    'aria-label': 'Active alarms',
    hidden: true,
  });
  private readonly status = h('p', { class: 'alarm-panel-status', role: 'status', 'aria-live': 'polite' });
  /** Alarms already signalled (beep or notification), so each is signalled once. */
  private readonly signalled = new Set<string>();
  private renderQueued = false;

  constructor(
    host: HTMLElement,
    private readonly store: Store,
    private readonly api: Api,
    private readonly nav: Navigator,
  ) {
    this.indicator = button('', () => this.toggle(), {
      class: 'alarm-indicator',
      id: 'alarm-indicator',
      'aria-expanded': 'false',
      'aria-controls': 'alarm-panel',
    });
    host.append(this.indicator, this.panel);
    // Escape closes the list from anywhere (focus may sit on a control the list just redrew).
    document.addEventListener('keydown', (e) => {
      if (e.key === 'Escape' && this.open) {
        this.toggle(false);
        this.indicator.focus();
      }
    });
    document.addEventListener('pointerdown', (e) => {
      if (this.open && !host.contains(e.target as Node)) this.toggle(false);
    });
    store.on('stations', () => this.queueRender());
    store.on('events', (stationId, event) => this.onEvent(stationId, event));
    this.render();
  }

  /** The view's own title; the alarm count is put in front of it. */
  setBaseTitle(title: string): void {
    this.baseTitle = title;
    document.title = alarmTitle(title, pendingAlarms(this.store));
  }

  private key(stationId: string, alarm: { code: string; t: number }): string {
    return `${stationId}|${alarm.code}|${alarm.t}`;
  }

  private onEvent(stationId: string, event: EngineEvent | null): void {
    this.queueRender();
    // null = a history load: old alarms are listed, not signalled again.
    if (!event || event.type !== 'alarm') return;
    const model = this.store.stations.get(stationId);
    if (!model || model.isAcked(event)) return;
    const key = this.key(stationId, event);
    if (this.signalled.has(key)) return;
    this.signalled.add(key);
    const label = model.view.label || stationId;
    if (this.prefs.sound && event.level === 'critical') this.beep();
    if (this.prefs.notify) this.notify(label, event);
  }

  private queueRender(): void {
    if (this.renderQueued) return;
    this.renderQueued = true;
    requestAnimationFrame(() => {
      this.renderQueued = false;
      this.render();
    });
  }

  private render(): void {
    const pending = pendingAlarms(this.store);
    const ackedActive = [...this.store.stations.values()].reduce(
      (n, m) => n + m.view.state.activeAlarms.filter((a) => m.isAcked(a)).length,
      0,
    );
    const critical = pending.filter((p) => p.alarm.level === 'critical').length;
    const level = critical > 0 ? 'critical' : pending.length > 0 ? 'warn' : 'none';
    this.indicator.className = `alarm-indicator alarm-indicator-${level}`;
    this.indicator.dataset.count = String(pending.length);
    this.indicator.replaceChildren(
      h(
        'span',
        { class: 'level-icon', 'aria-hidden': 'true' },
        level === 'none' ? '✓' : level === 'critical' ? '✖' : '▲',
      ),
      h(
        'span',
        { class: 'alarm-indicator-text' },
        pending.length === 0
          ? ackedActive > 0
            ? `${ackedActive} acknowledged`
            : 'No alarms'
          : `${pending.length} alarm${pending.length === 1 ? '' : 's'}${critical > 0 ? ` (${critical} critical)` : ''}`,
      ),
    );
    this.indicator.setAttribute(
      'aria-label',
      pending.length === 0
        ? `No alarms waiting${ackedActive > 0 ? `; ${ackedActive} active and acknowledged` : ''}. Alarm list and signals`
        : `${pending.length} alarms not acknowledged, ${critical} critical. Open the alarm list`,
    );
    document.title = alarmTitle(this.baseTitle, pending);
    this.syncRepeat(critical > 0);
    if (this.open) this.renderPanel(pending);
  }

  private toggle(force?: boolean): void {
    this.open = force ?? !this.open;
    this.panel.hidden = !this.open;
    this.indicator.setAttribute('aria-expanded', String(this.open));
    if (this.open) {
      this.renderPanel(pendingAlarms(this.store));
      this.panel.querySelector<HTMLElement>('button, input')?.focus();
    }
  }

  private panelKey = '';
  private readonly listHost = h('div', { class: 'alarm-panel-body' });
  private readonly ackAllBtn = button('Acknowledge all', () => void this.ackAll(), {
    class: 'btn btn-small',
    id: 'ack-all',
  });

  /** The list is redrawn only when the set of waiting alarms changes, so a click never lands on a stale button. */
  private renderPanel(pending: PendingAlarm[]): void {
    if (this.panel.childElementCount === 0) this.buildPanel();
    const key = JSON.stringify(pending.map((p) => [p.stationId, p.alarm.code, p.alarm.t]));
    if (key === this.panelKey) return;
    this.panelKey = key;
    const list =
      pending.length === 0
        ? h('p', { class: 'quiet' }, 'No active alarm is waiting for acknowledgement.')
        : h(
            'ol',
            { class: 'alarm-panel-list' },
            ...pending.map((p) =>
              h(
                'li',
                {
                  class: `alarm-panel-item alarm-${p.alarm.level}`,
                  'data-station': p.stationId,
                  'data-code': p.alarm.code,
                },
                levelBadge(p.alarm.level),
                h('code', {}, p.alarm.code),
                h(
                  'span',
                  { class: 'alarm-panel-where' },
                  `${p.stationLabel} · at ${formatRunTime(p.alarm.t)}`,
                ),
                button(
                  'Open',
                  () => {
                    this.toggle(false);
                    this.nav.open({ view: 'bench', stationId: p.stationId });
                  },
                  {
                    class: 'btn btn-small btn-quiet',
                    'aria-label': `Open ${p.stationLabel} in the Bench view`,
                  },
                ),
              ),
            ),
          );
    this.listHost.replaceChildren(list);
    this.ackAllBtn.textContent = `Acknowledge all (${pending.length})`;
    this.ackAllBtn.disabled = pending.length === 0;
  }

  private buildPanel(): void {
    const web = this.api.mode !== 'electron';
    this.panel.replaceChildren(
      h('h2', { class: 'alarm-panel-title' }, 'Alarms waiting'),
      this.listHost,
      h('div', { class: 'alarm-panel-actions' }, this.ackAllBtn),
      this.status,
      h(
        'fieldset',
        { class: 'alarm-signals' },
        h('legend', {}, 'Signals (off until you turn them on)'),
        this.toggleBox(
          'signal-sound',
          'Beep on a critical alarm (again every 30 s until acknowledged)',
          this.prefs.sound,
          (on) => this.setSound(on),
        ),
        web
          ? this.toggleBox(
              'signal-notify',
              'Desktop notification for every alarm (this browser)',
              this.prefs.notify,
              (on) => void this.setNotify(on),
            )
          : h('p', { class: 'quiet' }, 'The desktop app shows its own notification for a critical alarm.'),
      ),
    );
  }

  private toggleBox(
    id: string,
    label: string,
    checked: boolean,
    onChange: (on: boolean) => void,
  ): HTMLElement {
    const input = h('input', { type: 'checkbox', id, checked });
    input.addEventListener('change', () => onChange(input.checked));
    return h('label', { for: id, class: 'check-row' }, input, ` ${label}`);
  }

  private savePrefs(): void {
    try {
      localStorage.setItem(PREFS_KEY, JSON.stringify(this.prefs));
    } catch {
      // Private windows may refuse storage: the choice then lasts for this page only.
    }
  }

  private setSound(on: boolean): void {
    this.prefs.sound = on;
    this.savePrefs();
    if (on) {
      // Created inside the click, so the browser lets it play.
      this.audio ??= new AudioContext();
      void this.audio.resume();
      this.beep();
      this.status.textContent = 'Sound on: that was the beep a critical alarm makes.';
    } else this.status.textContent = 'Sound off.';
    this.render();
  }

  private async setNotify(on: boolean): Promise<void> {
    if (!on) {
      this.prefs.notify = false;
      this.savePrefs();
      this.status.textContent = 'Desktop notifications off.';
      return;
    }
    if (typeof Notification === 'undefined') {
      this.status.textContent =
        'This browser has no desktop notifications; the title and the indicator still show alarms.';
      this.render();
      return;
    }
    const permission =
      Notification.permission === 'granted' ? 'granted' : await Notification.requestPermission();
    this.prefs.notify = permission === 'granted';
    this.savePrefs();
    this.status.textContent =
      permission === 'granted'
        ? 'Desktop notifications on.'
        : 'The browser refused notifications (its site settings can allow them); the title and the indicator still show alarms.';
    const box = document.getElementById('signal-notify') as HTMLInputElement | null;
    if (box) box.checked = this.prefs.notify;
  }

  private beep(): void {
    if (!this.prefs.sound) return;
    const ctx = (this.audio ??= new AudioContext());
    // Two short tones, 880 Hz then 660 Hz: distinct from a system chime, not shrill.
    const start = ctx.currentTime + 0.02;
    for (const [i, hz] of [880, 660].entries()) {
      const osc = ctx.createOscillator();
      const gain = ctx.createGain();
      osc.frequency.value = hz;
      gain.gain.setValueAtTime(0.0001, start + i * 0.25);
      gain.gain.exponentialRampToValueAtTime(0.25, start + i * 0.25 + 0.02);
      gain.gain.exponentialRampToValueAtTime(0.0001, start + i * 0.25 + 0.2);
      osc.connect(gain).connect(ctx.destination);
      osc.start(start + i * 0.25);
      osc.stop(start + i * 0.25 + 0.22);
    }
  }

  private syncRepeat(criticalWaiting: boolean): void {
    const want = criticalWaiting && this.prefs.sound;
    if (want && !this.repeatTimer) this.repeatTimer = window.setInterval(() => this.beep(), REPEAT_BEEP_MS);
    else if (!want && this.repeatTimer) {
      clearInterval(this.repeatTimer);
      this.repeatTimer = 0;
    }
  }

  private notify(stationLabel: string, alarm: AlarmEvent): void {
    if (typeof Notification === 'undefined' || Notification.permission !== 'granted') return;
    try {
      const n = new Notification(
        `${alarm.level === 'critical' ? 'Critical' : 'Warning'}: ${alarm.code} on ${stationLabel}`,
        {
          body: alarm.message,
          tag: `taperline-${stationLabel}-${alarm.code}`,
        },
      );
      n.addEventListener('click', () => window.focus());
    } catch {
      // Some browsers allow notifications only from a service worker; the indicator still shows it.
    }
  }

  private async ackAll(): Promise<void> {
    const pending = pendingAlarms(this.store);
    let failed = 0;
    await Promise.all(
      pending.map(async (p) => {
        try {
          await this.api.request('stations.ackAlarm', {
            stationId: p.stationId,
            code: p.alarm.code,
            t: p.alarm.t,
          });
        } catch (err) {
          failed++;
          this.status.textContent = `Acknowledging ${p.alarm.code} on ${p.stationLabel} failed: ${errorText(err)}.`;
        }
      }),
    );
    if (failed === 0)
      this.status.textContent = `${pending.length} alarm${pending.length === 1 ? '' : 's'} acknowledged. They stay listed in each Bench view until they clear.`;
  }
}

/** Alarms of a station or run: time, level (icon + word), code, message, state, actions. */
import type { AlarmEvent } from '@shared/engine/types';
import { button, h, levelBadge } from '../dom';
import { formatRunTime } from '../format';

export interface AlarmRow {
  alarm: AlarmEvent;
  active: boolean;
  clearedT: number | null;
  acked: boolean;
}

export interface AlarmActions {
  /** Absent for recorded runs (nothing to acknowledge). */
  ack?: (alarm: AlarmEvent) => void;
  why: (alarm: AlarmEvent) => void;
}

export function renderAlarmList(target: HTMLElement, rows: readonly AlarmRow[], actions: AlarmActions): void {
  if (rows.length === 0) {
    target.replaceChildren(h('p', { class: 'quiet' }, 'No alarms in this run.'));
    return;
  }
  const list = h('ol', { class: 'alarm-list' });
  for (const row of rows) {
    const { alarm } = row;
    const state = row.active
      ? row.acked
        ? 'Active, acknowledged'
        : 'Active'
      : row.clearedT !== null
        ? `Cleared at ${formatRunTime(row.clearedT)}`
        : 'Ended';
    const item = h(
      'li',
      {
        class: `alarm alarm-${alarm.level}${row.active ? ' is-active' : ''}${row.acked ? ' is-acked' : ''}`,
        'data-code': alarm.code,
      },
      h(
        'div',
        { class: 'alarm-head' },
        levelBadge(alarm.level),
        h('code', { class: 'alarm-code' }, alarm.code),
        h('span', { class: 'alarm-time' }, `at ${formatRunTime(alarm.t)}`),
      ),
      h('p', { class: 'alarm-message' }, alarm.message),
      h('div', { class: 'alarm-foot' }, h('span', { class: 'alarm-state' }, state)),
    );
    const foot = item.querySelector('.alarm-foot')!;
    if (actions.ack && row.active && !row.acked) {
      foot.append(
        button('Acknowledge', () => actions.ack!(alarm), {
          class: 'btn btn-small',
          'aria-label': `Acknowledge ${alarm.code} raised at ${formatRunTime(alarm.t)}`,
        }),
      );
    }
    if (alarm.level === 'critical' || alarm.code === 'fault-pin') {
      foot.append(
        button('Why?', () => actions.why(alarm), {
          class: 'btn btn-small btn-quiet',
          'aria-label': `Why ${alarm.code}? Open the diagnosis`,
        }),
      );
    }
    list.append(item);
  }
  target.replaceChildren(list);
}

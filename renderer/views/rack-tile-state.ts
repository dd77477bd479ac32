/**
 * How a Rack tile shows its alarm state, and the order tiles keep while a person points at one.
 * One signal per tile: an active alarm nobody acknowledged is loud (solid red or amber frame,
 * "not acknowledged"); an acknowledged one is quiet (grey dashed frame, a tick, "acknowledged");
 * a tile whose charger says Done while a critical alarm is active reads as the alarm, with the
 * phase as a secondary line, never as a green Done beside a red alarm.
 */
import type { AlarmEvent } from '@shared/engine/types';
import { h, levelBadge } from '../dom';
import type { StationModel } from '../store';

export type TileAlarmKind = 'none' | 'active' | 'acked';

export interface TileAlarmState {
  kind: TileAlarmKind;
  /** The alarm the tile names: the worst unacknowledged one, else the worst acknowledged one. */
  alarm: AlarmEvent | null;
  /** Further active alarms beyond the one named. */
  more: number;
}

const worst = (alarms: readonly AlarmEvent[]) =>
  alarms.find((a) => a.level === 'critical') ?? alarms[0] ?? null;

export function tileAlarmState(model: StationModel): TileAlarmState {
  const active = model.view.state.activeAlarms;
  const unacked = active.filter((a) => !model.isAcked(a));
  if (unacked.length > 0) return { kind: 'active', alarm: worst(unacked), more: active.length - 1 };
  if (active.length > 0) return { kind: 'acked', alarm: worst(active), more: active.length - 1 };
  return { kind: 'none', alarm: null, more: 0 };
}

/** The tile's classes: phase, then one alarm look (active / acknowledged), then the source. */
export function tileClassName(model: StationModel, state: TileAlarmState): string {
  const { phase } = model.view.state;
  const source = model.view.source.state;
  const classes = ['tile', `phase-${phase}`];
  if (state.kind === 'active')
    classes.push(state.alarm?.level === 'critical' ? 'tile-trouble' : 'tile-attention');
  else if (state.kind === 'acked') classes.push('tile-acked');
  else if (phase === 'fault') classes.push('tile-trouble');
  else if (source === 'lost') classes.push('tile-attention');
  else if (source === 'closed') classes.push('tile-ended');
  // A charger that says done (or idle) while a critical alarm is active: the alarm is the signal.
  if (state.alarm?.level === 'critical' && phase !== 'fault') classes.push('tile-alarm-over-phase');
  return classes.join(' ');
}

/** The alarm line of a tile: level in words and an icon, code, and whether anyone acknowledged it. */
export function tileAlarmLine(state: TileAlarmState): HTMLElement {
  const more = state.more > 0 ? ` +${state.more} more` : '';
  if (state.kind === 'none' || !state.alarm)
    return h('span', { class: 'tile-alarm tile-ok' }, '✓ No active alarms');
  if (state.kind === 'acked')
    return h(
      'span',
      { class: 'tile-alarm tile-alarm-acked', 'data-ack': 'acked' },
      h('span', { class: 'ack-mark', 'aria-hidden': 'true' }, '✓'),
      ` Acknowledged: ${state.alarm.code} (${state.alarm.level === 'critical' ? 'critical' : 'warning'}, still active)${more}`,
    );
  return h(
    'span',
    { class: 'tile-alarm tile-alarm-active', 'data-ack': 'waiting' },
    levelBadge(state.alarm.level),
    ` ${state.alarm.code} · not acknowledged${more}`,
  );
}

/** Words for the tile's screen-reader label. */
export function tileAlarmWords(state: TileAlarmState): string {
  if (!state.alarm) return 'no active alarms';
  return `${state.alarm.level} alarm ${state.alarm.code}, ${state.kind === 'acked' ? 'acknowledged' : 'not acknowledged'}`;
}

/**
 * The order tiles are drawn in. While `hold` (the pointer is over the rack or a tile has
 * focus) the previous order stays: a tile never jumps away from under the pointer. Stations
 * that left are dropped; new ones are added at the end. Without hold, the sorted order wins.
 */
export function heldOrder(previous: readonly string[], sorted: readonly string[], hold: boolean): string[] {
  if (!hold || previous.length === 0) return [...sorted];
  const present = new Set(sorted);
  const kept = previous.filter((id) => present.has(id));
  const keptSet = new Set(kept);
  return [...kept, ...sorted.filter((id) => !keptSet.has(id))];
}

/** The words under a tile's sparkline: what it shows, over how long, between which values. */
export function sparkCaption(bounds: { lo: number; hi: number; spanS: number } | null): string {
  if (!bounds) return 'Pack voltage: waiting for data';
  const min = Math.max(1, Math.round(bounds.spanS / 60));
  const over = min < 120 ? `${min} min` : `${Math.round(min / 60)} h`;
  return `Pack voltage, last ${over}: ${bounds.lo.toFixed(2)}–${bounds.hi.toFixed(2)} V`;
}

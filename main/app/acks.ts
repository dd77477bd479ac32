/**
 * Alarm acknowledgements, held by the service (not by a view) so that every tab and window
 * agrees on which alarms a person has already seen. An ack names one raising of an alarm
 * (`code` and the `t` it was raised at): the same code raised again later is new.
 */
import type { AlarmEvent, EngineEvent } from '@shared/engine/types';

export interface AlarmAck {
  stationId: string;
  code: string;
  t: number;
}

export class AckBook {
  private readonly byStation = new Map<string, Map<string, number>>();

  ack(stationId: string, code: string, t: number): AlarmAck {
    let codes = this.byStation.get(stationId);
    if (!codes) {
      codes = new Map();
      this.byStation.set(stationId, codes);
    }
    codes.set(code, t);
    return { stationId, code, t };
  }

  /** An alarm that clears or is raised again drops its old ack. */
  noteEvent(stationId: string, event: EngineEvent): void {
    if (event.type !== 'alarm' && event.type !== 'alarm-clear') return;
    const codes = this.byStation.get(stationId);
    const ackedT = codes?.get(event.code);
    if (ackedT === undefined) return;
    if (event.type === 'alarm-clear' || event.t !== ackedT) codes!.delete(event.code);
  }

  isAcked(stationId: string, alarm: AlarmEvent): boolean {
    return this.byStation.get(stationId)?.get(alarm.code) === alarm.t;
  }

  list(stationId: string): AlarmAck[] {
    const codes = this.byStation.get(stationId);
    return codes ? [...codes].map(([code, t]) => ({ stationId, code, t })) : [];
  }

  forget(stationId: string): void {
    this.byStation.delete(stationId);
  }
}

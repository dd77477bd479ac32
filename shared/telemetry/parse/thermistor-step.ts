/**
 * The thermistor step of parsing: a sample that carries a raw `ntc` reading and no `temp`
 * gets its temperature from the profile's thermistor model.
 */
import { thermistorTemperature } from '../../chemistry/thermistor';
import type { Sample, ThermistorModel } from '../types';

export function applyThermistor(
  sample: Sample,
  ntcIsOhm: boolean,
  model: ThermistorModel | null | undefined,
): void {
  if (sample.tempC !== undefined || sample.ntcRaw === undefined || model === undefined || model === null)
    return;
  const t = thermistorTemperature(model, sample.ntcRaw, ntcIsOhm);
  // An open or shorted NTC leaves tempC unset; ntcRaw shows the reading pinned at a rail.
  if (t.ok) sample.tempC = t.tempC;
}

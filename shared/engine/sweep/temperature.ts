/**
 * How the best set point moves with panel temperature. The profile gives the panel's voltage
 * temperature coefficient (`panelTempCoeffPctPerC`, from its datasheet, usually of Voc: about
 * -0.3 to -0.45 %/C for crystalline silicon, common practice); applying it to the
 * maximum-power voltage is the usual approximation.
 */
import { median } from './robust';

export interface TemperatureShift {
  /** Panel temperature during the sweep (median of `tpanel`). */
  sweepTempC: number;
  coeffPctPerC: number;
  /** Change of the best set point per degree of panel temperature. */
  shiftVPerC: number;
  /** The best set point at 25 C and at the hottest panel temperature of the run. */
  at25CV: number;
  hottestC: number;
  atHottestV: number;
  text: string;
}

export function temperatureShift(
  mppV: number,
  coeffPctPerC: number,
  sweepTempsC: readonly number[],
  runTempsC: readonly number[],
): TemperatureShift | null {
  if (sweepTempsC.length === 0) return null;
  const sweepTempC = median(sweepTempsC);
  const shiftVPerC = (mppV * coeffPctPerC) / 100;
  const at = (tempC: number): number => mppV + shiftVPerC * (tempC - sweepTempC);
  let hottestC = sweepTempC;
  for (const t of runTempsC) if (t > hottestC) hottestC = t;
  const sign = shiftVPerC < 0 ? 'down' : 'up';
  return {
    sweepTempC,
    coeffPctPerC,
    shiftVPerC,
    at25CV: at(25),
    hottestC,
    atHottestV: at(hottestC),
    text:
      `the panel was at ${sweepTempC.toFixed(0)} °C during the sweep; at ${coeffPctPerC.toFixed(2)} %/°C the best ` +
      `set point moves ${sign} about ${Math.abs(shiftVPerC).toFixed(2)} V per °C warmer: about ` +
      `${at(25).toFixed(1)} V at 25 °C, ${at(hottestC).toFixed(1)} V at ${hottestC.toFixed(0)} °C (the hottest of this run)`,
  };
}

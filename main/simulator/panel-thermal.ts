/**
 * Panel cell temperature from the light: the NOCT rule T_cell = T_ambient + (NOCT - 20 C) G / 800
 * (common practice; NOCT conditions are 800 W/m2, 20 C air, 1 m/s wind), reached through a
 * first-order lag because a panel's glass and frame take minutes to warm (time constant invented
 * for the demo). The panel's diode follows the temperature (solar.ts `panelAtTemperature`).
 */
import { panelAtTemperature, type PanelParams, type PanelTemperatureParams } from './solar';
import type { PanelSupplyParams, SupplyParams } from './supply';

export interface PanelThermalParams extends PanelTemperatureParams {
  ambientC: number;
  /** Nominal operating cell temperature, C (datasheets: about 45 C). */
  noctC: number;
  /** Time constant of the panel's temperature, seconds. */
  tauS: number;
}

export interface PanelState {
  step(irradianceWPerM2: number, dtS: number): void;
  /** The supply at the present panel temperature. */
  supply(): SupplyParams;
  tempC(): number | null;
}

/** Temperature resolution of the model: keeps the panel-curve cache useful, far below any effect. */
const TEMP_STEP_C = 0.05;

export function createPanelState(supply: SupplyParams, thermal: PanelThermalParams | undefined): PanelState {
  if (supply.kind !== 'panel' || !thermal) {
    const fixed = supply.kind === 'panel' ? supply.panel.cellTempC : null;
    return { step: () => {}, supply: () => supply, tempC: () => fixed };
  }
  let tempC: number | null = null;
  // One panel object per temperature step, so the supply's per-panel cache keeps working.
  const byTemp = new Map<number, PanelSupplyParams>();
  const at = (t: number): PanelSupplyParams => {
    const key = Math.round(t / TEMP_STEP_C);
    let s = byTemp.get(key);
    if (!s) {
      const panel: PanelParams = panelAtTemperature(supply.panel, key * TEMP_STEP_C, thermal);
      s = { kind: 'panel', panel };
      if (byTemp.size > 4000) byTemp.clear();
      byTemp.set(key, s);
    }
    return s;
  };
  return {
    step(irradianceWPerM2, dtS) {
      const target = thermal.ambientC + ((thermal.noctC - 20) * irradianceWPerM2) / 800;
      tempC = tempC === null ? target : tempC + (target - tempC) * (1 - Math.exp(-dtS / thermal.tauS));
    },
    supply: () => at(tempC ?? thermal.ambientC),
    tempC: () => tempC ?? thermal.ambientC,
  };
}

/**
 * Photovoltaic panel by the single-diode model (pvlib-python, `pvlib.pvsystem.singlediode`):
 *   I = I_L - I_0 [exp((V + I R_s) / (n N_s V_th)) - 1] - (V + I R_s) / R_sh
 * with the photocurrent I_L proportional to irradiance. The thermal voltage is kT/q.
 */

/** Boltzmann constant and elementary charge (CODATA, exact in the 2019 SI). */
const BOLTZMANN_J_PER_K = 1.380649e-23;
const ELEMENTARY_CHARGE_C = 1.602176634e-19;

export interface PanelParams {
  /** Cells in series. */
  cellsInSeries: number;
  /** Diode ideality factor n. */
  ideality: number;
  /** Photocurrent at 1000 W/m2, amperes. */
  photoCurrentStcA: number;
  /** Diode saturation current I_0, amperes. */
  saturationCurrentA: number;
  seriesOhm: number;
  shuntOhm: number;
  /** Cell temperature (taken constant), degrees Celsius. */
  cellTempC: number;
}

export interface PanelPoint {
  vV: number;
  iA: number;
  pW: number;
}

export function thermalVoltageV(tempC: number): number {
  return (BOLTZMANN_J_PER_K * (tempC + 273.15)) / ELEMENTARY_CHARGE_C;
}

export function photoCurrentA(p: PanelParams, irradianceWPerM2: number): number {
  return (p.photoCurrentStcA * Math.max(0, irradianceWPerM2)) / 1000;
}

function modifiedIdealityV(p: PanelParams): number {
  return p.ideality * p.cellsInSeries * thermalVoltageV(p.cellTempC);
}

/** Panel current at a terminal voltage (Newton's method on the implicit equation); >= 0. */
export function panelCurrentA(p: PanelParams, vV: number, irradianceWPerM2: number): number {
  const il = photoCurrentA(p, irradianceWPerM2);
  if (il <= 0) return 0;
  const a = modifiedIdealityV(p);
  let i = il;
  for (let k = 0; k < 60; k++) {
    const e = Math.exp(Math.min(80, (vV + i * p.seriesOhm) / a));
    const f = il - p.saturationCurrentA * (e - 1) - (vV + i * p.seriesOhm) / p.shuntOhm - i;
    const df = (-p.saturationCurrentA * p.seriesOhm * e) / a - p.seriesOhm / p.shuntOhm - 1;
    const step = f / df;
    i -= step;
    if (Math.abs(step) < 1e-10) break;
  }
  // A blocking diode keeps the panel from taking current back.
  return Math.max(0, i);
}

/** pvlib `estimate_voc`: V_oc ~ n N_s V_th ln(I_L / I_0 + 1), ideal (no shunt) estimate. */
export function estimateVocV(p: PanelParams, irradianceWPerM2: number): number {
  return modifiedIdealityV(p) * Math.log(photoCurrentA(p, irradianceWPerM2) / p.saturationCurrentA + 1);
}

/**
 * Open-circuit voltage of the full model (with shunt). At I = 0 the series resistance
 * drops out: solve I_L - I_0 (exp(V/a) - 1) - V/R_sh = 0 for V by Newton's method.
 */
export function openCircuitV(p: PanelParams, irradianceWPerM2: number): number {
  const il = photoCurrentA(p, irradianceWPerM2);
  if (il <= 0) return 0;
  const a = modifiedIdealityV(p);
  let v = estimateVocV(p, irradianceWPerM2);
  for (let k = 0; k < 50; k++) {
    const e = Math.exp(Math.min(80, v / a));
    const g = il - p.saturationCurrentA * (e - 1) - v / p.shuntOhm;
    const dg = (-p.saturationCurrentA * e) / a - 1 / p.shuntOhm;
    const step = g / dg;
    v = Math.max(0, v - step);
    if (Math.abs(step) < 1e-9) break;
  }
  return v;
}

export function panelPoint(p: PanelParams, vV: number, irradianceWPerM2: number): PanelPoint {
  const iA = panelCurrentA(p, vV, irradianceWPerM2);
  return { vV, iA, pW: vV * iA };
}

/** Maximum power point by golden-section search on P(V), which has one peak on [0, Voc]. */
export function maxPowerPoint(
  p: PanelParams,
  irradianceWPerM2: number,
  vocV = openCircuitV(p, irradianceWPerM2),
): PanelPoint {
  if (vocV <= 0) return { vV: 0, iA: 0, pW: 0 };
  const g = (Math.sqrt(5) - 1) / 2;
  const power = (v: number): number => panelPoint(p, v, irradianceWPerM2).pW;
  let a = 0;
  let b = vocV;
  let c = b - g * (b - a);
  let d = a + g * (b - a);
  let pc = power(c);
  let pd = power(d);
  // Each round keeps one of the two inner points, so it costs one new evaluation; 32 rounds
  // narrow the interval to 2e-7 of Voc.
  for (let k = 0; k < 32; k++) {
    if (pc > pd) {
      b = d;
      d = c;
      pd = pc;
      c = b - g * (b - a);
      pc = power(c);
    } else {
      a = c;
      c = d;
      pc = pd;
      d = a + g * (b - a);
      pd = power(d);
    }
  }
  return panelPoint(p, (a + b) / 2, irradianceWPerM2);
}

/** Saturation current that gives a chosen ideal open-circuit voltage at 1000 W/m2. */
export function saturationCurrentForVocA(
  p: Omit<PanelParams, 'saturationCurrentA'>,
  vocStcV: number,
): number {
  return (
    p.photoCurrentStcA /
    (Math.exp(vocStcV / (p.ideality * p.cellsInSeries * thermalVoltageV(p.cellTempC))) - 1)
  );
}

/** How a panel changes with cell temperature, in datasheet terms. */
export interface PanelTemperatureParams {
  /** Short-circuit current temperature coefficient, A/K (datasheets: about +0.05 %/K of Isc). */
  iscCoeffAPerC: number;
  /** Open-circuit voltage temperature coefficient, V/K (about -0.3 to -0.45 %/K of Voc, common practice). */
  vocCoeffVPerC: number;
}

/**
 * The panel at another cell temperature, the reference being `p.cellTempC`: the photocurrent
 * moves with the current coefficient, and I_0 is chosen so the ideal open-circuit voltage moves
 * with the voltage coefficient (the approach of Villalva, Gazoli & Ruppert, IEEE Trans. Power
 * Electronics 24(5), 2009; from memory):
 *   I_0(T) = I_L(T) / (exp((V_oc,ref + K_v dT) / (n N_s V_th(T))) - 1).
 */
export function panelAtTemperature(p: PanelParams, tempC: number, t: PanelTemperatureParams): PanelParams {
  const dT = tempC - p.cellTempC;
  const vocRefV = estimateVocV(p, 1000);
  const photoCurrentStcA = p.photoCurrentStcA + t.iscCoeffAPerC * dT;
  const warm = { ...p, cellTempC: tempC, photoCurrentStcA };
  return { ...warm, saturationCurrentA: saturationCurrentForVocA(warm, vocRefV + t.vocCoeffVPerC * dT) };
}

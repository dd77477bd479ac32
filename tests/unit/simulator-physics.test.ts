/**
 * The simulated charger's physics against published values: OCV end points per chemistry,
 * the single-diode panel model, the MPPT set point rule, the thermal steady state and the
 * energy balance of a whole charge.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { cellOcvV, OCV_TABLES } from '../../main/simulator/ocv';
import { CHEMISTRY_FIRMWARE } from '../../main/simulator/firmware-defaults';
import {
  estimateVocV,
  maxPowerPoint,
  openCircuitV,
  panelCurrentA,
  saturationCurrentForVocA,
  thermalVoltageV,
  type PanelParams,
} from '../../main/simulator/solar';
import { steadyStateRiseK, stepTemperatureC } from '../../main/simulator/thermal';
import { converterInputW, DEFAULT_CONVERTER } from '../../main/simulator/converter';
import { createBench } from '../../main/simulator/bench';
import { getScenario, SCENARIO_NAMES } from '../../main/simulator';

test('Li-ion OCV: full at 4.20 V/cell, near 3.0 V/cell empty', () => {
  // Battery University BU-409 "Charging Lithium-ion": CV regulation 4.20 V/cell; precondition threshold ~3.0 V/cell (ElectroDragon wiki "Lithium Battery Charge").
  assert.equal(cellOcvV('li-ion', 1), 4.2);
  assert.ok(Math.abs(cellOcvV('li-ion', 0) - 3.0) <= 0.05);
  // Zufek blog "CC/CV charging protocol"; Higherwire "How Much Capacity Do 4.35 Volt Cells Lose at 4.20 Volts?": high-voltage variant full at 4.35 V/cell.
  assert.equal(cellOcvV('li-ion-hv', 1), 4.35);
});

test('LiFePO4 OCV: flat 3.2-3.3 V plateau, 2.5 V cut-off, under the 3.60 V CV', () => {
  // RightBattery "LiPo/LiIon/LiFe Batteries" ("3.2-3.3 V"); AA Portable Power LFP-26650 and Sunland IFR26650PE specs (nominal 3.2 V, 2.5 V cut-off).
  for (let soc = 0.15; soc <= 0.9001; soc += 0.05) {
    const v = cellOcvV('lifepo4', soc);
    assert.ok(v >= 3.2 && v <= 3.35, `OCV ${v} V at SoC ${soc.toFixed(2)} should sit on the plateau`);
  }
  assert.equal(cellOcvV('lifepo4', 0), 2.5);
  // CV charge voltage 3.60-3.65 V/cell (RightBattery; AA Portable Power LFP-26650 spec), above any resting voltage.
  assert.ok(cellOcvV('lifepo4', 1) < 3.6);
  assert.equal(CHEMISTRY_FIRMWARE.lifepo4.regulationVPerCell, 3.6);
});

test('lead-acid OCV stays under float, float under absorption', () => {
  // Float 2.25-2.30 V/cell, absorption 2.40 V/cell (Battery University BU-403; Haze HZB12-200 AGM datasheet);
  // a float charger must sit above the resting voltage of a full battery to hold it full.
  const fw = CHEMISTRY_FIRMWARE['lead-acid'];
  assert.ok(fw.floatVPerCell !== null && fw.floatVPerCell >= 2.25 && fw.floatVPerCell <= 2.3);
  assert.equal(fw.regulationVPerCell, 2.4);
  assert.ok(cellOcvV('lead-acid', 1) < fw.floatVPerCell);
  // -3 mV/K/cell temperature compensation (Battery University BU-403 "Charging Lead Acid").
  assert.equal(fw.tempCompVPerKPerCell, -0.003);
  // Worked check derived from BU-403's numbers: 12 V float at 35 C = 6 x (2.30 - 0.030) = 13.62 V.
  assert.ok(Math.abs(6 * (2.3 + -0.003 * (35 - 25)) - 13.62) < 1e-9);
});

test('NiMH OCV stays under the 1.6 V/cell charge limit; -dV threshold is 5 mV/cell', () => {
  // cheali-charger docs "nimh_nicd_charging": 1.6 V/cell safety limit, -dV about 5 mV/cell.
  assert.ok(cellOcvV('nimh', 1) < 1.6);
  assert.equal(CHEMISTRY_FIRMWARE.nimh.minusDeltaVPerCell, 0.005);
  // Panasonic "Charge Methods for Nickel Metal Hydride Batteries": 55 C absolute cutoff for AA cells.
  assert.equal(CHEMISTRY_FIRMWARE.nimh.hotCutoffC, 55);
});

test('every OCV table rises with state of charge', () => {
  for (const [chemistry, table] of Object.entries(OCV_TABLES)) {
    for (let i = 1; i < table.length; i++) {
      assert.ok(table[i][0] > table[i - 1][0] && table[i][1] > table[i - 1][1], `${chemistry} row ${i}`);
    }
  }
});

const PANEL_BASE = {
  cellsInSeries: 36,
  ideality: 1.3,
  photoCurrentStcA: 1.8,
  seriesOhm: 0.35,
  shuntOhm: 250,
  cellTempC: 25,
};
const PANEL: PanelParams = { ...PANEL_BASE, saturationCurrentA: saturationCurrentForVocA(PANEL_BASE, 21.6) };

test('thermal voltage kT/q is 25.69 mV at 25 C', () => {
  // V_th = kT/q = 25.69 mV at 25 C (derived from the CODATA constants).
  assert.ok(Math.abs(thermalVoltageV(25) - 0.02569) < 0.00001);
});

test('single-diode panel: open-circuit voltage matches pvlib estimate_voc', () => {
  // pvlib-python docs, `pvlib.pvsystem.singlediode` / `estimate_voc`: Voc ~ n Ns Vth ln(I_L/I_0 + 1), the ideal
  // estimate without shunt losses.
  const noShunt: PanelParams = { ...PANEL, shuntOhm: 1e12 };
  for (const g of [1000, 600, 200]) {
    const il = (1.8 * g) / 1000;
    const expected = 1.3 * 36 * thermalVoltageV(25) * Math.log(il / PANEL.saturationCurrentA + 1);
    assert.ok(Math.abs(estimateVocV(PANEL, g) - expected) < 1e-9);
    // Without a shunt the full model agrees with the estimate.
    assert.ok(Math.abs(openCircuitV(noShunt, g) - expected) < 1e-6, `no-shunt Voc at ${g} W/m2`);
    // With one, Voc is lower: at I = 0 the single-diode equation (pvlib-python `singlediode` docs) reduces to
    // V = a ln((I_L - V/R_sh)/I_0 + 1) (derived), which the computed Voc must satisfy.
    const voc = openCircuitV(PANEL, g);
    assert.ok(voc < expected);
    const a = 1.3 * 36 * thermalVoltageV(25);
    assert.ok(
      Math.abs(voc - a * Math.log((il - voc / PANEL.shuntOhm) / PANEL.saturationCurrentA + 1)) < 1e-6,
    );
    // At Voc the single-diode equation gives zero current.
    assert.ok(panelCurrentA(PANEL, voc, g) < 1e-6);
  }
  // At short circuit I ~ I_L (R_s small against R_sh).
  assert.ok(Math.abs(panelCurrentA(PANEL, 0, 1000) - 1.8) < 0.01);
});

test('maximum power point sits near 0.8 Voc, the fractional-Voc MPPT rule', () => {
  // k_FOCV = 0.8 (common practice); 0.71-0.78 (Esram & Chapman, IEEE Trans. Energy Conversion 22(2), 2007; from memory).
  for (const g of [1000, 500, 250]) {
    const voc = openCircuitV(PANEL, g);
    const mpp = maxPowerPoint(PANEL, g);
    const k = mpp.vV / voc;
    assert.ok(k > 0.7 && k < 0.86, `Vmpp/Voc = ${k.toFixed(3)} at ${g} W/m2`);
    // The set point the demo scenarios use (0.8 x 21.6 V) gives within 5 % of maximum power.
    const atSetpoint = 17.3 * panelCurrentA(PANEL, 17.3, g);
    assert.ok(
      atSetpoint > 0.95 * mpp.pW,
      `P(17.3 V) ${atSetpoint.toFixed(2)} W vs Pmpp ${mpp.pW.toFixed(2)} W`,
    );
  }
});

test('thermal model: steady state rise is P x R_th and the step is exact', () => {
  const p = { heatCapacityJPerK: 200, thermalResistanceKPerW: 12, ambientC: 20, chargerCouplingFraction: 0 };
  // Lumped model C dT/dt = P - (T - Ta)/R: steady state dT = P R (derived from the equation).
  assert.equal(steadyStateRiseK(1.5, 12), 18);
  let t = 20;
  for (let i = 0; i < 100 * 2400; i++) t = stepTemperatureC(p, t, 1.5, 1);
  assert.ok(Math.abs(t - 38) < 1e-6);
  // After one time constant (R C = 2400 s) the rise is 1 - 1/e of the final value.
  const oneTau = stepTemperatureC(p, 20, 1.5, 2400);
  assert.ok(Math.abs(oneTau - (20 + 18 * (1 - Math.exp(-1)))) < 1e-9);
});

test('converter efficiency over a charge is 85-93 % (usual small buck chargers, common practice)', () => {
  for (const [outW, outA] of [
    [12.6, 1.0],
    [6, 0.5],
    [28, 2.0],
    [140, 10],
  ]) {
    const eff = outW / converterInputW(DEFAULT_CONVERTER, outW, outA);
    assert.ok(eff > 0.85 && eff < 0.94, `efficiency ${eff.toFixed(3)} at ${outW} W`);
  }
});

test('energy balance: pack energy is less than source energy in every scenario', () => {
  for (const name of SCENARIO_NAMES) {
    const s = getScenario(name);
    const bench = createBench(s.bench, 1, s.durationS);
    for (let t = 0; t < Math.min(s.durationS, 3 * 3600); t += 5) bench.step(5);
    const r = bench.readings();
    if (r.sourceWh === 0) continue;
    assert.ok(
      r.packWh < r.sourceWh,
      `${name}: pack ${r.packWh.toFixed(2)} Wh vs source ${r.sourceWh.toFixed(2)} Wh`,
    );
    if (r.packWh > 1) {
      const eff = r.packWh / r.sourceWh;
      assert.ok(eff > 0.8 && eff < 0.95, `${name}: efficiency ${eff.toFixed(3)}`);
    }
  }
});

test('bench charge: stored charge follows the current delivered (coulomb counting)', () => {
  // Coulomb counting (MathWorks "SOC Estimator (Coulomb Counting)"): Ah = (1/3600) * integral of I dt; SOC = SOC0 + Q / C_rated.
  const s = getScenario('bench-liion-3s');
  const bench = createBench(s.bench, 1, s.durationS);
  let ah = 0;
  for (let t = 0; t < 3600; t++) {
    bench.step(1);
    ah += bench.readings().ibatA / 3600;
  }
  const socGain = bench.readings().soc - s.bench.initialSoc;
  assert.ok(
    Math.abs(socGain - ah / 2.5) < 0.002,
    `SoC gain ${socGain.toFixed(4)} vs ${(ah / 2.5).toFixed(4)}`,
  );
});

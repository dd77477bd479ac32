/**
 * Lumped thermal model of the pack: one heat capacity, one thermal resistance to ambient.
 * C dT/dt = P - (T - T_amb) / R_th, stepped exactly (exponential), so any step length is
 * stable. At steady state T - T_amb = P * R_th.
 */
export interface ThermalParams {
  /** Heat capacity of the pack (and what is bolted to it), joules per kelvin. */
  heatCapacityJPerK: number;
  /** Thermal resistance from the pack to the surrounding air, kelvin per watt. */
  thermalResistanceKPerW: number;
  ambientC: number;
  /** Fraction of the charger's conversion losses that reach the pack (same enclosure). */
  chargerCouplingFraction: number;
}

/** Temperature rise above ambient at steady state for a constant heat flow. */
export function steadyStateRiseK(heatW: number, thermalResistanceKPerW: number): number {
  return heatW * thermalResistanceKPerW;
}

export function stepTemperatureC(p: ThermalParams, tempC: number, heatW: number, dtS: number): number {
  const finalC = p.ambientC + steadyStateRiseK(heatW, p.thermalResistanceKPerW);
  const tauS = p.heatCapacityJPerK * p.thermalResistanceKPerW;
  return finalC + (tempC - finalC) * Math.exp(-dtS / tauS);
}

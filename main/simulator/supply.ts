/**
 * What feeds the charger: a mains adapter (fixed voltage behind an output resistance, with a
 * current limit) or a solar panel under the day's light. `capacity` tells the charger how
 * much input power it can draw without dragging the input below its set point;
 * `settle` gives the input voltage and current once the charger has chosen its draw.
 */
import { panelPoint, maxPowerPoint, openCircuitV, type PanelParams } from './solar';
import type { SourceKind } from '@shared/telemetry/types';

export interface AdapterParams {
  kind: 'adapter';
  nominalV: number;
  outputOhm: number;
  currentLimitA: number;
}

export interface PanelSupplyParams {
  kind: 'panel';
  panel: PanelParams;
}

export type SupplyParams = AdapterParams | PanelSupplyParams;

export interface SupplyCapacity {
  kind: SourceKind;
  /** Input voltage with the charger drawing nothing. */
  openV: number;
  /** Most input power the charger can take while the input stays at or above its set point. */
  maxW: number;
  /** Input power when the charger has to regulate the input at the set point. */
  atSetpointW: number;
}

export interface SupplyPoint {
  vinV: number;
  iinA: number;
  pinW: number;
}

interface PanelCurve {
  irradianceWPerM2: number;
  openV: number;
  mppV: number;
  mppW: number;
}

// The open-circuit voltage and maximum power point cost a few hundred evaluations of the
// implicit panel equation; a charger asks twice per step at the same light, so keep the last.
const lastCurve = new WeakMap<PanelParams, PanelCurve>();

function panelCurve(panel: PanelParams, irradianceWPerM2: number): PanelCurve {
  const cached = lastCurve.get(panel);
  if (cached && cached.irradianceWPerM2 === irradianceWPerM2) return cached;
  const openV = openCircuitV(panel, irradianceWPerM2);
  const mpp = maxPowerPoint(panel, irradianceWPerM2, openV);
  const curve = { irradianceWPerM2, openV, mppV: mpp.vV, mppW: mpp.pW };
  lastCurve.set(panel, curve);
  return curve;
}

/** How much the supply can give a charger that holds its input at `setpointV` (0 = none). */
export function capacityOf(s: SupplyParams, irradianceWPerM2: number, setpointV: number): SupplyCapacity {
  if (s.kind === 'adapter') {
    const atLimitV = s.nominalV - s.outputOhm * s.currentLimitA;
    const maxW = atLimitV * s.currentLimitA;
    return { kind: 'adapter', openV: s.nominalV, maxW, atSetpointW: maxW };
  }
  const { openV, mppV, mppW } = panelCurve(s.panel, irradianceWPerM2);
  if (openV <= setpointV) return { kind: openV > 1 ? 'panel' : 'none', openV, maxW: 0, atSetpointW: 0 };
  const atSetpointW = panelPoint(s.panel, setpointV, irradianceWPerM2).pW;
  const maxW = setpointV <= mppV ? mppW : atSetpointW;
  return { kind: 'panel', openV, maxW, atSetpointW };
}

/** Input voltage and current when the charger draws `pinW` (at most the capacity). */
export function settle(
  s: SupplyParams,
  irradianceWPerM2: number,
  pinW: number,
  setpointV: number,
): SupplyPoint {
  if (s.kind === 'adapter') {
    if (pinW <= 0) return { vinV: s.nominalV, iinA: 0, pinW: 0 };
    // V = Vn - R I and V I = P: the root on the high-voltage side.
    const disc = s.nominalV * s.nominalV - 4 * s.outputOhm * pinW;
    const iinA =
      s.outputOhm > 0
        ? Math.min(s.currentLimitA, (s.nominalV - Math.sqrt(Math.max(0, disc))) / (2 * s.outputOhm))
        : pinW / s.nominalV;
    const vinV = s.nominalV - s.outputOhm * iinA;
    return { vinV, iinA, pinW: vinV * iinA };
  }
  const { openV, mppV } = panelCurve(s.panel, irradianceWPerM2);
  if (pinW <= 0 || openV <= setpointV) return { vinV: openV, iinA: 0, pinW: 0 };
  if (setpointV < mppV) {
    // A charger limited by its input pulls the panel down past the maximum power point until
    // its input regulation holds it at the set point: the low-voltage side, not the mirror
    // point of equal power above the maximum.
    const at = panelPoint(s.panel, setpointV, irradianceWPerM2);
    if (Math.abs(pinW - at.pW) <= 1e-6 * Math.max(at.pW, 1e-9))
      return { vinV: at.vV, iinA: at.iA, pinW: at.pW };
  }
  let lo = Math.max(mppV, setpointV);
  if (panelPoint(s.panel, lo, irradianceWPerM2).pW < pinW) {
    const at = panelPoint(s.panel, setpointV, irradianceWPerM2);
    return { vinV: at.vV, iinA: at.iA, pinW: at.pW };
  }
  let hi = openV;
  for (let k = 0; k < 32; k++) {
    const mid = (lo + hi) / 2;
    if (panelPoint(s.panel, mid, irradianceWPerM2).pW >= pinW) lo = mid;
    else hi = mid;
  }
  const at = panelPoint(s.panel, lo, irradianceWPerM2);
  return { vinV: at.vV, iinA: at.iA, pinW: at.pW };
}

/** The panel's true maximum power point at this light (the simulator's truth, cached like the rest). */
export function panelMaxPowerPoint(panel: PanelParams, irradianceWPerM2: number): { vV: number; pW: number } {
  const c = panelCurve(panel, irradianceWPerM2);
  return { vV: c.mppV, pW: c.mppW };
}

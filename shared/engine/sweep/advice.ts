/** The plain sentence the Sweep view and the CLI print: which way to turn, and what it is worth. */

/** Below this gain the set point is left alone: within a sweep's own uncertainty (project choice). */
const LEAVE_IT_PCT = 1;

export interface Advice {
  /** Signed voltage change to make (mppV - operatingV). */
  turnV: number;
  /** Power gained at the same light by turning, % of the power at the operating point. */
  gainPct: number;
  text: string;
}

function fmtPct(pct: number): string {
  return pct < 2 ? pct.toFixed(1) : pct.toFixed(0);
}

export function adviceFor(mppV: number, mppW: number, operatingV: number, operatingW: number | null): Advice {
  const turnV = mppV - operatingV;
  if (operatingW === null) {
    return {
      turnV,
      gainPct: NaN,
      text:
        `the panel now sits at ${operatingV.toFixed(1)} V, outside the swept range; ` +
        `set it to about ${mppV.toFixed(1)} V, where the sweep found ${mppW.toFixed(1)} W`,
    };
  }
  const gainPct = operatingW > 0 ? (mppW / operatingW - 1) * 100 : Infinity;
  if (gainPct < LEAVE_IT_PCT || Math.abs(turnV) < 0.05) {
    return {
      turnV,
      gainPct,
      text: `leave the set point where it is: it sits within ${LEAVE_IT_PCT} % of the maximum power at this light`,
    };
  }
  const way = turnV > 0 ? 'up' : 'down';
  return {
    turnV,
    gainPct,
    text:
      `turn the set point ${way} about ${Math.abs(turnV).toFixed(1)} V: ` +
      `about ${Number.isFinite(gainPct) ? fmtPct(gainPct) : 'much'} % more power at this light`,
  };
}

/**
 * The one phase palette of Taperline: the dashboard's chart bands and legend, the Rack tiles
 * and the Run report all read it, so a phase looks the same on screen and on paper (CC is the
 * same amber everywhere). Pure data.
 */
import type { Phase } from '../engine/types';

export interface PhaseColours {
  /** Solid ink: labels, hatch strokes, swatch borders. */
  ink: string;
  /** Pale wash behind the hatch. */
  wash: string;
}

export const PHASE_PALETTE: Readonly<Record<Phase, PhaseColours>> = {
  precondition: { ink: '#6d5a9c', wash: 'rgba(109, 90, 156, 0.10)' },
  cc: { ink: '#b7791a', wash: 'rgba(183, 121, 26, 0.10)' },
  cv: { ink: '#23767d', wash: 'rgba(35, 118, 125, 0.10)' },
  done: { ink: '#4f7d33', wash: 'rgba(79, 125, 51, 0.10)' },
  fault: { ink: '#a8322a', wash: 'rgba(168, 50, 42, 0.14)' },
  idle: { ink: '#7d7a70', wash: 'rgba(125, 122, 112, 0.08)' },
};

/** `#b7791a` at alpha -> `rgba(183, 121, 26, alpha)`. */
export function inkWithAlpha(hex: string, alpha: number): string {
  const n = parseInt(hex.slice(1), 16);
  return `rgba(${(n >> 16) & 255}, ${(n >> 8) & 255}, ${n & 255}, ${alpha})`;
}

/**
 * The report's phase swatches and timeline segments in CSS, drawn from the dashboard's own
 * palette (shared/display/phase-palette.ts) with the same hatch per phase as the app's chart
 * bands, so CC looks the same on screen and on paper and no phase relies on colour alone.
 */
import { inkWithAlpha, PHASE_PALETTE } from '@shared/display/phase-palette';
import type { Phase } from '@shared/engine/types';

/** CSS of one hatch: the app's patterns (dots, rising, falling, horizontal, cross, vertical). */
function hatch(phase: Phase): string {
  const { ink, wash } = PHASE_PALETTE[phase];
  const line = inkWithAlpha(ink, 0.45);
  const paper = `linear-gradient(${wash}, ${wash}), #fbf9f3`;
  switch (phase) {
    case 'precondition':
      return `radial-gradient(circle, ${line} 1.3px, transparent 1.7px) 0 0/7px 7px, ${paper}`;
    case 'cc':
      return `repeating-linear-gradient(-45deg, ${line} 0 1px, transparent 1px 7px), ${paper}`;
    case 'cv':
      return `repeating-linear-gradient(45deg, ${line} 0 1px, transparent 1px 7px), ${paper}`;
    case 'done':
      return `repeating-linear-gradient(0deg, ${line} 0 1px, transparent 1px 7px), ${paper}`;
    case 'fault':
      return `repeating-linear-gradient(45deg, ${line} 0 1px, transparent 1px 7px), repeating-linear-gradient(-45deg, ${line} 0 1px, transparent 1px 7px), ${paper}`;
    case 'idle':
      return `repeating-linear-gradient(90deg, ${line} 0 1px, transparent 1px 7px), ${paper}`;
  }
}

export function phaseCss(): string {
  return (Object.keys(PHASE_PALETTE) as Phase[])
    .map((p) => `.ph-${p} { background: ${hatch(p)}; border-color: ${PHASE_PALETTE[p].ink}; }`)
    .join('\n');
}

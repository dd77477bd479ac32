/**
 * Taperline's phase palette and hatch patterns. Every phase has its own hatch, so the bands
 * behind the charts and the legend read without colour (print, colour-blind eyes).
 */
import { PHASE_PALETTE } from '@shared/display/phase-palette';
import type { Phase } from '@shared/engine/types';

export interface PhaseStyle {
  /** Solid ink of the phase (legend text marks, label plate). */
  ink: string;
  /** Pale wash behind the hatch. */
  wash: string;
  /** What the hatch looks like, in words, for the legend's accessible name. */
  hatchWords: string;
  drawHatch(ctx: CanvasRenderingContext2D, size: number): void;
}

const line = (ctx: CanvasRenderingContext2D, x0: number, y0: number, x1: number, y1: number) => {
  ctx.beginPath();
  ctx.moveTo(x0, y0);
  ctx.lineTo(x1, y1);
  ctx.stroke();
};

export const PHASE_STYLES: Record<Phase, PhaseStyle> = {
  precondition: {
    ...PHASE_PALETTE.precondition,
    hatchWords: 'dots',
    drawHatch(ctx, s) {
      ctx.beginPath();
      ctx.arc(s / 4, s / 4, 1.3, 0, Math.PI * 2);
      ctx.arc((3 * s) / 4, (3 * s) / 4, 1.3, 0, Math.PI * 2);
      ctx.fill();
    },
  },
  cc: {
    ...PHASE_PALETTE.cc,
    hatchWords: 'rising diagonal lines',
    drawHatch(ctx, s) {
      line(ctx, 0, s, s, 0);
      line(ctx, -s / 2, s / 2, s / 2, -s / 2);
      line(ctx, s / 2, (3 * s) / 2, (3 * s) / 2, s / 2);
    },
  },
  cv: {
    ...PHASE_PALETTE.cv,
    hatchWords: 'falling diagonal lines',
    drawHatch(ctx, s) {
      line(ctx, 0, 0, s, s);
      line(ctx, -s / 2, s / 2, s / 2, (3 * s) / 2);
      line(ctx, s / 2, -s / 2, (3 * s) / 2, s / 2);
    },
  },
  done: {
    ...PHASE_PALETTE.done,
    hatchWords: 'horizontal lines',
    drawHatch(ctx, s) {
      line(ctx, 0, s / 2, s, s / 2);
    },
  },
  fault: {
    ...PHASE_PALETTE.fault,
    hatchWords: 'cross-hatch',
    drawHatch(ctx, s) {
      line(ctx, 0, s, s, 0);
      line(ctx, 0, 0, s, s);
    },
  },
  idle: {
    ...PHASE_PALETTE.idle,
    hatchWords: 'vertical lines',
    drawHatch(ctx, s) {
      line(ctx, s / 2, 0, s / 2, s);
    },
  },
};

const HATCH_SIZE_PX = 10;
const patternCache = new Map<Phase, HTMLCanvasElement>();

/** A small tile with the phase's wash and hatch, for canvas patterns and legend swatches. */
export function hatchTile(phase: Phase): HTMLCanvasElement {
  const cached = patternCache.get(phase);
  if (cached) return cached;
  const style = PHASE_STYLES[phase];
  const tile = document.createElement('canvas');
  tile.width = HATCH_SIZE_PX;
  tile.height = HATCH_SIZE_PX;
  const ctx = tile.getContext('2d')!;
  ctx.fillStyle = style.wash;
  ctx.fillRect(0, 0, HATCH_SIZE_PX, HATCH_SIZE_PX);
  ctx.strokeStyle = withAlpha(style.ink, 0.38);
  ctx.fillStyle = withAlpha(style.ink, 0.38);
  ctx.lineWidth = 1;
  style.drawHatch(ctx, HATCH_SIZE_PX);
  patternCache.set(phase, tile);
  return tile;
}

function withAlpha(hex: string, alpha: number): string {
  const n = parseInt(hex.slice(1), 16);
  return `rgba(${(n >> 16) & 255}, ${(n >> 8) & 255}, ${n & 255}, ${alpha})`;
}

/** A legend swatch canvas filled with the phase's hatch. */
export function hatchSwatch(phase: Phase, widthPx = 28, heightPx = 16): HTMLCanvasElement {
  const swatch = document.createElement('canvas');
  swatch.width = widthPx;
  swatch.height = heightPx;
  swatch.className = 'hatch-swatch';
  const ctx = swatch.getContext('2d')!;
  ctx.fillStyle = ctx.createPattern(hatchTile(phase), 'repeat')!;
  ctx.fillRect(0, 0, widthPx, heightPx);
  ctx.strokeStyle = PHASE_STYLES[phase].ink;
  ctx.strokeRect(0.5, 0.5, widthPx - 1, heightPx - 1);
  return swatch;
}

/**
 * The input set point over run time, as a person at the trimmer turns it: straight stretches
 * between knots (time, voltage). Before the first knot the profile's set point holds; after
 * the last, the last knot's voltage.
 */
export interface SetpointKnot {
  tS: number;
  vV: number;
}

export function setpointOnPath(path: readonly SetpointKnot[], tS: number, beforeV: number): number {
  if (path.length === 0 || tS < path[0].tS) return beforeV;
  for (let k = 1; k < path.length; k++) {
    const a = path[k - 1];
    const b = path[k];
    if (tS <= b.tS) return b.tS > a.tS ? a.vV + ((b.vV - a.vV) * (tS - a.tS)) / (b.tS - a.tS) : b.vV;
  }
  return path[path.length - 1].vV;
}

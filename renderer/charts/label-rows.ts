/**
 * Lays out marker labels along a chart's top edge in rows so none overlaps another
 * ("input-low" and "fault-pin" a few pixels apart used to print as one smear). Greedy, left to
 * right: each label takes the first row whose last label ends before it starts. A label that
 * fits no row is left out (its marker line is still drawn) and counted.
 */
export interface LabelBox {
  /** Left edge of the label, px. */
  x: number;
  widthPx: number;
}

export interface LabelLayout {
  /** Row of each label in input order (0 = top), or -1 when it did not fit. */
  rows: number[];
  hidden: number;
}

export function layoutLabelRows(boxes: readonly LabelBox[], maxRows: number, gapPx = 4): LabelLayout {
  const order = boxes.map((_, i) => i).sort((a, b) => boxes[a].x - boxes[b].x);
  const rowEnds: number[] = [];
  const rows = new Array<number>(boxes.length).fill(-1);
  let hidden = 0;
  for (const i of order) {
    const { x, widthPx } = boxes[i];
    let row = rowEnds.findIndex((end) => end + gapPx <= x);
    if (row === -1 && rowEnds.length < maxRows) row = rowEnds.push(-Infinity) - 1;
    if (row === -1) {
      hidden++;
      continue;
    }
    rows[i] = row;
    rowEnds[row] = x + widthPx;
  }
  return { rows, hidden };
}

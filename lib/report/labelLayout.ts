/**
 * Where to put the labels of guide lines on a plot so that no two overlap: the plots are
 * compiled to SVG in Node, where no text can be measured, so widths are estimated from
 * the characters, wide enough for the broad serif faces a browser may fall back to.
 */

/**
 * Width in ems of a character, generous: capitals of DejaVu Serif run to about 0.8 em and
 * digits to 0.64 em; the estimate runs 10–20 % over what Chromium sets (test/report/labelLayout.test.ts).
 */
const emsOf = (c: string) => (/[A-Z]/.test(c) ? 0.86 : /[\s.,:;'·]/.test(c) ? 0.36 : 0.68);

/**
 * A conservative width in pixels of `text` set at `fontSize` pixels.
 *
 * Example: `estimateTextWidth("VIL 8.21 V", 10)` is 65.6 (DejaVu Serif sets it in 55.4 px).
 */
export function estimateTextWidth(text: string, fontSize: number): number {
  let ems = 0;
  for (const c of text) ems += emsOf(c);
  return ems * fontSize;
}

/**
 * Rows for labels set along a line (the labels of vertical guides, above a plot): each
 * label starts at its `at` (pixels) and runs `width` to the right; it goes in the first row
 * where it clears the label before it by `gap`. Returns each label's row, 0 nearest the
 * line, in the order given.
 *
 * Example: labels at 0 and 20, each 40 wide, go in rows 0 and 1; at 0 and 50, both in row 0.
 */
export function stackLabels(labels: readonly { at: number; width: number }[], gap = 4): number[] {
  const rows: number[] = new Array<number>(labels.length).fill(0);
  // The right end of the last label in each row so far, left to right.
  const ends: number[] = [];
  const order = labels.map((_, i) => i).sort((a, b) => labels[a]!.at - labels[b]!.at || a - b);
  for (const i of order) {
    const { at, width } = labels[i]!;
    let row = ends.findIndex((end) => at >= end + gap);
    if (row < 0) row = ends.push(-Infinity) - 1;
    ends[row] = at + width;
    rows[i] = row;
  }
  return rows;
}

/**
 * Positions for labels set in a column (the labels of horizontal guides, beside a plot):
 * each wants its centre at `at` (pixels) and takes `spacing` of the column, so labels that
 * would overlap are pushed apart as little as they must, keeping their order and staying
 * within `low`…`high` where the column has room. Returns the centres, in the order given.
 *
 * Example: `spreadLabels([100, 104], 14, 0, 260)` is [95, 109].
 */
export function spreadLabels(at: readonly number[], spacing: number, low: number, high: number): number[] {
  const order = at.map((_, i) => i).sort((a, b) => at[a]! - at[b]! || a - b);
  // Clusters of labels that touch, each centred on the mean of what its labels want.
  const clusters: { start: number; members: number[] }[] = [];
  for (const i of order) {
    clusters.push({ start: at[i]!, members: [i] });
    // Merge with the cluster before while they overlap, recentring the merged one.
    for (;;) {
      const c = clusters[clusters.length - 1]!;
      const before = clusters[clusters.length - 2];
      const mean = c.members.reduce((s, k) => s + at[k]!, 0) / c.members.length;
      c.start = mean - ((c.members.length - 1) * spacing) / 2;
      if (!before || before.start + before.members.length * spacing <= c.start) break;
      clusters.pop();
      before.members.push(...c.members);
    }
  }
  const ys = clusters.flatMap((c) => c.members.map((_, j) => c.start + j * spacing));
  // Into the column: pushed down off its top, up off its bottom, then apart again should
  // the column be too short for them all (they then run past its bottom).
  for (let k = 0; k < ys.length; k++) ys[k] = Math.max(ys[k]!, k === 0 ? low : ys[k - 1]! + spacing);
  for (let k = ys.length - 1; k >= 0; k--) ys[k] = Math.min(ys[k]!, k === ys.length - 1 ? high : ys[k + 1]! - spacing);
  for (let k = 1; k < ys.length; k++) ys[k] = Math.max(ys[k]!, ys[k - 1]! + spacing);
  const out = new Array<number>(at.length);
  clusters.flatMap((c) => c.members).forEach((i, k) => (out[i] = ys[k]!));
  return out;
}

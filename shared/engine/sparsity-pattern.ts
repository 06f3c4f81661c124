/**
 * A compressed-sparse-column pattern built from (row, col) pairs, with row
 * indices sorted and duplicates merged, plus a lookup from a pair to its slot in
 * the values array. The operator assembles values into fixed slots for every z.
 */
export interface SparsityPattern {
  n: number;
  colPtr: Int32Array;
  rowIdx: Int32Array;
}

/** Sorted, de-duplicated CSC pattern of the given entries. Cost O(nnz log(nnz/n)). */
export function buildPattern(n: number, rows: ArrayLike<number>, cols: ArrayLike<number>): SparsityPattern {
  const count = new Int32Array(n + 1);
  for (let e = 0; e < rows.length; e++) count[cols[e] + 1]++;
  for (let c = 0; c < n; c++) count[c + 1] += count[c];
  const fill = count.slice(0, n);
  const raw = new Int32Array(rows.length);
  for (let e = 0; e < rows.length; e++) raw[fill[cols[e]]++] = rows[e];
  const colPtr = new Int32Array(n + 1);
  const out: number[] = [];
  for (let c = 0; c < n; c++) {
    const column = Array.from(raw.subarray(count[c], count[c + 1])).sort((x, y) => x - y);
    for (let k = 0; k < column.length; k++) if (k === 0 || column[k] !== column[k - 1]) out.push(column[k]);
    colPtr[c + 1] = out.length;
  }
  return { n, colPtr, rowIdx: Int32Array.from(out) };
}

/** Slot of entry (row, col) in the values array, or −1 when not in the pattern. Cost O(log column length). */
export function patternSlot(p: SparsityPattern, row: number, col: number): number {
  let lo = p.colPtr[col];
  let hi = p.colPtr[col + 1] - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const r = p.rowIdx[mid];
    if (r === row) return mid;
    if (r < row) lo = mid + 1;
    else hi = mid - 1;
  }
  return -1;
}

/**
 * Compressed sparse column (CSC) storage of a square complex matrix, the layout
 * every operator T(z) = z − H − Σ(z) is assembled into (see operator.ts).
 *
 * Column c holds rows rowIdx[colPtr[c] .. colPtr[c+1]-1], sorted ascending, and the
 * value of entry e is values[2e] + i·values[2e+1] (interleaved re, im).
 */
export interface ComplexCsc {
  n: number;
  colPtr: Int32Array;
  rowIdx: Int32Array;
  /** Interleaved re, im; length 2·nnz. */
  values: Float64Array;
}

/**
 * Builds a CSC matrix from coordinate triplets (row, col, re + i·im). Duplicate
 * (row, col) pairs are summed, which is how lead self-energies are added on top
 * of the hopping entries of the mouth sites. Rows are sorted within each column.
 *
 * Cost: O(n + k) time and memory for k triplets (two counting sorts).
 */
export function cscFromTriplets(n: number, rows: ArrayLike<number>, cols: ArrayLike<number>, re: ArrayLike<number>, im: ArrayLike<number>): ComplexCsc {
  if (!Number.isInteger(n) || n < 0) throw new RangeError(`cscFromTriplets: n must be a non-negative integer, got ${n}`);
  const k = rows.length;
  if (cols.length !== k || re.length !== k || im.length !== k) {
    throw new RangeError(`cscFromTriplets: rows, cols, re and im must have the same length (got ${k}, ${cols.length}, ${re.length}, ${im.length})`);
  }
  for (let t = 0; t < k; t++) {
    const r = rows[t];
    const c = cols[t];
    if (!Number.isInteger(r) || r < 0 || r >= n) throw new RangeError(`cscFromTriplets: triplet ${t} has row ${r}, outside 0..${n - 1}`);
    if (!Number.isInteger(c) || c < 0 || c >= n) throw new RangeError(`cscFromTriplets: triplet ${t} has column ${c}, outside 0..${n - 1}`);
    if (!Number.isFinite(re[t]) || !Number.isFinite(im[t])) {
      throw new RangeError(`cscFromTriplets: triplet ${t} (row ${r}, column ${c}) has a non-finite value ${re[t]} + ${im[t]}i`);
    }
  }
  // Pass 1: sort by row (counting sort), pass 2: stable sort by column, so rows
  // end up ascending inside each column; then merge equal neighbours.
  const rowCount = new Int32Array(n + 1);
  for (let t = 0; t < k; t++) rowCount[rows[t] + 1]++;
  for (let r = 0; r < n; r++) rowCount[r + 1] += rowCount[r];
  const byRow = new Int32Array(k);
  for (let t = 0; t < k; t++) byRow[rowCount[rows[t]]++] = t;
  const colCount = new Int32Array(n + 1);
  for (let t = 0; t < k; t++) colCount[cols[t] + 1]++;
  for (let c = 0; c < n; c++) colCount[c + 1] += colCount[c];
  const sorted = new Int32Array(k);
  const next = colCount.slice(0, n);
  for (let q = 0; q < k; q++) {
    const t = byRow[q];
    sorted[next[cols[t]]++] = t;
  }
  const colPtr = new Int32Array(n + 1);
  const rowTmp = new Int32Array(k);
  const valTmp = new Float64Array(2 * k);
  let nnz = 0;
  for (let c = 0; c < n; c++) {
    let lastRow = -1;
    for (let q = colCount[c]; q < colCount[c + 1]; q++) {
      const t = sorted[q];
      const r = rows[t];
      if (r !== lastRow) {
        rowTmp[nnz] = r;
        valTmp[2 * nnz] = re[t];
        valTmp[2 * nnz + 1] = im[t];
        nnz++;
        lastRow = r;
      } else {
        valTmp[2 * nnz - 2] += re[t];
        valTmp[2 * nnz - 1] += im[t];
      }
    }
    colPtr[c + 1] = nnz;
  }
  return { n, colPtr, rowIdx: rowTmp.slice(0, nnz), values: valTmp.slice(0, 2 * nnz) };
}

/**
 * y = A·x for interleaved complex vectors (length 2n). Writes into out when given
 * (it must not alias x). Cost: O(nnz).
 */
export function cscMultiply(a: ComplexCsc, x: Float64Array, out?: Float64Array): Float64Array {
  const n = a.n;
  if (x.length < 2 * n) throw new RangeError(`cscMultiply: x has length ${x.length}, expected 2·n = ${2 * n}`);
  const y = out ?? new Float64Array(2 * n);
  if (y.length < 2 * n) throw new RangeError(`cscMultiply: out has length ${y.length}, expected 2·n = ${2 * n}`);
  if (y === x) throw new RangeError('cscMultiply: out must not be the same array as x');
  y.fill(0, 0, 2 * n);
  const { colPtr, rowIdx, values } = a;
  for (let c = 0; c < n; c++) {
    const xr = x[2 * c];
    const xi = x[2 * c + 1];
    if (xr === 0 && xi === 0) continue;
    for (let e = colPtr[c]; e < colPtr[c + 1]; e++) {
      const r = 2 * rowIdx[e];
      const ar = values[2 * e];
      const ai = values[2 * e + 1];
      y[r] += ar * xr - ai * xi;
      y[r + 1] += ar * xi + ai * xr;
    }
  }
  return y;
}

/**
 * Checks that colPtr/rowIdx describe a valid n×n CSC pattern (monotone pointers,
 * rows in range and strictly ascending in each column) and throws a RangeError
 * naming the first offending column otherwise. Cost: O(n + nnz).
 */
export function assertCscPattern(where: string, n: number, colPtr: Int32Array, rowIdx: Int32Array): void {
  if (!Number.isInteger(n) || n < 0) throw new RangeError(`${where}: n must be a non-negative integer, got ${n}`);
  if (colPtr.length !== n + 1) throw new RangeError(`${where}: colPtr has length ${colPtr.length}, expected n+1 = ${n + 1}`);
  if (colPtr[0] !== 0) throw new RangeError(`${where}: colPtr[0] must be 0, got ${colPtr[0]}`);
  if (colPtr[n] !== rowIdx.length) {
    throw new RangeError(`${where}: colPtr[n] = ${colPtr[n]} but rowIdx has length ${rowIdx.length}`);
  }
  for (let c = 0; c < n; c++) {
    const p0 = colPtr[c];
    const p1 = colPtr[c + 1];
    if (p1 < p0) throw new RangeError(`${where}: colPtr decreases at column ${c} (${p0} → ${p1})`);
    let last = -1;
    for (let e = p0; e < p1; e++) {
      const r = rowIdx[e];
      if (r < 0 || r >= n) throw new RangeError(`${where}: column ${c} has row index ${r}, outside 0..${n - 1}`);
      if (r <= last) throw new RangeError(`${where}: rows of column ${c} are not strictly ascending (${last} then ${r})`);
      last = r;
    }
  }
}

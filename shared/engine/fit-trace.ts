/**
 * Measured traces for peak fits: a CSV or TSV table (parsed with papaparse), two columns
 * chosen by the user with their units, converted to energy (meV) and transmission T.
 * Every refusal names the line of the file and the column, so the API and the command line
 * give the same messages.
 *
 * Units:
 * - x: energy in meV or µeV, or gate voltage in mV times a lever arm α in meV/mV
 *   (E = α·V_g: its zero is arbitrary, so positions from gate traces are not comparable
 *   with computed poles; widths are).
 * - y: transmission T, or conductance G in e²/h, 2e²/h or µS, turned into T with
 *   G = g_s·(e²/h)·T, g_s = 2 (docs/physics-model.md) and e²/h = 38.7404614 µS
 *   (CODATA 2018, exact in the 2019 SI: e = 1.602176634e-19 C, h = 6.62607015e-34 J·s).
 */
import Papa from 'papaparse';

export const X_UNITS = ['meV', 'ueV', 'mV'] as const;
export const Y_UNITS = ['T', 'e2h', '2e2h', 'uS'] as const;
export type TraceXUnit = (typeof X_UNITS)[number];
export type TraceYUnit = (typeof Y_UNITS)[number];

/** e²/h in µS (CODATA 2018). */
export const CONDUCTANCE_QUANTUM_US = 38.7404614;
/** Spin degeneracy of the conductance (contract: G = g_s (e²/h) T, g_s = 2). */
const SPIN = 2;
/** Largest trace file accepted (bytes), by the API and the command line alike. */
export const TRACE_MAX_BYTES = 2 * 1024 * 1024;
/** A fit needs at least this many points. */
const MIN_TRACE_POINTS = 8;

export interface TraceSelection {
  /** Column name (as in the header) or 1-based column number. */
  x: string;
  y: string;
  xUnit: TraceXUnit;
  /** meV per mV, needed when xUnit is 'mV'. */
  leverArm?: number;
  yUnit: TraceYUnit;
  /** Use only the file's lines firstLine..lastLine (1-based, inclusive). */
  firstLine?: number;
  lastLine?: number;
  /** Use only rows whose x (in the file's own unit) lies in [from, to]. */
  range?: { from: number; to: number };
}

interface TraceProblem {
  /** 1-based line of the file; null when the problem is not on one line. */
  line: number | null;
  /** Column name, or null. */
  column: string | null;
  message: string;
}

export class TraceError extends Error {
  constructor(readonly problem: TraceProblem) {
    super(problem.message);
    this.name = 'TraceError';
  }
}

interface ParsedTable {
  /** Column names: the header's, or "column 1", "column 2"… when the file has none. */
  columns: string[];
  hasHeader: boolean;
  delimiter: string;
  /** Data rows with their 1-based line numbers (comments and blank lines left out). */
  rows: { line: number; cells: string[] }[];
}

interface SelectedTrace {
  /** Energies, meV, ascending. */
  x: number[];
  /** Transmission T. */
  y: number[];
  /** The file's lines the points came from (same order as x). */
  lines: number[];
  xColumn: string;
  yColumn: string;
}

function isNumberText(s: string): boolean {
  const t = s.trim();
  return t !== '' && Number.isFinite(Number(t));
}

/**
 * Splits the text into a table. Lines starting with '#' and blank lines are skipped;
 * the first remaining line is a header when any of its cells is not a number.
 */
export function parseTable(text: string): ParsedTable {
  if (text.includes('\u0000')) throw new TraceError({ line: null, column: null, message: 'the file is not text (it contains NUL bytes)' });
  const parsed = Papa.parse<string[]>(text.replace(/^\uFEFF/, ''), { skipEmptyLines: false, delimitersToGuess: [',', '\t', ';'] });
  const quoteError = parsed.errors.find((e) => e.type === 'Quotes');
  if (quoteError)
    throw new TraceError({ line: (quoteError.row ?? 0) + 1, column: null, message: `line ${(quoteError.row ?? 0) + 1}: ${quoteError.message.toLowerCase()}` });
  const lines = parsed.data.map((cells, i) => ({ line: i + 1, cells: cells.map((c) => c.trim()) }));
  const content = lines.filter((l) => !(l.cells.length === 1 && l.cells[0] === '') && !l.cells[0]?.startsWith('#'));
  if (content.length === 0) throw new TraceError({ line: null, column: null, message: 'the file has no data rows' });
  const first = content[0];
  const hasHeader = first.cells.some((c) => !isNumberText(c));
  const columns = hasHeader ? first.cells.map((c, i) => c || `column ${i + 1}`) : first.cells.map((_, i) => `column ${i + 1}`);
  const seen = new Map<string, number>();
  columns.forEach((c) => seen.set(c, (seen.get(c) ?? 0) + 1));
  const twice = [...seen].find(([, n]) => n > 1);
  if (twice) throw new TraceError({ line: first.line, column: twice[0], message: `line ${first.line}: the column name "${twice[0]}" appears twice` });
  return { columns, hasHeader, delimiter: parsed.meta.delimiter, rows: hasHeader ? content.slice(1) : content };
}

function columnIndex(table: ParsedTable, wanted: string, role: 'x' | 'y'): number {
  const byName = table.columns.indexOf(wanted);
  if (byName >= 0) return byName;
  const k = Number(wanted);
  if (Number.isInteger(k) && k >= 1 && k <= table.columns.length) return k - 1;
  throw new TraceError({
    line: table.hasHeader ? (table.rows[0]?.line ?? 2) - 1 : null,
    column: wanted,
    message: `no column "${wanted}" for ${role} (the file has ${table.columns.map((c) => `"${c}"`).join(', ')})`,
  });
}

/** x in the file's unit → meV. */
function energyFromColumn(value: number, unit: TraceXUnit, leverArm?: number): number {
  if (unit === 'meV') return value;
  if (unit === 'ueV') return value / 1000;
  return value * (leverArm as number);
}

/** y in the file's unit → transmission T. */
function transmissionFromColumn(value: number, unit: TraceYUnit): number {
  if (unit === 'T') return value;
  if (unit === 'e2h') return value / SPIN;
  if (unit === '2e2h') return value;
  return value / (SPIN * CONDUCTANCE_QUANTUM_US);
}

/**
 * Picks, checks and converts the two columns. Refuses (TraceError) a missing column, text
 * or NaN/Infinity in a number cell, a row with too few cells, fewer than MIN_TRACE_POINTS
 * points, and x that is not strictly monotonic (a sweep that turns back or repeats a value:
 * the fit needs one y per x). Decreasing x is accepted and reversed.
 */
export function selectTrace(table: ParsedTable, sel: TraceSelection): SelectedTrace {
  if (sel.xUnit === 'mV' && !(typeof sel.leverArm === 'number' && sel.leverArm > 0 && Number.isFinite(sel.leverArm)))
    throw new TraceError({ line: null, column: null, message: 'a gate-voltage column (mV) needs a lever arm above 0 meV/mV' });
  const xi = columnIndex(table, sel.x, 'x');
  const yi = columnIndex(table, sel.y, 'y');
  const xName = table.columns[xi];
  const yName = table.columns[yi];
  const xs: number[] = [];
  const ys: number[] = [];
  const lines: number[] = [];
  for (const row of table.rows) {
    if (sel.firstLine !== undefined && row.line < sel.firstLine) continue;
    if (sel.lastLine !== undefined && row.line > sel.lastLine) continue;
    const need = Math.max(xi, yi) + 1;
    if (row.cells.length < need)
      throw new TraceError({
        line: row.line,
        column: row.cells.length <= xi ? xName : yName,
        message: `line ${row.line}: ${row.cells.length} field${row.cells.length === 1 ? '' : 's'}, no value for column "${row.cells.length <= xi ? xName : yName}"`,
      });
    const read = (i: number, name: string): number => {
      const text = row.cells[i];
      const v = Number(text);
      if (text === '') throw new TraceError({ line: row.line, column: name, message: `line ${row.line}, column "${name}": the cell is empty` });
      if (!Number.isFinite(v))
        throw new TraceError({
          line: row.line,
          column: name,
          message: /^[+-]?(nan|inf(inity)?)$/i.test(text)
            ? `line ${row.line}, column "${name}": ${text} is not a finite number`
            : `line ${row.line}, column "${name}": "${text.length > 30 ? text.slice(0, 30) + '…' : text}" is not a number`,
        });
      return v;
    };
    const xv = read(xi, xName);
    const yv = read(yi, yName);
    if (sel.range && (xv < Math.min(sel.range.from, sel.range.to) || xv > Math.max(sel.range.from, sel.range.to))) continue;
    xs.push(xv);
    ys.push(yv);
    lines.push(row.line);
  }
  if (xs.length < MIN_TRACE_POINTS)
    throw new TraceError({
      line: null,
      column: null,
      message: `too few points: ${xs.length} in the chosen lines and range, a fit needs at least ${MIN_TRACE_POINTS}`,
    });
  const direction = Math.sign(xs[1] - xs[0]);
  for (let i = 1; i < xs.length; i++) {
    if (Math.sign(xs[i] - xs[i - 1]) !== direction || direction === 0)
      throw new TraceError({
        line: lines[i],
        column: xName,
        message: `line ${lines[i]}, column "${xName}": ${xs[i]} breaks the ${direction >= 0 ? 'increasing' : 'decreasing'} order of the sweep (line ${lines[i - 1]}: ${xs[i - 1]}); x must be strictly monotonic`,
      });
  }
  const order = direction < 0 ? xs.map((_, i) => xs.length - 1 - i) : xs.map((_, i) => i);
  return {
    x: order.map((i) => energyFromColumn(xs[i], sel.xUnit, sel.leverArm)),
    y: order.map((i) => transmissionFromColumn(ys[i], sel.yUnit)),
    lines: order.map((i) => lines[i]),
    xColumn: xName,
    yColumn: yName,
  };
}

/**
 * A small GDSII stream writer: one library, one structure, BOUNDARY elements only. Written
 * here because no well-kept GDSII writer exists on the npm registry. Format as published in
 * the GDSII Stream Format Manual (Calma, release 6.0, 1987): big-endian records of
 * [length: u16][record type: u8][data type: u8][data], lengths even; 8-byte reals are excess-64
 * base-16 floating point; a boundary's XY list repeats its first point at the end and holds at
 * most 8191 points (the u16 record length). Coordinates are integers in database units.
 */
import type { Ring } from './polygon';

interface GdsiiBoundary {
  layer: number;
  datatype: number;
  /** Vertices in database units (integers), not closed. */
  ring: Ring;
}

interface GdsiiLibrary {
  libraryName: string;
  structureName: string;
  /** User units per database unit (1e-3: database unit 1 nm, user unit 1 µm). */
  userUnitsPerDatabaseUnit: number;
  /** Metres per database unit (1e-9 for 1 nm). */
  metresPerDatabaseUnit: number;
  boundaries: GdsiiBoundary[];
  /** The time stamped as modification and access time. */
  time: Date;
}

/** Largest number of distinct vertices of one boundary (8191 points including the closing one). */
const GDSII_MAX_VERTICES = 8190;

/** Record type and data type, as one u16. */
const Rec = {
  HEADER: 0x0002,
  BGNLIB: 0x0102,
  LIBNAME: 0x0206,
  UNITS: 0x0305,
  ENDLIB: 0x0400,
  BGNSTR: 0x0502,
  STRNAME: 0x0606,
  ENDSTR: 0x0700,
  BOUNDARY: 0x0800,
  LAYER: 0x0d02,
  DATATYPE: 0x0e02,
  XY: 0x1003,
  ENDEL: 0x1100,
} as const;
type Rec = (typeof Rec)[keyof typeof Rec];

/** The GDSII 8-byte real: sign, 7-bit exponent (excess 64, base 16), 56-bit mantissa in [1/16, 1). */
export function gdsiiReal(value: number): Uint8Array {
  const out = new Uint8Array(8);
  if (value === 0) return out;
  if (!Number.isFinite(value)) throw new Error(`cannot write ${value} as a GDSII real`);
  let m = Math.abs(value);
  let e = 64;
  while (m >= 1) {
    m /= 16;
    e++;
  }
  while (m < 1 / 16) {
    m *= 16;
    e--;
  }
  if (e < 0 || e > 127) throw new Error(`${value} is out of the GDSII real range`);
  // m·2^56 is an exact integer: m has 53 significant bits and m ≥ 2^-4.
  let mantissa = BigInt(m * 2 ** 56);
  out[0] = (value < 0 ? 0x80 : 0) | e;
  for (let k = 7; k >= 1; k--) {
    out[k] = Number(mantissa & 0xffn);
    mantissa >>= 8n;
  }
  return out;
}

class RecordWriter {
  private readonly chunks: Uint8Array[] = [];
  private size = 0;

  record(type: Rec, data: Uint8Array = new Uint8Array(0)): void {
    const length = 4 + data.length;
    if (length > 0xffff) throw new Error(`a GDSII record of ${length} bytes is over the 65535-byte limit`);
    const head = new Uint8Array(4);
    new DataView(head.buffer).setUint16(0, length);
    head[2] = type >> 8;
    head[3] = type & 0xff;
    this.chunks.push(head, data);
    this.size += length;
  }

  int16(type: Rec, values: number[]): void {
    const data = new Uint8Array(values.length * 2);
    const view = new DataView(data.buffer);
    values.forEach((v, k) => view.setInt16(2 * k, v));
    this.record(type, data);
  }

  ascii(type: Rec, text: string): void {
    if (!/^[\x20-\x7e]*$/.test(text)) throw new Error(`GDSII names are printable ASCII: '${text}'`);
    const data = new Uint8Array(text.length + (text.length % 2));
    for (let k = 0; k < text.length; k++) data[k] = text.charCodeAt(k);
    this.record(type, data);
  }

  bytes(): Uint8Array {
    const out = new Uint8Array(this.size);
    let o = 0;
    for (const c of this.chunks) {
      out.set(c, o);
      o += c.length;
    }
    return out;
  }
}

function stamp(t: Date): number[] {
  return [t.getUTCFullYear(), t.getUTCMonth() + 1, t.getUTCDate(), t.getUTCHours(), t.getUTCMinutes(), t.getUTCSeconds()];
}

/** Writes the library. Throws when a coordinate is not an integer within ±2³¹ or a boundary is too long. Cost O(vertices). */
export function writeGdsii(lib: GdsiiLibrary): Uint8Array {
  const w = new RecordWriter();
  w.int16(Rec.HEADER, [600]);
  w.int16(Rec.BGNLIB, [...stamp(lib.time), ...stamp(lib.time)]);
  w.ascii(Rec.LIBNAME, lib.libraryName);
  const units = new Uint8Array(16);
  units.set(gdsiiReal(lib.userUnitsPerDatabaseUnit), 0);
  units.set(gdsiiReal(lib.metresPerDatabaseUnit), 8);
  w.record(Rec.UNITS, units);
  w.int16(Rec.BGNSTR, [...stamp(lib.time), ...stamp(lib.time)]);
  w.ascii(Rec.STRNAME, lib.structureName);
  for (const [n, b] of lib.boundaries.entries()) {
    if (b.ring.length < 3) throw new Error(`boundary ${n} has ${b.ring.length} vertices; a polygon needs 3`);
    if (b.ring.length > GDSII_MAX_VERTICES) throw new Error(`boundary ${n} has ${b.ring.length} vertices, above the GDSII limit of ${GDSII_MAX_VERTICES}`);
    w.record(Rec.BOUNDARY);
    w.int16(Rec.LAYER, [b.layer]);
    w.int16(Rec.DATATYPE, [b.datatype]);
    const points = [...b.ring, b.ring[0]!];
    const xy = new Uint8Array(points.length * 8);
    const view = new DataView(xy.buffer);
    points.forEach(([x, y], k) => {
      for (const [v, o] of [
        [x, 0],
        [y, 4],
      ] as const) {
        if (!Number.isInteger(v) || v < -(2 ** 31) || v >= 2 ** 31) throw new Error(`boundary ${n}: coordinate ${v} is not a 32-bit integer of database units`);
        view.setInt32(8 * k + o, v);
      }
    });
    w.record(Rec.XY, xy);
    w.record(Rec.ENDEL);
  }
  w.record(Rec.ENDSTR);
  w.record(Rec.ENDLIB);
  return w.bytes();
}

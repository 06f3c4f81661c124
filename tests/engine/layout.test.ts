// The device layout: the outline traced from the site mask, the GDSII writer read back by an
// independent parser from the npm registry (gdsii, by Tiny Tapeout), and the layer map.
import fc from 'fast-check';
import { parseGDS, RecordType } from 'gdsii';
import { describe, expect, it } from 'vitest';
import { validateCavityModel } from '../../shared/model/model-validation';
import { buildDeviceLayout, LAYERS, LEAD_STUB_SPACINGS } from '../../shared/layout/device-layout';
import { CHORD_TOLERANCE_NM, drawnOutline } from '../../shared/layout/drawn-outline';
import { gdsiiReal, writeGdsii } from '../../shared/layout/gdsii-writer';
import { traceMaskOutline } from '../../shared/layout/outline-trace';
import { bridgeHoles, signedArea, type Ring } from '../../shared/layout/polygon';
import { fabricationModel } from '../server/fabrication-fixture';

function maskOf(nx: number, ny: number, inside: (i: number, j: number) => boolean): Uint8Array {
  const m = new Uint8Array(nx * ny);
  for (let i = 0; i < nx; i++) for (let j = 0; j < ny; j++) if (inside(i, j)) m[i * ny + j] = 1;
  return m;
}
const count = (m: Uint8Array) => m.reduce((s, v) => s + v, 0);

/** Every vertex turns: no three consecutive points on one line. */
function noCollinear(ring: Ring): boolean {
  return ring.every((b, k) => {
    const a = ring[(k + ring.length - 1) % ring.length]!;
    const c = ring[(k + 1) % ring.length]!;
    return (b[0] - a[0]) * (c[1] - b[1]) - (b[1] - a[1]) * (c[0] - b[0]) !== 0;
  });
}

describe('outline traced from the site mask', () => {
  it('a full rectangle of sites is one 4-vertex rectangle of N·a by M·a', () => {
    const t = traceMaskOutline(
      maskOf(7, 4, () => true),
      7,
      4,
      5,
    );
    expect(t.parts).toHaveLength(1);
    expect(t.parts[0]!.outer).toEqual([
      [0, 0],
      [35, 0],
      [35, 20],
      [0, 20],
    ]);
    expect(t.parts[0]!.holes).toEqual([]);
  });

  it('a ring of sites gives one counter-clockwise boundary and one clockwise hole; area = sites·a²', () => {
    const mask = maskOf(9, 9, (i, j) => (i - 4) ** 2 + (j - 4) ** 2 <= 16 && (i - 4) ** 2 + (j - 4) ** 2 > 4);
    const t = traceMaskOutline(mask, 9, 9, 2.5);
    expect(t.parts).toHaveLength(1);
    expect(t.parts[0]!.holes).toHaveLength(1);
    expect(signedArea(t.parts[0]!.outer)).toBeGreaterThan(0);
    expect(signedArea(t.parts[0]!.holes[0]!)).toBeLessThan(0);
    expect(t.area).toBeCloseTo(count(mask) * 2.5 ** 2, 9);
    // The keyhole ring keeps the area (the cut has none).
    const one = bridgeHoles(t.parts[0]!.outer, t.parts[0]!.holes);
    expect(signedArea(one)).toBeCloseTo(count(mask) * 2.5 ** 2, 9);
  });

  it('cells touching only at a corner stay apart (4-connected, like the hopping)', () => {
    const mask = maskOf(2, 2, (i, j) => i === j);
    const t = traceMaskOutline(mask, 2, 2, 1);
    expect(t.parts).toHaveLength(2);
    expect(t.parts.every((p) => p.outer.length === 4)).toBe(true);
  });

  it('for any mask the traced area is sites·a², boundaries are CCW, holes CW, no collinear points (property)', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 9 }),
        fc.integer({ min: 1, max: 9 }),
        fc.double({ min: 0.5, max: 20, noNaN: true }),
        fc.array(fc.boolean(), { minLength: 81, maxLength: 81 }),
        (nx, ny, a, bits) => {
          const mask = maskOf(nx, ny, (i, j) => bits[i * 9 + j]!);
          const t = traceMaskOutline(mask, nx, ny, a);
          const expected = count(mask) * a * a;
          expect(Math.abs(t.area - expected)).toBeLessThanOrEqual(1e-9 * Math.max(1, expected));
          for (const p of t.parts) {
            expect(signedArea(p.outer)).toBeGreaterThan(0);
            expect(noCollinear(p.outer)).toBe(true);
            for (const h of p.holes) {
              expect(signedArea(h)).toBeLessThan(0);
              expect(noCollinear(h)).toBe(true);
            }
            const bridged = bridgeHoles(p.outer, p.holes);
            const partArea = signedArea(p.outer) + p.holes.reduce((s, h) => s + signedArea(h), 0);
            expect(Math.abs(signedArea(bridged) - partArea)).toBeLessThanOrEqual(1e-9 * Math.max(1, expected));
          }
        },
      ),
      { numRuns: 300 },
    );
  });
});

describe('drawn outline', () => {
  it('a disk is a polygon whose vertices lie on the circle and whose chords stay within the tolerance', () => {
    const [ring] = drawnOutline({ kind: 'disk', cx: 100, cy: 80, radius: 60 }, 5)!;
    for (const [x, y] of ring!) expect(Math.hypot(x - 102.5, y - 82.5)).toBeCloseTo(60, 9);
    // Sagitta of each chord: r(1 − cos(π/n)) ≤ tolerance (elementary geometry, common practice).
    const n = ring!.length;
    expect(60 * (1 - Math.cos(Math.PI / n))).toBeLessThanOrEqual(CHORD_TOLERANCE_NM);
    // Its area tends to πr² from below: n/2·r²·sin(2π/n) (area of a regular n-gon, any geometry text).
    expect(signedArea(ring!)).toBeCloseTo((n / 2) * 3600 * Math.sin((2 * Math.PI) / n), 6);
  });

  it('combined shapes have no single drawn outline', () => {
    expect(drawnOutline(fabricationModel.shape as never, 5)).toBeNull();
  });
});

describe('device layout and GDSII', () => {
  const checked = validateCavityModel(fabricationModel);
  if (!checked.ok) throw new Error(JSON.stringify(checked.issues));
  const layout = buildDeviceLayout(checked.model, checked.mask);

  it('puts the cavity, the lead stubs and each gate on the documented layers', () => {
    expect(layout.layers.map((l) => l.layer)).toEqual([LAYERS.cavityTraced, LAYERS.leads, LAYERS.firstGate, LAYERS.firstGate + 1]);
    expect(layout.outline).toBe('traced');
    expect(layout.cavityAreaNm2).toBeCloseTo(checked.siteCount * 25, 9);
    const leads = layout.layers.find((l) => l.layer === LAYERS.leads)!;
    // Left lead: rows 11..18 → y from 55 to 95 nm in the layout frame, 10·a = 50 nm long.
    expect(leads.polygons[0]).toEqual([
      [-LEAD_STUB_SPACINGS * 5, 55],
      [0, 55],
      [0, 95],
      [-LEAD_STUB_SPACINGS * 5, 95],
    ]);
    const gate = layout.layers.find((l) => l.layer === LAYERS.firstGate)!;
    expect(gate.polygons[0]).toEqual([
      [52.5, 2.5],
      [72.5, 2.5],
      [72.5, 152.5],
      [52.5, 152.5],
    ]);
  });

  it('the GDSII file, read back by the independent gdsii parser, gives the same polygons in nm on the same layers', () => {
    const boundaries = layout.layers.flatMap((l) =>
      l.polygons.map((ring) => ({ layer: l.layer, datatype: l.datatype, ring: ring.map(([x, y]) => [Math.round(x), Math.round(y)] as const) })),
    );
    const bytes = writeGdsii({
      libraryName: 'POLEWARD',
      structureName: 'DEVICE',
      userUnitsPerDatabaseUnit: 1e-3,
      metresPerDatabaseUnit: 1e-9,
      boundaries,
      time: new Date(Date.UTC(2026, 11, 2, 7, 0, 0)),
    });
    const records = [...parseGDS(new Uint8Array(bytes))];
    const units = records.find((r) => r.tag === RecordType.UNITS)!.data as { userUnit: number; metersPerUnit: number };
    expect(units.userUnit).toBeCloseTo(1e-3, 15);
    expect(units.metersPerUnit / 1e-9).toBeCloseTo(1, 12);
    expect(records[0]!.tag).toBe(RecordType.HEADER);
    expect(records[records.length - 1]!.tag).toBe(RecordType.ENDLIB);
    const read: { layer: number; datatype: number; ring: number[][] }[] = [];
    let current: { layer: number; datatype: number; ring: number[][] } | null = null;
    for (const r of records) {
      if (r.tag === RecordType.BOUNDARY) current = { layer: -1, datatype: -1, ring: [] };
      else if (r.tag === RecordType.LAYER && current) current.layer = r.data as number;
      else if (r.tag === RecordType.DATATYPE && current) current.datatype = r.data as number;
      else if (r.tag === RecordType.XY && current) current.ring = r.data as number[][];
      else if (r.tag === RecordType.ENDEL && current) {
        read.push(current);
        current = null;
      }
    }
    expect(read).toHaveLength(boundaries.length);
    read.forEach((b, k) => {
      expect(b.layer).toBe(boundaries[k]!.layer);
      expect(b.datatype).toBe(0);
      // GDSII repeats the first point at the end of a boundary.
      expect(b.ring[b.ring.length - 1]).toEqual(b.ring[0]);
      expect(b.ring.slice(0, -1)).toEqual(boundaries[k]!.ring.map((p) => [...p]));
    });
    // The traced cavity read back still has sites·a² of area (a = 5 nm: the frame is on whole nm).
    const cavity = read.find((b) => b.layer === LAYERS.cavityTraced)!;
    expect(signedArea(cavity.ring.slice(0, -1).map(([x, y]) => [x!, y!] as const))).toBe(checked.siteCount * 25);
  });

  it('writes the GDSII reals of the usual 1 nm / 1 µm units as the format defines them', () => {
    // 1e-3 = 0x3E4189374BC6A7EF and 1e-9 = 0x3944B82FA09B5A54 as layout tools write them (from
    // memory: the UNITS record of countless nm-grid layouts). Those round 0.001 to 56 mantissa
    // bits; we write the double nearest 0.001 exactly, so the last mantissa unit may differ.
    const bits = (v: number) => BigInt('0x' + Buffer.from(gdsiiReal(v)).toString('hex'));
    const near = (v: number, tool: string) => {
      const d = bits(v) - BigInt('0x' + tool);
      expect(d >= -1n && d <= 1n, `${v}: ${bits(v).toString(16)} against ${tool}`).toBe(true);
    };
    near(1e-3, '3e4189374bc6a7ef');
    near(1e-9, '3944b82fa09b5a54');
    // Exact cases by the format's definition: 1 = 16^1 · 1/16, −2 = −16^1 · 2/16.
    expect(bits(1).toString(16)).toBe('4110000000000000');
    expect(bits(-2).toString(16)).toBe('c120000000000000');
    // Decoding by the definition (sign, 16^(e−64), mantissa/2^56) gives the double back exactly.
    for (const v of [1e-3, 1e-9, 0.3, 12345.678, -7.25e-7]) {
      const b = gdsiiReal(v);
      let m = 0n;
      for (let k = 1; k < 8; k++) m = (m << 8n) | BigInt(b[k]!);
      const back = (b[0]! & 0x80 ? -1 : 1) * (Number(m) / 2 ** 56) * 16 ** ((b[0]! & 0x7f) - 64);
      expect(back).toBe(v);
    }
  });

  it('refuses a coordinate that is not a whole database unit, and a boundary over 8190 vertices', () => {
    const base = { libraryName: 'X', structureName: 'Y', userUnitsPerDatabaseUnit: 1e-3, metresPerDatabaseUnit: 1e-9, time: new Date() };
    expect(() =>
      writeGdsii({
        ...base,
        boundaries: [
          {
            layer: 1,
            datatype: 0,
            ring: [
              [0, 0],
              [1.5, 0],
              [1, 1],
            ],
          },
        ],
      }),
    ).toThrow(/not a 32-bit integer/);
    const big: Ring = Array.from({ length: 8191 }, (_, k) => [k, k % 2] as const);
    expect(() => writeGdsii({ ...base, boundaries: [{ layer: 1, datatype: 0, ring: big }] })).toThrow(/8190/);
  });
});

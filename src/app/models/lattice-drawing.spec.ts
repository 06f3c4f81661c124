import { atomPaths, bondPath, drawingFrame, leadRibbon } from './lattice-drawing';

/** The segments of an SVG path made of M, l and h0 commands, as [x0, y0, x1, y1]. */
function segments(d: string): number[][] {
  const out: number[][] = [];
  let x = 0;
  let y = 0;
  for (const [, cmd, args] of d.matchAll(/([Mlh])([^Mlh]*)/g)) {
    const v = args
      .trim()
      .split(/[\s,]+/)
      .map(Number);
    if (cmd === 'M') [x, y] = v;
    else if (cmd === 'l') {
      out.push([x, y, x + v[0], y + v[1]]);
      [x, y] = [x + v[0], y + v[1]];
    }
  }
  return out;
}

/** The dots of an atom path (one "M x y h0" per atom). */
function dots(d: string): number[][] {
  return [...d.matchAll(/M([-\d.]+) ([-\d.]+)h0/g)].map((m) => [Number(m[1]), Number(m[2])]);
}

const key = (s: number[]) => {
  const a = `${s[0].toFixed(2)},${s[1].toFixed(2)}`;
  const b = `${s[2].toFixed(2)},${s[3].toFixed(2)}`;
  return a < b ? `${a}|${b}` : `${b}|${a}`;
};

/**
 * Every pair of points exactly one a_CC apart, found from the positions alone: the honeycomb's
 * nearest neighbours are the only pairs at that distance (the next shell is at √3·a_CC;
 * Castro Neto et al., Rev. Mod. Phys. 81, 109 (2009), §II.A).
 */
function unitPairs(points: number[][]): Set<string> {
  const out = new Set<string>();
  for (let p = 0; p < points.length; p++)
    for (let q = p + 1; q < points.length; q++) {
      const d = Math.hypot(points[p][0] - points[q][0], points[p][1] - points[q][1]);
      if (Math.abs(d - 1) < 1e-3) out.add(key([...points[p], ...points[q]]));
    }
  return out;
}

describe('drawingFrame', () => {
  it('puts square-lattice site (i, j) at the centre of its unit cell, row 0 at the bottom', () => {
    const f = drawingFrame('square', 5, 60, 40);
    expect([f.width, f.height]).toEqual([60, 40]);
    expect(f.x(3 * 5)).toBeCloseTo(3.5, 12);
    expect(f.y(2 * 5)).toBeCloseTo(40 - 2 - 0.5, 12);
    // Blocks are drawn from the cell edges: [x0, x0 + w) = [10, 25) nm covers the cells 2..4.
    expect([f.edgeX(10), f.edgeX(25)]).toEqual([2, 5]);
    expect(f.rowBand(10, 20)).toEqual([10, 30]);
  });

  it('keeps the honeycomb in proportion: columns √3/2·a_CC apart, rows 3/2·a_CC, lifted atoms a_CC/2 higher', () => {
    const f = drawingFrame('honeycomb', 0.142, 10, 6);
    expect(f.width).toBeCloseTo(10 * (Math.sqrt(3) / 2), 12);
    expect(f.height).toBeCloseTo(6 * 1.5 + 0.5, 12);
    // Atom (1, 0) (B, i + j odd) sits a_CC/2 above atom (0, 0): one drawing unit is a_CC.
    const p = f.placement;
    const up = f.y(p.y(0, 0)) - f.y(p.y(1, 0));
    expect(up).toBeCloseTo(0.5, 12);
    // Every atom of the grid lies inside the grid box.
    for (let i = 0; i < 10; i++)
      for (let j = 0; j < 6; j++) {
        const [x, y] = [f.x(p.x(i, j)), f.y(p.y(i, j))];
        expect(x > 0 && x < f.width && y > 0 && y < f.height).toBe(true);
      }
  });
});

describe('bondPath and atomPaths on the honeycomb', () => {
  const nx = 12;
  const ny = 7;
  const f = drawingFrame('honeycomb', 0.142, nx, ny);
  // A ragged flake: a full block with a notch and a lone atom (no bonds).
  const mask = new Uint8Array(nx * ny);
  for (let i = 1; i < 10; i++) for (let j = 1; j < 6; j++) mask[i * ny + j] = 1;
  mask[4 * ny + 3] = 0;
  mask[5 * ny + 3] = 0;
  mask[11 * ny + 0] = 1;

  it('draws exactly the pairs of atoms one a_CC apart, each once', () => {
    const [a, b] = atomPaths(mask, nx, ny, f);
    const atoms = [...dots(a), ...dots(b)];
    expect(atoms).toHaveLength(9 * 5 - 2 + 1);
    const drawn = segments(bondPath(mask, nx, ny, f));
    for (const s of drawn) expect(Math.hypot(s[2] - s[0], s[3] - s[1])).toBeCloseTo(1, 3);
    const keys = drawn.map(key);
    expect(new Set(keys).size).toBe(keys.length);
    expect(new Set(keys)).toEqual(unitPairs(atoms));
  });

  it('splits the atoms by sublattice, every bond joining an A atom to a B atom', () => {
    const [a, b] = atomPaths(mask, nx, ny, f);
    const sideOf = new Map<string, string>();
    for (const p of dots(a)) sideOf.set(`${p[0].toFixed(2)},${p[1].toFixed(2)}`, 'A');
    for (const p of dots(b)) sideOf.set(`${p[0].toFixed(2)},${p[1].toFixed(2)}`, 'B');
    for (const s of segments(bondPath(mask, nx, ny, f))) {
      const ends = [`${s[0].toFixed(2)},${s[1].toFixed(2)}`, `${s[2].toFixed(2)},${s[3].toFixed(2)}`].map((k) => sideOf.get(k));
      expect(ends.sort()).toEqual(['A', 'B']);
    }
  });

  it('draws one closed hexagon as six bonds', () => {
    // The ring around a hexagon of the brick wall (lattice-geometry.ts): columns 2..4 of rows 1 and 2,
    // closed by the bonds (2, 1)–(2, 2) and (4, 1)–(4, 2) that leave B atoms (i + j odd) upwards.
    const m = new Uint8Array(nx * ny);
    for (const [i, j] of [
      [2, 1],
      [3, 1],
      [4, 1],
      [2, 2],
      [3, 2],
      [4, 2],
    ])
      m[i * ny + j] = 1;
    expect(segments(bondPath(m, nx, ny, f))).toHaveLength(6);
  });
});

describe('leadRibbon', () => {
  const nx = 20;
  const ny = 12;
  const f = drawingFrame('honeycomb', 0.142, nx, ny);
  const full = new Uint8Array(nx * ny).fill(1);

  it('draws a left lead as a zigzag ribbon of its chains, bonded to every mouth atom', () => {
    const r = leadRibbon({ side: 'left', start: 3, width: 4 }, full, nx, ny, f, 3);
    expect(r.edge).toBe('zigzag');
    const atoms = dots(r.atoms);
    // Whole unit cells (two columns) within the reach of 3 a_CC: √3/2·a_CC per column → 2 columns.
    expect(atoms).toHaveLength(4 * 2);
    for (const [x] of atoms) expect(x).toBeLessThan(0);
    for (const s of segments(r.bonds)) expect(Math.hypot(s[2] - s[0], s[3] - s[1])).toBeCloseTo(1, 3);
    // The mouth: the cavity atoms (0, j), j = 3..6, each bonded to the lead.
    const contacts = dots(r.contacts);
    expect(contacts).toHaveLength(4);
    for (const [x] of contacts) expect(x).toBeCloseTo(f.x(0), 3); // path data is rounded to 1e-4 a_CC
  });

  it('draws a top lead as an armchair ribbon, bonded to every other atom of the top row', () => {
    const r = leadRibbon({ side: 'top', start: 4, width: 6 }, full, nx, ny, f, 6);
    expect(r.edge).toBe('armchair');
    // Only B atoms (i + j odd) of row ny − 1 bond upwards (lattice-geometry.ts): columns 4..9 of row 11 → i even.
    const contacts = dots(r.contacts);
    expect(contacts).toHaveLength(3);
    for (const [, y] of contacts) expect(y).toBeGreaterThan(0);
    for (const [, y] of dots(r.atoms)) expect(y).toBeLessThan(0);
    for (const s of segments(r.bonds)) expect(Math.hypot(s[2] - s[0], s[3] - s[1])).toBeCloseTo(1, 3);
    expect(r.band.y + r.band.h).toBe(0);
  });

  it('has no contacts where the cavity misses the mouth', () => {
    const empty = new Uint8Array(nx * ny);
    expect(leadRibbon({ side: 'right', start: 0, width: 3 }, empty, nx, ny, f, 4).contacts).toBe('');
  });
});

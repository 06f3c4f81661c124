import { matchPoles } from './pole-matching';

describe('matchPoles', () => {
  it('pairs each pole with its nearest partner once, closest pairs first, and keeps the lone ones', () => {
    const a = [
      { energy: 1, width: 0.01 },
      { energy: 2, width: 0.02 },
      { energy: 2.05, width: 0.02 },
    ];
    const b = [
      { energy: 2.04, width: 0.03 },
      { energy: 1.01, width: 0.012 },
    ];
    const rows = matchPoles(a, b);
    expect(rows).toHaveLength(3);
    expect(rows[0].a).toBe(a[0]);
    expect(rows[0].b).toBe(b[1]);
    expect(rows[0].dEnergy!).toBeCloseTo(0.01, 12);
    expect(rows[0].dWidth!).toBeCloseTo(0.002, 12);
    // 2.05 is nearer 2.04 than 2.00 is, so it takes B's pole and 2.00 stays alone.
    const second = rows.find((r) => r.b === b[0])!;
    expect(second.a).toBe(a[2]);
    const lone = rows.find((r) => r.b === null)!;
    expect(lone.a).toBe(a[1]);
    expect(lone.dEnergy).toBeNull();
  });

  it('pairs only inside the range both runs searched and marks the poles outside it', () => {
    // Runs over 2–7 and 6–10 meV: a pole at 8 meV of A must not be matched to B's 6.9 meV one.
    const a = [
      { energy: 6.5, width: 0.01 },
      { energy: 8, width: 0.01 },
    ];
    const b = [
      { energy: 3, width: 0.02 },
      { energy: 6.52, width: 0.01 },
      { energy: 6.9, width: 0.01 },
    ];
    const rows = matchPoles(a, b, Infinity, { emin: 6, emax: 7 });
    expect(rows.find((r) => r.a === a[0])!.b).toBe(b[1]);
    const high = rows.find((r) => r.a === a[1])!;
    expect(high.b).toBeNull();
    expect(high.outside).toBe(true);
    expect(rows.find((r) => r.b === b[0])!.outside).toBe(true);
    // Inside the shared range but without a partner left: lone, not outside.
    const lone = rows.find((r) => r.b === b[2])!;
    expect(lone.a).toBeNull();
    expect(lone.outside).toBe(false);
    // Without the range, the same 8 meV pole is paired with 6.9 meV: what the range prevents.
    expect(matchPoles(a, b).find((r) => r.a === a[1])!.b).toBe(b[2]);
  });
});

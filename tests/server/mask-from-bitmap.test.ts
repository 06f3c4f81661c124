import { PNG } from 'pngjs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { validateCavityModel } from '../../shared/model/model-validation.js';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { startTestApp, type TestApp } from './test-app.js';

let app: TestApp;
let lab: Lab;
let designer: SignedIn;
let viewer: SignedIn;

/** A white square drawing of `size` pixels with a black disk of radius r pixels in the middle. */
function diskDrawing(size: number, r: number): Buffer {
  const png = new PNG({ width: size, height: size });
  for (let y = 0; y < size; y++) {
    for (let x = 0; x < size; x++) {
      const o = 4 * (y * size + x);
      const inside = (x + 0.5 - size / 2) ** 2 + (y + 0.5 - size / 2) ** 2 <= r * r;
      png.data[o] = png.data[o + 1] = png.data[o + 2] = inside ? 0 : 255;
      png.data[o + 3] = 255;
    }
  }
  return PNG.sync.write(png);
}

beforeAll(async () => {
  app = await startTestApp();
  lab = await createLab(app.handle.db, ['designer', 'viewer']);
  designer = await signInAs(app, lab.as('designer').email);
  viewer = await signInAs(app, lab.as('viewer').email);
});
afterAll(async () => app?.close());

const url = () => `/api/groups/${lab.groupId}/models/mask-from-bitmap`;
const upload = (who: SignedIn, file: Buffer, fields: Record<string, string>, name = 'outline.png') => {
  let req = who.agent.post(url()).set('X-CSRF-Token', who.csrf).attach('file', file, name);
  for (const [k, v] of Object.entries(fields)) req = req.field(k, v);
  return req;
};

describe('a drawn outline becomes a site mask', () => {
  it('a black disk drawn 400 nm wide at 5 nm spacing gives an 80×80 grid and about π·40² sites', async () => {
    const res = await upload(designer, diskDrawing(400, 160), { spacingNm: '5', widthNm: '400' });
    expect(res.status).toBe(200);
    expect(res.body.grid).toEqual({ nx: 80, ny: 80 });
    // The disk's radius is 160/400 of the width: 0.4·80 = 32 sites; area π·32² (common practice, no source).
    const expected = Math.PI * 32 * 32;
    expect(Math.abs(res.body.siteCount - expected) / expected).toBeLessThan(0.03);
    // The shape is a valid bitmap shape of the model document.
    const check = validateCavityModel({
      name: 'drawn',
      spacing: 5,
      material: 'gaas',
      grid: res.body.grid,
      shape: res.body.shape,
      leads: [],
    });
    expect(check.ok).toBe(true);
    if (check.ok) expect(check.siteCount).toBe(res.body.siteCount);
  });

  it('refuses a file that is not a PNG, an empty drawing and a missing file, naming the field', async () => {
    const notPng = await upload(designer, Buffer.from('hello'), { spacingNm: '5', widthNm: '400' }, 'outline.txt');
    expect(notPng.status).toBe(415); // Unsupported Media Type: the bytes are not a PNG
    expect(notPng.body.issues[0].path).toBe('file');
    const empty = await upload(designer, diskDrawing(100, 0), { spacingNm: '5', widthNm: '400' });
    expect(empty.status).toBe(400);
    expect(empty.body.message).toMatch(/no dark pixels/);
    const missing = await designer.agent.post(url()).set('X-CSRF-Token', designer.csrf).field('spacingNm', '5').field('widthNm', '400');
    expect(missing.status).toBe(400);
    expect(missing.body.issues[0].path).toBe('file');
    const badSpacing = await upload(designer, diskDrawing(100, 30), { spacingNm: '-1', widthNm: '400' });
    expect(badSpacing.status).toBe(400);
    expect(badSpacing.body.issues.map((i: { path: string }) => i.path)).toContain('spacingNm');
  });

  it('a viewer may not upload', async () => {
    const res = await upload(viewer, diskDrawing(100, 30), { spacingNm: '5', widthNm: '400' });
    expect(res.status).toBe(403);
  });
});

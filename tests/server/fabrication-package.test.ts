// The fabrication package over HTTP: only for approved resonances; the GDSII read back by an
// independent parser (gdsii), the DXF by another (dxf-parser), the SVG checked as XML
// (fast-xml-parser), the PDF rendered by poppler's pdftoppm where installed and its text read
// by pdftotext; the archive holds every file. All three parsers come from the npm registry.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import DxfParser from 'dxf-parser';
import { XMLParser, XMLValidator } from 'fast-xml-parser';
import { unzipSync } from 'fflate';
import { parseGDS, RecordType } from 'gdsii';
import { PNG } from 'pngjs';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { modeImages } from '../../server/db/schema/catalogue.js';
import { buildDeviceLayout, LAYERS } from '../../shared/layout/device-layout.js';
import { signedArea } from '../../shared/layout/polygon.js';
import { validateCavityModel } from '../../shared/model/model-validation.js';
import { fabricationModel, insertResonances } from './fabrication-fixture.js';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { startTestApp, type TestApp } from './test-app.js';

let app: TestApp;
let lab: Lab;
let ids: string[];
const as: Record<string, SignedIn> = {};
const checked = validateCavityModel(fabricationModel);
if (!checked.ok) throw new Error('fixture model invalid');
const expectedLayout = buildDeviceLayout(checked.model, checked.mask);

function binary(res: request.Response, cb: (err: Error | null, body: Buffer) => void) {
  const chunks: Buffer[] = [];
  res.on('data', (c: Buffer) => chunks.push(c));
  res.on('end', () => cb(null, Buffer.concat(chunks)));
}

async function download(who: SignedIn, id: string, file: string): Promise<request.Response & { body: Buffer }> {
  return (await who.agent.get(`/api/groups/${lab.groupId}/resonances/${id}/fabrication/${file}`).buffer(true).parse(binary)) as request.Response & {
    body: Buffer;
  };
}

function hasTool(name: string): boolean {
  try {
    execFileSync('which', [name], { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
}

beforeAll(async () => {
  app = await startTestApp();
  lab = await createLab(app.handle.db, ['admin', 'designer', 'reviewer', 'viewer']);
  ({ ids } = await insertResonances(app.handle.db, lab, [
    { energy: 4.2, width: 0.012 },
    { energy: 5.1, width: 0.03 },
  ]));
  for (const role of ['designer', 'reviewer', 'viewer'] as const) as[role] = await signInAs(app, lab.as(role).email);
  const url = `/api/groups/${lab.groupId}/resonances/${ids[0]}/fabrication`;
  await as.designer!.post(url, { action: 'propose', reason: 'isolated, high Q', tolerances: { energyMeV: 0.05, minQuality: 300 } }).expect(200);
  await as.reviewer!.post(url, { action: 'approve', reason: 'matches the gate layout' }).expect(200);
  // A small mode image, as runs store them.
  const png = new PNG({ width: 32, height: 32 });
  for (let k = 0; k < 32 * 32; k++) png.data.set([k % 256, 40, 200 - (k % 200), 255], 4 * k);
  await app.handle.db.insert(modeImages).values({ resonanceId: ids[0]!, size: 'full', width: 32, height: 32, etag: 'fixture', png: PNG.sync.write(png) });
});
afterAll(() => app?.close());

describe('fabrication package', () => {
  it('exists only for an approved resonance', async () => {
    const res = await as.viewer!.get(`/api/groups/${lab.groupId}/resonances/${ids[1]}/fabrication/layout.gds`);
    expect(res.status).toBe(409);
    expect(res.body.code).toBe('not_approved');
    expect(res.body.message).toContain('not proposed');
  });

  it('GDSII read back by the gdsii parser: same polygons in nm, documented layers, 1 nm / 1 µm units', async () => {
    const res = await download(as.viewer!, ids[0]!, 'layout.gds');
    expect(res.status).toBe(200);
    expect(res.headers['content-disposition']).toMatch(/attachment; filename="poleward-fabrication-fixture-dot-v1-E4\.2meV\.gds"/);
    const records = [...parseGDS(new Uint8Array(res.body))];
    const units = records.find((r) => r.tag === RecordType.UNITS)!.data as { userUnit: number; metersPerUnit: number };
    expect(units.userUnit).toBeCloseTo(1e-3, 15);
    expect(units.metersPerUnit / 1e-9).toBeCloseTo(1, 12);
    const boundaries: { layer: number; xy: number[][] }[] = [];
    let layer = -1;
    for (const r of records) {
      if (r.tag === RecordType.LAYER) layer = r.data as number;
      if (r.tag === RecordType.XY) boundaries.push({ layer, xy: (r.data as number[][]).slice(0, -1) });
    }
    const want = expectedLayout.layers.flatMap((l) => l.polygons.map((p) => ({ layer: l.layer, xy: p.map(([x, y]) => [Math.round(x), Math.round(y)]) })));
    expect(boundaries).toEqual(want);
    expect(boundaries.map((b) => b.layer)).toEqual([LAYERS.cavityTraced, LAYERS.leads, LAYERS.leads, LAYERS.firstGate, LAYERS.firstGate + 1]);
    // The traced outline's area equals the number of sites times a² (a = 5 nm, so whole nm).
    const cavity = boundaries.find((b) => b.layer === LAYERS.cavityTraced)!;
    expect(signedArea(cavity.xy.map(([x, y]) => [x!, y!] as const))).toBe(checked.siteCount * 25);
  });

  it('DXF opens in dxf-parser with the same outline on named layers, in nm', async () => {
    const res = await download(as.viewer!, ids[0]!, 'layout.dxf');
    expect(res.status).toBe(200);
    const dxf = new DxfParser().parseSync(res.body.toString('utf8'))!;
    expect((dxf.header as Record<string, unknown>)['$INSUNITS']).toBe(12); // 12 = nanometres (DXF reference, HEADER section)
    const polylines = dxf.entities.filter((e) => e.type === 'LWPOLYLINE') as unknown as {
      layer: string;
      shape: boolean;
      vertices: { x: number; y: number }[];
    }[];
    expect(polylines.map((p) => p.layer)).toEqual(['L1-cavity-traced', 'L3-leads', 'L3-leads', 'L10-gate-0', 'L11-gate-1']);
    expect(polylines.every((p) => p.shape)).toBe(true);
    const cavity = expectedLayout.layers[0]!.polygons[0]!;
    const got = polylines[0]!.vertices.map((v) => [v.x, v.y]);
    expect(got).toHaveLength(cavity.length);
    got.forEach(([x, y], k) => {
      expect(x).toBeCloseTo(cavity[k]![0], 6);
      expect(y).toBeCloseTo(cavity[k]![1], 6);
    });
    expect(Object.keys((dxf.tables as { layer: { layers: Record<string, unknown> } }).layer.layers)).toEqual(
      expect.arrayContaining(['L1-cavity-traced', 'L3-leads', 'L10-gate-0', 'L11-gate-1']),
    );
  });

  it('SVG is well-formed XML with one group per layer and one path per polygon', async () => {
    const res = await download(as.viewer!, ids[0]!, 'layout.svg');
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/image\/svg\+xml/);
    const text = res.body.toString('utf8');
    expect(XMLValidator.validate(text)).toBe(true);
    const doc = new XMLParser({ ignoreAttributes: false, isArray: (name) => name === 'g' || name === 'path' }).parse(text);
    expect(doc.svg['@_xmlns']).toBe('http://www.w3.org/2000/svg');
    const groups = doc.svg.g[0].g as { '@_data-layer': string; path: unknown[] }[];
    expect(groups.map((g) => Number(g['@_data-layer']))).toEqual(expectedLayout.layers.map((l) => l.layer));
    expect(groups.map((g) => g.path.length)).toEqual(expectedLayout.layers.map((l) => l.polygons.length));
  });

  it('the spec sheet renders and holds the target figures and the caution as text', async () => {
    const res = await download(as.viewer!, ids[0]!, 'spec.pdf');
    expect(res.status).toBe(200);
    expect(res.body.subarray(0, 5).toString()).toBe('%PDF-');
    if (!hasTool('pdftoppm') || !hasTool('pdftotext')) {
      console.log('[fabrication-package] pdftoppm/pdftotext (poppler-utils) not installed: the PDF was not rendered; install poppler-utils to run this check');
      return;
    }
    const dir = mkdtempSync(join(tmpdir(), 'poleward-pdf-'));
    try {
      writeFileSync(join(dir, 'spec.pdf'), res.body);
      execFileSync('pdftoppm', ['-r', '40', '-png', join(dir, 'spec.pdf'), join(dir, 'page')]);
      const page1 = ['page-1.png', 'page-01.png'].map((n) => join(dir, n)).find(existsSync)!;
      const png = PNG.sync.read(readFileSync(page1));
      // A4 at 40 dpi: 8.27 × 11.69 in → about 331 × 468 px.
      expect(Math.abs(png.width - 331)).toBeLessThanOrEqual(2);
      let dark = 0;
      for (let k = 0; k < png.width * png.height; k++) if (png.data[4 * k]! < 128) dark++;
      expect(dark).toBeGreaterThan(500); // text was drawn
      const text = execFileSync('pdftotext', ['-layout', join(dir, 'spec.pdf'), '-'], { encoding: 'utf8' });
      expect(text).toContain('4.2 meV');
      expect(text).toContain('0.012 meV');
      expect(text).toContain('54.851'); // τ = ħ/Γ = 0.6582119569/0.012 = 54.851 ps (CODATA 2018 ħ)
      expect(text).toContain('350'); // Q = 4.2/0.012
      expect(text).toContain('± 0.05 meV');
      expect(text).toContain('Fabrication fixture dot');
      expect(text).toContain('isolated, high Q');
      expect(text).toContain('matches the gate layout');
      expect(text).toMatch(/no substitute for\s+measurement/);
      expect(text).toMatch(/traced from the site mask/);
      expect(text).toContain('Γ');
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('the archive holds the spec sheet, the three layout files, a README and the figures', async () => {
    const res = await download(as.viewer!, ids[0]!, 'package.zip');
    expect(res.status).toBe(200);
    const files = unzipSync(new Uint8Array(res.body));
    const names = Object.keys(files).map((n) => n.split('/')[1]);
    expect(names.sort()).toEqual([
      'README.txt',
      'poleward-fabrication-fixture-dot-v1-E4.2meV-spec.pdf',
      'poleward-fabrication-fixture-dot-v1-E4.2meV.dxf',
      'poleward-fabrication-fixture-dot-v1-E4.2meV.gds',
      'poleward-fabrication-fixture-dot-v1-E4.2meV.svg',
      'resonance.json',
    ]);
    const json = JSON.parse(new TextDecoder().decode(Object.entries(files).find(([n]) => n.endsWith('resonance.json'))![1]));
    expect(json.energy).toBe(4.2);
    expect(json.layout.outline).toBe('traced');
    const readme = new TextDecoder().decode(Object.entries(files).find(([n]) => n.endsWith('README.txt'))![1]);
    expect(readme).toContain('database unit 1 nm, user unit 1 µm');
    expect(readme).toMatch(/ {2}1 \/ 0 {2}cavity-traced/);
  });
});

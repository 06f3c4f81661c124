// Synthetic but plausible resonances in bulk, for the catalogue bench and for the test
// that checks the catalogue's query plans on a catalogue of some size. Deterministic
// (a fixed xorshift sequence), so two runs see the same data.
import type { Db } from '../server/db/client.js';
import { resonances } from '../server/db/schema/catalogue.js';
import { memberships, researchGroups } from '../server/db/schema/groups.js';
import { cavityModels, modelVersions } from '../server/db/schema/models.js';
import { runs } from '../server/db/schema/runs.js';
import { users } from '../server/db/schema/users.js';

/** ħ in meV·ps (CODATA 2018, as in docs/physics-model.md): τ = ħ/Γ. */
const HBAR_MEV_PS = 0.6582119569;
const POLES_PER_RUN = 200;
const BATCH = 1000;

/** Each family's own dimensions (as the model check files them: server/models/model-figures.ts), bounding box and area. */
const families = [
  { family: 'rectangle', dims: () => withArea({ widthNm: pick([200, 300, 400, 600]), heightNm: pick([150, 250, 400]) }, 1) },
  { family: 'disk', dims: () => disk(pick([100, 150, 250, 400])) },
  { family: 'ellipse', dims: () => ellipse(pick([150, 250]), pick([100, 175])) },
  { family: 'stadium', dims: () => stadium(pick([200, 400, 600]), pick([100, 200])) },
  { family: 'annulus', dims: () => annulus(pick([100, 150]), pick([200, 300])) },
  { family: 'polygon', dims: () => withArea({ widthNm: pick([250, 450]), heightNm: pick([250, 450]) }, 0.5) },
];
function withArea<T extends { widthNm: number; heightNm: number }>(box: T, filled: number): T & { areaNm2: number } {
  return { ...box, areaNm2: box.widthNm * box.heightNm * filled };
}
function disk(r: number) {
  return { radiusNm: r, widthNm: 2 * r, heightNm: 2 * r, areaNm2: Math.PI * r * r };
}
function ellipse(rx: number, ry: number) {
  return { rxNm: rx, ryNm: ry, widthNm: 2 * rx, heightNm: 2 * ry, areaNm2: Math.PI * rx * ry };
}
function stadium(length: number, r: number) {
  return { lengthNm: length, radiusNm: r, widthNm: length + 2 * r, heightNm: 2 * r, areaNm2: 2 * r * length + Math.PI * r * r };
}
function annulus(inner: number, outer: number) {
  return { innerNm: inner, outerNm: outer, widthNm: 2 * outer, heightNm: 2 * outer, areaNm2: Math.PI * (outer * outer - inner * inner) };
}
const materials = ['GaAs', 'InAs', 'InSb', 'Si'];
const tagWords = ['candidate', 'fabricate', 'check width', 'high-q', 'bic', 'reviewed', 'symmetric', 'edge mode'];
const noteWords = [
  'whispering',
  'gallery',
  'bouncing',
  'ball',
  'scar',
  'doublet',
  'split',
  'by',
  'field',
  'near',
  'threshold',
  'lead',
  'coupling',
  'weak',
  'strong',
];
const nameWords = ['harrow', 'quarry', 'billiard', 'dot', 'ring', 'stadium', 'bowtie', 'notch', 'wide', 'narrow', 'tapered'];

let seed = 0x2545f491;
/** xorshift32: a fixed sequence, so two bench runs see the same data. */
function random(): number {
  seed ^= seed << 13;
  seed ^= seed >>> 17;
  seed ^= seed << 5;
  return (seed >>> 0) / 4294967296;
}
function pick<T>(items: readonly T[]): T {
  return items[Math.floor(random() * items.length)]!;
}
function words(list: readonly string[], n: number): string {
  return Array.from({ length: n }, () => pick(list)).join(' ');
}

async function insertParents(db: Db, groupId: string, userId: string, rows: number, label: string) {
  const models: {
    id: string;
    name: string;
    family: string;
    material: string;
    fieldT: number;
    spacingNm: number;
    dims: Record<string, number>;
    versionId: string;
    version: number;
  }[] = [];
  const modelCount = Math.max(families.length, Math.round(rows / 2500));
  for (let m = 0; m < modelCount; m++) {
    const fam = families[m % families.length]!;
    const name = `${label} ${words(nameWords, 2)} ${fam.family} ${m}`;
    const [model] = await db.insert(cavityModels).values({ groupId, name, createdBy: userId }).returning({ id: cavityModels.id });
    const dims = fam.dims();
    const material = pick(materials);
    const fieldT = pick([0, 0, 0.1, 0.5, 1, 2]);
    const spacingNm = pick([2, 4, 5]);
    const document = {
      name,
      spacing: spacingNm,
      material,
      grid: { nx: 80, ny: 60 },
      shape: { kind: fam.family },
      field: fieldT,
      leads: [
        { side: 'left', start: 20, width: 12, offset: 0, name: 'source' },
        { side: 'right', start: 24, width: 12, offset: 0 },
      ],
    };
    const [version] = await db
      .insert(modelVersions)
      .values({
        modelId: model!.id,
        groupId,
        version: 1,
        document,
        family: fam.family,
        material,
        effectiveMass: 0.067,
        spacingNm,
        fieldT,
        siteCount: 4000,
        leadCount: 2,
        hoppingMeV: 38.09982 / 0.067 / spacingNm ** 2,
        ...dims,
        keyDimensions: Object.fromEntries(Object.entries(dims).map(([k, v]) => [k.replace(/Nm2?$/, ''), v])),
        createdBy: userId,
      })
      .returning({ id: modelVersions.id });
    models.push({ id: model!.id, name, family: fam.family, material, fieldT, spacingNm, dims, versionId: version!.id, version: 1 });
  }
  return models;
}

/**
 * Inserts `total` synthetic resonances into a group (with their models, versions and runs
 * of 200 poles each). The same seed gives the same rows.
 */
export async function insertResonances(db: Db, groupId: string, userId: string, total: number, label: string, seedValue = 0x2545f491): Promise<void> {
  seed = seedValue;
  const models = await insertParents(db, groupId, userId, total, label);
  const now = Date.now();
  let pending: (typeof resonances.$inferInsert)[] = [];
  for (let r = 0; r < total / POLES_PER_RUN; r++) {
    const model = models[r % models.length]!;
    const emin = 0.2 + random() * 20;
    const emax = emin + 5 + random() * 30;
    const [run] = await db
      .insert(runs)
      .values({
        groupId,
        modelVersionId: model.versionId,
        kind: 'pole-search',
        status: 'completed',
        window: { emin, emax, gammaMax: 1 },
        thresholds: [emin + 1.3, emin + 4.1],
        resonanceCount: POLES_PER_RUN,
        createdBy: userId,
      })
      .returning({ id: runs.id });
    for (let k = 0; k < POLES_PER_RUN; k++) {
      const energy = emin + (emax - emin) * random();
      const bound = random() < 0.03;
      // Q spread over 10..1e5, log-uniform, as pole searches of open dots give.
      const width = bound ? 0 : energy / 10 ** (1 + 4 * random());
      const share = random();
      const tagCount = random() < 0.3 ? 1 + Math.floor(random() * 2) : 0;
      pending.push({
        groupId,
        runId: run!.id,
        modelId: model.id,
        modelVersionId: model.versionId,
        idx: k,
        energy,
        width,
        lifetimePs: bound ? null : HBAR_MEV_PS / width,
        quality: bound ? null : energy / width,
        partialWidths: [
          { lead: 'source', width: width * share },
          { lead: 'right1', width: width * (1 - share) },
        ],
        petermann: 1 + -Math.log(1 - random()) * 0.05,
        residual: 10 ** (-12 + 3 * random()),
        bound,
        nearThreshold: random() < 0.05,
        overlapping: random() < 0.1,
        tags: [...new Set(Array.from({ length: tagCount }, () => pick(tagWords)))],
        notes: random() < 0.2 ? words(noteWords, 3 + Math.floor(random() * 5)) : '',
        modelName: model.name,
        modelVersion: model.version,
        family: model.family,
        material: model.material,
        fieldT: model.fieldT,
        spacingNm: model.spacingNm,
        ...model.dims,
        createdAt: new Date(now - random() * 180 * 86_400_000),
      });
      if (pending.length === BATCH) {
        await db.insert(resonances).values(pending);
        pending = [];
      }
    }
  }
  if (pending.length > 0) await db.insert(resonances).values(pending);
}

/** A group with one admin member (who signs in with `passwordHash`'s password). */
export async function makeGroup(db: Db, slug: string, email: string, passwordHash: string): Promise<{ groupId: string; userId: string }> {
  const [group] = await db
    .insert(researchGroups)
    .values({ slug, name: `Bench ${slug}` })
    .returning({ id: researchGroups.id });
  const [user] = await db
    .insert(users)
    .values({ email, name: `Bench ${slug}`, passwordHash })
    .returning({ id: users.id });
  await db.insert(memberships).values({ groupId: group!.id, userId: user!.id, role: 'admin' });
  return { groupId: group!.id, userId: user!.id };
}

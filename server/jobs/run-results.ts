import { createHash } from 'node:crypto';
import { eq } from 'drizzle-orm';
import type { Db, Queryable } from '../db/client.js';
import { writeAudit } from '../audit/audit-log.js';
import { modeImages, resonanceModes, resonances } from '../db/schema/catalogue.js';
import { resonanceCurrents } from '../db/schema/mode-maps.js';
import { bytesOf, maskBits } from '../modemaps/pole-currents.js';
import { spectra } from '../db/schema/runs.js';
import { runStore } from '../runs/run-store.js';
import { renderModePng } from '../catalogue/mode-image.js';
import type { EngineTaskResult } from './engine-task.js';
import type { Pole } from '../../shared/engine/pole-types.js';
import { resonanceFigures, resonancePhysicsOfDocument } from '../../shared/model/resonance-validity.js';
import { geometryOf, type GeometryColumns } from '../models/model-figures.js';

/** A Petermann factor above this marks non-orthogonal, overlapping modes (common practice, no source). */
export const OVERLAP_PETERMANN = 1.2;
export const THUMB_SIDE = 96;
export const FULL_SIDE = 720;

/**
 * Whether a Breit–Wigner width of pole k would mislead: another pole closer in
 * energy than the mean of the two widths, |E_k − E_j| < (Γ_k + Γ_j)/2, so the two
 * peaks' half-width intervals overlap (the usual criterion Γ/D ≳ 1, e.g. Mahaux &
 * Weidenmüller 1969), or a Petermann factor above OVERLAP_PETERMANN (the mode is
 * not orthogonal to its neighbours). A narrow pole on a broad one's flank is
 * flagged too: its transmission peak is Fano-shaped, not Breit–Wigner.
 */
export function isOverlapping(poles: readonly Pick<Pole, 'energy' | 'width' | 'petermann'>[], k: number): boolean {
  const p = poles[k];
  if (p.petermann > OVERLAP_PETERMANN) return true;
  return poles.some((q, j) => j !== k && Math.abs(q.energy - p.energy) < 0.5 * (p.width + q.width));
}

export interface RunContext {
  runId: string;
  groupId: string;
  attempt: number;
  actorId: string | null;
  model: GeometryColumns & {
    id: string;
    versionId: string;
    name: string;
    version: number;
    /** The model version's document: its physics mode, hopping and leads give each pole's validity figures. */
    document: unknown;
    family: string;
    physics: 'electrons' | 'microwave';
    material: string;
    fieldT: number;
    spacingNm: number;
  };
}

/**
 * Writes a run's results in one transaction, only while the run's attempt is
 * still `ctx.attempt` (a worker that lost its job to a retry writes nothing).
 * Earlier rows of the run are replaced, so a retried run leaves exactly one copy.
 * Returns false when the attempt was stale. `inTransaction` runs last inside the
 * same transaction (the worker completes the queue job there).
 */
export async function writeRunResults(db: Db, ctx: RunContext, result: EngineTaskResult, inTransaction?: (tx: Queryable) => Promise<void>): Promise<boolean> {
  const lattice = { nx: result.grid.nx, ny: result.grid.ny, i: result.sites.i, j: result.sites.j, kind: result.lattice };
  // Render outside the transaction: it is the slow part and needs no lock.
  const mask = maskBits(result.grid.nx, result.grid.ny, result.sites);
  const images = result.poles.map((p) => {
    const thumb = renderModePng(lattice, p.mode, { maxSide: THUMB_SIDE });
    const full = renderModePng(lattice, p.mode, { maxSide: FULL_SIDE });
    return { thumb, full };
  });
  const physics = resonancePhysicsOfDocument(ctx.model.document);
  return db.transaction(async (tx) => {
    if (!(await runStore.lockAttempt(tx, ctx.runId, ctx.attempt))) return false;
    await tx.delete(resonances).where(eq(resonances.runId, ctx.runId));
    await tx.delete(spectra).where(eq(spectra.runId, ctx.runId));
    for (let k = 0; k < result.poles.length; k++) {
      const p = result.poles[k];
      const figures = resonanceFigures(p.energy, p.width, physics);
      const [row] = await tx
        .insert(resonances)
        .values({
          groupId: ctx.groupId,
          runId: ctx.runId,
          modelId: ctx.model.id,
          modelVersionId: ctx.model.versionId,
          idx: k,
          energy: p.energy,
          width: p.width,
          // Microwave mode: τ = 1/(2πΓ_f) and Q = Re f/Γ_f from the complex frequency, not ħ/Γ and E/Γ.
          // Graphene: Q = |E − E_D|/Γ from the Dirac point (holes below it), not the engine's E/Γ.
          lifetimePs: p.bound ? null : physics.physics === 'microwave' ? figures.lifetimePs : p.lifetimePs,
          quality: p.bound ? null : physics.physics === 'microwave' || physics.diracEnergy !== null ? figures.quality : p.quality,
          partialWidths: p.partialWidths.map((w, l) => ({ lead: result.leadNames[l] ?? `lead ${l}`, width: w })),
          petermann: p.petermann,
          residual: p.residual,
          bound: p.bound,
          nearThreshold: p.nearThreshold !== null,
          overlapping: isOverlapping(result.poles, k),
          validityLimit: figures.validity.limit,
          wavelengthSpacings: figures.validity.wavelengthSpacings,
          aboveValidity: figures.validity.aboveLimit,
          physics: figures.physics,
          frequencyGhz: figures.frequencyGhz,
          details: { nearThreshold: p.nearThreshold, sheet: p.sheet, piece: p.piece },
          modelName: ctx.model.name,
          modelVersion: ctx.model.version,
          family: ctx.model.family,
          material: ctx.model.material,
          fieldT: ctx.model.fieldT,
          spacingNm: ctx.model.spacingNm,
          ...geometryOf(ctx.model),
        })
        .returning({ id: resonances.id });
      await tx.insert(resonanceModes).values({
        resonanceId: row.id,
        sites: p.mode.length / 2,
        vector: Buffer.from(p.mode.buffer, p.mode.byteOffset, p.mode.byteLength),
      });
      // Mode maps: the pole's current (server/modemaps/pole-currents.ts).
      if (p.current) {
        await tx.insert(resonanceCurrents).values({
          resonanceId: row.id,
          nx: result.grid.nx,
          ny: result.grid.ny,
          mask,
          vectors: bytesOf(p.current.vectors),
          leadCurrents: p.current.leads,
        });
      }
      for (const size of ['thumb', 'full'] as const) {
        const png = images[k][size];
        await tx.insert(modeImages).values({
          resonanceId: row.id,
          size,
          width: png.readUInt32BE(16),
          height: png.readUInt32BE(20),
          etag: `"${createHash('sha256').update(png).digest('hex').slice(0, 32)}"`,
          png,
        });
      }
    }
    await tx.insert(spectra).values({ runId: ctx.runId, groupId: ctx.groupId, ...result.spectrum });
    await runStore.complete(tx, ctx.runId, ctx.attempt, {
      engineVersion: result.engineVersion,
      thresholds: result.thresholds,
      certificate: result.certificate,
      stats: result.stats,
      resonanceCount: result.poles.length,
    });
    await writeAudit(tx, {
      groupId: ctx.groupId,
      actorId: ctx.actorId,
      action: 'run.completed',
      subject: `${ctx.model.name} v${ctx.model.version}`,
      details: { runId: ctx.runId, resonances: result.poles.length, certified: result.certificate?.certified ?? null },
    });
    await inTransaction?.(tx);
    return true;
  });
}

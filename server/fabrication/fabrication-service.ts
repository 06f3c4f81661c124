/**
 * Fabrication rules: the state of each resonance (moves checked by the one table in
 * shared/fabrication/fabrication-states.ts), comments with mentions, and the e-mails each
 * change sends. Every change, its audit entry and its notifications are one transaction, so
 * a refused or failed request leaves nothing behind.
 */
import { and, eq, inArray } from 'drizzle-orm';
import type { CommentBody, FabricationItem, FabricationRecord, Measurement, ResonanceComment, TransitionBody } from '../../shared/api/fabrication.js';
import { actionsFor, checkTransition, stateWords, type FabricationState, type MemberRole } from '../../shared/fabrication/fabrication-states.js';
import { compareFigure } from '../../shared/fabrication/measurement-comparison.js';
import { writeAudit } from '../audit/audit-log.js';
import { resonanceNotFound } from '../catalogue/catalogue-service.js';
import { modeImageUrl } from '../catalogue/resonance-row.js';
import type { Db, Queryable } from '../db/client.js';
import { resonances } from '../db/schema/catalogue.js';
import { resonanceComments, resonanceFabrication } from '../db/schema/fabrication.js';
import { peakFits } from '../db/schema/fits.js';
import { memberships } from '../db/schema/groups.js';
import { users } from '../db/schema/users.js';
import { ApiError } from '../http/error-handler.js';
import { fabricationHistory, findFabrication, listComments, listFabrication, lockResonance, userNames, type FabricationRow } from './fabrication-repository.js';
import type { NotificationQueue } from './notification-queue.js';
import { groupMembers, recordNotifications, userById } from './notifications.js';

export interface Caller {
  id: string;
  role: MemberRole;
}

/** States whose resonance has a fabrication package. */
export const PACKAGE_STATES: readonly FabricationState[] = ['approved', 'sent', 'measured'];

const iso = (d: Date | null) => (d ? d.toISOString() : null);

function figures(r: { energy: number; width: number; modelName: string; modelVersion: number }): string {
  return `E = ${r.energy.toPrecision(6)} meV, Γ = ${r.width.toPrecision(4)} meV (${r.modelName} v${r.modelVersion})`;
}

function packageLinks(groupId: string, resonanceId: string) {
  const base = `/api/groups/${groupId}/resonances/${resonanceId}/fabrication`;
  return { archive: `${base}/package.zip`, specSheet: `${base}/spec.pdf`, gdsii: `${base}/layout.gds`, dxf: `${base}/layout.dxf`, svg: `${base}/layout.svg` };
}

function measurementOf(f: FabricationRow, predicted: { energy: number; width: number }, names: Map<string, string>): Measurement | null {
  if (f.measuredEnergy === null || f.measuredWidth === null || !f.measuredAt) return null;
  return {
    energy: f.measuredEnergy,
    width: f.measuredWidth,
    energyUncertainty: f.measuredEnergySigma,
    widthUncertainty: f.measuredWidthSigma,
    source: f.measuredSource === 'fit' ? 'fit' : 'typed',
    fitId: f.measuredFitId,
    energyComparison: compareFigure(predicted.energy, f.measuredEnergy, f.measuredEnergySigma),
    widthComparison: compareFigure(predicted.width, f.measuredWidth, f.measuredWidthSigma),
    measuredBy: f.measuredBy ? (names.get(f.measuredBy) ?? null) : null,
    measuredAt: f.measuredAt.toISOString(),
  };
}

export class FabricationService {
  constructor(
    private readonly db: Db,
    private readonly publicUrl: string,
    private readonly queue: NotificationQueue | null,
  ) {}

  /** The record of one resonance, with what the caller may do next and its history. */
  async record(groupId: string, resonanceId: string, caller: Caller, q: Queryable = this.db): Promise<FabricationRecord> {
    const resonance = await predictedFigures(q, groupId, resonanceId);
    const f = await findFabrication(q, groupId, resonanceId);
    const history = await fabricationHistory(q, groupId, resonanceId);
    const names = await userNames(q, [f?.proposedBy ?? null, f?.reviewedBy ?? null, f?.measuredBy ?? null]);
    const person = (id: string | null | undefined) => (id ? { id, name: names.get(id) ?? '(former member)' } : null);
    const state = (f?.state ?? null) as FabricationState | null;
    return {
      resonanceId,
      state,
      reason: f?.reason ?? null,
      tolerances: { energyMeV: f?.toleranceEnergyMeV ?? null, minQuality: f?.toleranceMinQuality ?? null },
      proposedBy: person(f?.proposedBy),
      proposedAt: iso(f?.proposedAt ?? null),
      reviewedBy: person(f?.reviewedBy),
      reviewedAt: iso(f?.reviewedAt ?? null),
      reviewReason: f?.reviewReason ?? null,
      batch: f?.batch ?? null,
      sentAt: iso(f?.sentAt ?? null),
      measurement: f ? measurementOf(f, resonance, names) : null,
      updatedAt: iso(f?.updatedAt ?? null),
      allowedActions: actionsFor(state, caller.role, !!f && f.proposedBy === caller.id),
      history: history.map((h) => {
        const d = h.details as Record<string, unknown>;
        return {
          at: h.at.toISOString(),
          action: h.action.replace(/^fabrication\./, ''),
          actor: h.actor,
          from: (d.from as string | null) ?? null,
          to: (d.to as string | null) ?? null,
          reason: (d.reason as string | null) ?? null,
        };
      }),
    };
  }

  /** Takes one step of the state machine, or refuses it (403/409) with nothing changed. */
  async transition(groupId: string, resonanceId: string, caller: Caller, body: TransitionBody): Promise<FabricationRecord> {
    return this.db.transaction(async (tx) => {
      const resonance = await lockResonance(tx, groupId, resonanceId);
      if (!resonance) throw resonanceNotFound();
      const f = await findFabrication(tx, groupId, resonanceId);
      const from = (f?.state ?? null) as FabricationState | null;
      const verdict = checkTransition(from, body.action, caller.role, !!f && f.proposedBy === caller.id);
      if (!verdict.ok) throw new ApiError(verdict.status, verdict.code, verdict.message);
      const to = verdict.transition.to;
      const now = new Date();
      const details: Record<string, unknown> = { resonanceId, from, to, reason: 'reason' in body ? (body.reason ?? null) : null };

      switch (body.action) {
        case 'propose': {
          const values = {
            state: 'candidate',
            reason: body.reason,
            toleranceEnergyMeV: body.tolerances.energyMeV,
            toleranceMinQuality: body.tolerances.minQuality,
            proposedBy: caller.id,
            proposedAt: now,
            reviewedBy: null,
            reviewedAt: null,
            reviewReason: null,
            updatedAt: now,
          };
          await tx
            .insert(resonanceFabrication)
            .values({ resonanceId, groupId, ...values })
            .onConflictDoUpdate({ target: resonanceFabrication.resonanceId, set: values });
          details.tolerances = body.tolerances;
          break;
        }
        case 'start_review':
          await this.update(tx, resonanceId, { state: 'under_review', reviewedBy: caller.id, updatedAt: now });
          break;
        case 'approve':
        case 'reject':
          await this.update(tx, resonanceId, { state: to!, reviewedBy: caller.id, reviewedAt: now, reviewReason: body.reason, updatedAt: now });
          break;
        case 'withdraw':
          await tx.delete(resonanceFabrication).where(eq(resonanceFabrication.resonanceId, resonanceId));
          break;
        case 'send':
          await this.update(tx, resonanceId, { state: 'sent', batch: body.batch, sentAt: now, updatedAt: now });
          details.batch = body.batch;
          break;
        case 'measure': {
          const m = body.fitId
            ? await this.measurementFromFit(tx, groupId, body.fitId, body.peak)
            : { energy: body.energy!, width: body.width!, energySigma: body.energyUncertainty ?? null, widthSigma: body.widthUncertainty ?? null };
          await this.update(tx, resonanceId, {
            state: 'measured',
            measuredEnergy: m.energy,
            measuredWidth: m.width,
            measuredEnergySigma: m.energySigma,
            measuredWidthSigma: m.widthSigma,
            measuredSource: body.fitId ? 'fit' : 'typed',
            measuredFitId: body.fitId ?? null,
            measuredBy: caller.id,
            measuredAt: now,
            updatedAt: now,
          });
          Object.assign(details, { measured: m, fitId: body.fitId ?? null, predicted: { energy: resonance.energy, width: resonance.width } });
          break;
        }
      }
      await writeAudit(tx, {
        groupId,
        actorId: caller.id,
        action: `fabrication.${body.action}`,
        subject: `${stateWords(from)} → ${stateWords(to)}: ${figures(resonance)}`,
        details,
      });
      await this.notifyTransition(tx, body, resonance, groupId, caller, f);
      return this.record(groupId, resonanceId, caller, tx);
    });
  }

  private async update(tx: Queryable, resonanceId: string, set: Partial<typeof resonanceFabrication.$inferInsert>): Promise<void> {
    await tx.update(resonanceFabrication).set(set).where(eq(resonanceFabrication.resonanceId, resonanceId));
  }

  private async measurementFromFit(q: Queryable, groupId: string, fitId: string, peak: number) {
    const [fit] = await q
      .select({ status: peakFits.status, result: peakFits.result })
      .from(peakFits)
      .where(and(eq(peakFits.id, fitId), eq(peakFits.groupId, groupId)));
    if (!fit) throw new ApiError(404, 'not_found', 'No such peak fit in this group (fitId).', [{ path: 'fitId', message: 'no such peak fit in this group' }]);
    if (fit.status !== 'completed') throw new ApiError(409, 'fit_not_completed', `The peak fit is ${fit.status}; only a completed fit gives a measurement.`);
    const peaks = (fit.result as { peaks?: { energy: number; width: number; energyError: number | null; widthError: number | null }[] } | null)?.peaks ?? [];
    const p = peaks[peak];
    if (!p)
      throw new ApiError(400, 'validation_failed', `The fit has ${peaks.length} peak(s); peak ${peak} does not exist.`, [
        { path: 'peak', message: `must be below ${peaks.length}` },
      ]);
    return { energy: p.energy, width: p.width, energySigma: p.energyError, widthSigma: p.widthError };
  }

  private link(slug: string, path: string): string {
    return `${this.publicUrl}/g/${slug}/${path}`;
  }

  private async notifyTransition(
    tx: Queryable,
    body: TransitionBody,
    r: NonNullable<Awaited<ReturnType<typeof lockResonance>>>,
    groupId: string,
    caller: Caller,
    before: FabricationRow | null,
  ): Promise<void> {
    const actor = await userById(tx, caller.id);
    const who = actor?.name ?? 'A member';
    const page = this.link(r.groupSlug, `catalogue/resonances/${r.id}`);
    switch (body.action) {
      case 'propose':
        await recordNotifications(tx, this.queue, {
          groupId,
          kind: 'candidate_proposed',
          recipients: await groupMembers(tx, groupId, ['reviewer', 'admin']),
          actorId: caller.id,
          subject: `[${r.groupName}] Candidate for fabrication: ${r.modelName} at ${r.energy.toPrecision(5)} meV`,
          lines: [`${who} proposes a resonance of ${r.groupName} for fabrication: ${figures(r)}.`, `Reason: ${body.reason}`],
          link: this.link(r.groupSlug, 'review'),
          linkLabel: 'Open the review queue',
        });
        break;
      case 'approve':
      case 'reject': {
        const proposer = await userById(tx, before?.proposedBy ?? null);
        await recordNotifications(tx, this.queue, {
          groupId,
          kind: 'candidate_decided',
          recipients: proposer ? [proposer] : [],
          actorId: caller.id,
          subject: `[${r.groupName}] Your candidate was ${body.action === 'approve' ? 'approved' : 'rejected'}: ${r.modelName} at ${r.energy.toPrecision(5)} meV`,
          lines: [`${who} ${body.action === 'approve' ? 'approved' : 'rejected'} your candidate ${figures(r)}.`, `Reason: ${body.reason}`],
          link: page,
          linkLabel: 'Open the resonance',
        });
        break;
      }
      case 'send':
      case 'measure':
        await recordNotifications(tx, this.queue, {
          groupId,
          kind: 'fabrication_progress',
          recipients: await groupMembers(tx, groupId),
          actorId: caller.id,
          subject: `[${r.groupName}] ${body.action === 'send' ? `Sent to fabrication (${body.batch})` : 'Measured'}: ${r.modelName} at ${r.energy.toPrecision(5)} meV`,
          lines: [
            body.action === 'send' ? `${who} sent ${figures(r)} to fabrication in batch ${body.batch}.` : `${who} recorded the measurement of ${figures(r)}.`,
          ],
          link: this.link(r.groupSlug, 'fabrication'),
          linkLabel: 'Open the Fabrication page',
        });
        break;
      default:
        break;
    }
  }

  /** Approved, sent, measured (the Fabrication page) or candidates (the review queue). */
  async list(groupId: string, states: FabricationState[]): Promise<FabricationItem[]> {
    const rows = await listFabrication(this.db, groupId, states);
    const names = await userNames(
      this.db,
      rows.map((r) => r.f.measuredBy),
    );
    return rows.map((r) => ({
      resonanceId: r.f.resonanceId,
      state: r.f.state as FabricationState,
      reason: r.f.reason,
      tolerances: { energyMeV: r.f.toleranceEnergyMeV, minQuality: r.f.toleranceMinQuality },
      proposedBy: r.f.proposedBy ? { id: r.f.proposedBy, name: r.proposerName ?? '(former member)' } : null,
      reviewedBy: r.f.reviewedBy ? { id: r.f.reviewedBy, name: r.reviewerName ?? '(former member)' } : null,
      reviewReason: r.f.reviewReason,
      batch: r.f.batch,
      updatedAt: r.f.updatedAt.toISOString(),
      modelName: r.modelName,
      modelVersion: r.modelVersion,
      material: r.material,
      energy: r.energy,
      width: r.width,
      lifetimePs: r.lifetimePs,
      quality: r.quality,
      nearThreshold: r.nearThreshold,
      overlapping: r.overlapping,
      thumbnailUrl: r.source === 'fitted' ? null : modeImageUrl(groupId, r.f.resonanceId, 'thumb'),
      measurement: measurementOf(r.f, r, names),
      downloads: PACKAGE_STATES.includes(r.f.state as FabricationState) ? packageLinks(groupId, r.f.resonanceId) : null,
    }));
  }

  async comments(groupId: string, resonanceId: string): Promise<ResonanceComment[]> {
    await predictedFigures(this.db, groupId, resonanceId);
    const rows = await listComments(this.db, groupId, resonanceId);
    const names = await userNames(
      this.db,
      rows.flatMap((r) => r.c.mentions),
    );
    return rows.map((r) => ({
      id: r.c.id,
      body: r.c.body,
      author: r.c.authorId ? { id: r.c.authorId, name: r.authorName ?? '(former member)' } : null,
      mentions: r.c.mentions.map((id) => ({ id, name: names.get(id) ?? '(former member)' })),
      createdAt: r.c.createdAt.toISOString(),
    }));
  }

  /** Adds a comment; mentioned members (who must belong to the group) get an e-mail. */
  async addComment(groupId: string, resonanceId: string, caller: Caller, body: CommentBody): Promise<ResonanceComment> {
    return this.db.transaction(async (tx) => {
      const resonance = await lockResonance(tx, groupId, resonanceId);
      if (!resonance) throw resonanceNotFound();
      const mentioned = [...new Set(body.mentions)];
      const members = mentioned.length
        ? await tx
            .select({ id: users.id, email: users.email, name: users.name })
            .from(memberships)
            .innerJoin(users, eq(users.id, memberships.userId))
            .where(and(eq(memberships.groupId, groupId), inArray(memberships.userId, mentioned)))
        : [];
      const missing = mentioned.findIndex((id) => !members.some((m) => m.id === id));
      if (missing >= 0) {
        throw new ApiError(400, 'validation_failed', 'Only members of this group can be mentioned.', [
          { path: `mentions.${missing}`, message: 'not a member of this group' },
        ]);
      }
      const [row] = await tx.insert(resonanceComments).values({ groupId, resonanceId, authorId: caller.id, body: body.body, mentions: mentioned }).returning();
      await writeAudit(tx, {
        groupId,
        actorId: caller.id,
        action: 'comment.added',
        subject: figures(resonance),
        details: { resonanceId, commentId: row!.id, mentions: mentioned },
      });
      const author = await userById(tx, caller.id);
      await recordNotifications(tx, this.queue, {
        groupId,
        kind: 'mentioned',
        recipients: members,
        actorId: caller.id,
        subject: `[${resonance.groupName}] ${author?.name ?? 'A member'} mentioned you on ${resonance.modelName} at ${resonance.energy.toPrecision(5)} meV`,
        lines: [`${author?.name ?? 'A member'} wrote on ${figures(resonance)}:`, body.body],
        link: this.link(resonance.groupSlug, `catalogue/resonances/${resonanceId}`),
        linkLabel: 'Open the resonance',
      });
      return {
        id: row!.id,
        body: row!.body,
        author: { id: caller.id, name: author?.name ?? '' },
        mentions: members.map((m) => ({ id: m.id, name: m.name })),
        createdAt: row!.createdAt.toISOString(),
      };
    });
  }
}

/** The resonance's predicted figures (404 when it is not the group's); no lock. */
async function predictedFigures(q: Queryable, groupId: string, resonanceId: string) {
  const [r] = await q
    .select({ energy: resonances.energy, width: resonances.width })
    .from(resonances)
    .where(and(eq(resonances.id, resonanceId), eq(resonances.groupId, groupId)));
  if (!r) throw resonanceNotFound();
  return r;
}

/**
 * The fabrication states of a resonance and every legal move between them, in one place:
 * the server refuses what this table does not list, and the client shows only what it lists
 * for the caller's role. A resonance without a state is "not proposed" (null).
 *
 *   (none) ─propose─▶ candidate ─start review─▶ under review
 *   candidate | under review ─approve─▶ approved ─send─▶ sent ─record measurement─▶ measured
 *   candidate | under review ─reject─▶ rejected ─propose─▶ candidate
 *   candidate | under review | rejected ─withdraw─▶ (none)
 */
export const FABRICATION_STATES = ['candidate', 'under_review', 'approved', 'rejected', 'sent', 'measured'] as const;
export type FabricationState = (typeof FABRICATION_STATES)[number];

export const FABRICATION_ACTIONS = ['propose', 'start_review', 'approve', 'reject', 'withdraw', 'send', 'measure'] as const;
export type FabricationAction = (typeof FABRICATION_ACTIONS)[number];

/** Roles of a group member; admin may do whatever any other role may. */
export type MemberRole = 'admin' | 'designer' | 'reviewer' | 'viewer';

interface FabricationTransition {
  action: FabricationAction;
  /** States the action starts from; null = not proposed. */
  from: readonly (FabricationState | null)[];
  to: FabricationState | null;
  /** Roles allowed besides admin. */
  roles: readonly MemberRole[];
  /** The proposer may not take this action on their own candidate (four-eyes rule). */
  notByProposer: boolean;
  /** Words for buttons and messages. */
  label: string;
}

const FABRICATION_TRANSITIONS: readonly FabricationTransition[] = [
  { action: 'propose', from: [null, 'rejected'], to: 'candidate', roles: ['designer'], notByProposer: false, label: 'propose as candidate' },
  { action: 'start_review', from: ['candidate'], to: 'under_review', roles: ['reviewer'], notByProposer: true, label: 'start review' },
  { action: 'approve', from: ['candidate', 'under_review'], to: 'approved', roles: ['reviewer'], notByProposer: true, label: 'approve' },
  { action: 'reject', from: ['candidate', 'under_review'], to: 'rejected', roles: ['reviewer'], notByProposer: true, label: 'reject' },
  { action: 'withdraw', from: ['candidate', 'under_review', 'rejected'], to: null, roles: ['designer'], notByProposer: false, label: 'withdraw the proposal' },
  { action: 'send', from: ['approved'], to: 'sent', roles: ['designer', 'reviewer'], notByProposer: false, label: 'send to fabrication' },
  { action: 'measure', from: ['sent', 'measured'], to: 'measured', roles: ['designer', 'reviewer'], notByProposer: false, label: 'record the measurement' },
];

/** Words for a state in messages and on screen. */
const STATE_WORDS: Record<FabricationState, string> = {
  candidate: 'candidate',
  under_review: 'under review',
  approved: 'approved',
  rejected: 'rejected',
  sent: 'sent to fabrication',
  measured: 'measured',
};

export function stateWords(state: FabricationState | null): string {
  return state === null ? 'not proposed' : STATE_WORDS[state];
}

export function transitionOf(action: FabricationAction): FabricationTransition {
  const t = FABRICATION_TRANSITIONS.find((x) => x.action === action);
  if (!t) throw new Error(`unknown fabrication action '${action}'`);
  return t;
}

/** The transitions that start from this state, whoever may take them. */
function transitionsFrom(state: FabricationState | null): FabricationTransition[] {
  return FABRICATION_TRANSITIONS.filter((t) => t.from.includes(state));
}

function roleMayTake(role: MemberRole, t: FabricationTransition): boolean {
  return role === 'admin' || t.roles.includes(role);
}

/** What this caller may do from this state (the buttons to show). */
export function actionsFor(state: FabricationState | null, role: MemberRole, callerIsProposer: boolean): FabricationAction[] {
  return transitionsFrom(state)
    .filter((t) => roleMayTake(role, t) && !(t.notByProposer && callerIsProposer))
    .map((t) => t.action);
}

type TransitionRefusal = { ok: true; transition: FabricationTransition } | { ok: false; status: 403 | 409; code: string; message: string };

/**
 * Whether `action` may be taken now: the role first (403), then the state (409, saying what
 * is allowed from here), then the four-eyes rule (403).
 */
export function checkTransition(state: FabricationState | null, action: FabricationAction, role: MemberRole, callerIsProposer: boolean): TransitionRefusal {
  const t = transitionOf(action);
  if (!roleMayTake(role, t)) {
    const wanted = t.roles.length === 1 ? `the ${t.roles[0]} role` : `one of the roles ${t.roles.join(', ')}`;
    return { ok: false, status: 403, code: 'forbidden', message: `To ${t.label} needs ${wanted}; you are ${role}.` };
  }
  if (!t.from.includes(state)) {
    const here = transitionsFrom(state);
    const allowed = here.length === 0 ? 'nothing' : here.map((x) => `${x.label} (${['admin', ...x.roles].join(', ')})`).join('; ');
    return {
      ok: false,
      status: 409,
      code: 'illegal_transition',
      message: `This resonance is ${stateWords(state)}: it cannot ${t.label} from here. Allowed from ${stateWords(state)}: ${allowed}.`,
    };
  }
  if (t.notByProposer && callerIsProposer) {
    return { ok: false, status: 403, code: 'own_candidate', message: `You proposed this candidate, so someone else must ${t.label} it.` };
  }
  return { ok: true, transition: t };
}

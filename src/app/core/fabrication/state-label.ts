import { stateWords, type FabricationState } from '../../../../shared/fabrication/fabrication-states';

/** The icon of a fabrication state, beside its words (colour is never the only cue). */
export const STATE_ICONS: Record<FabricationState, string> = {
  candidate: 'flag',
  under_review: 'rate_review',
  approved: 'verified',
  rejected: 'block',
  sent: 'local_shipping',
  measured: 'straighten',
};

export function stateLabel(state: FabricationState | null): string {
  const words = stateWords(state);
  return words.charAt(0).toUpperCase() + words.slice(1);
}

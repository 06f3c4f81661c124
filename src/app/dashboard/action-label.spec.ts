import { actionDetail, actionLabel } from './action-label';

describe('actionLabel', () => {
  it('words the documented actions as verbs and spells out unknown codes', () => {
    expect(actionLabel('invitation.created')).toBe('invited');
    expect(actionLabel('member.removed')).toBe('removed');
    expect(actionLabel('run.pole_search-finished')).toBe('run pole search finished');
  });

  it('shows a role change as from → to, and nothing for other actions', () => {
    expect(actionDetail('member.role_changed', { userId: 'u', from: 'designer', to: 'reviewer' })).toBe('(designer → reviewer)');
    expect(actionDetail('member.role_changed', {})).toBe('');
    expect(actionDetail('member.removed', { from: 'a', to: 'b' })).toBe('');
  });
});

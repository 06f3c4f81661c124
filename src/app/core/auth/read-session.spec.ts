import { SessionShapeError, readSession } from './read-session';

const good = {
  user: { id: 'u1', email: 'rae.reviewer@harrow-lake.example', name: 'Rae Lindqvist' },
  groups: [{ id: 'g1', name: 'Harrow Lake Mesoscopics Lab', slug: 'harrow-lake', role: 'reviewer', extra: 1 }],
  csrfToken: 'c',
};

describe('readSession', () => {
  it('keeps the contract fields and drops the rest', () => {
    const s = readSession(good);
    expect(s.groups[0]).toEqual({ id: 'g1', name: 'Harrow Lake Mesoscopics Lab', slug: 'harrow-lake', role: 'reviewer' });
    expect(s.user.name).toBe('Rae Lindqvist');
    expect(s.siteOperator).toBe(false);
    expect(readSession({ ...good, siteOperator: true }).siteOperator).toBe(true);
  });

  it('names the first wrong field', () => {
    const badRole = { ...good, groups: [{ ...good.groups[0], role: 'owner' }] };
    expect(() => readSession(badRole)).toThrow(SessionShapeError);
    expect(() => readSession(badRole)).toThrow('groups.0.role should be one of admin, designer, reviewer, viewer');
    expect(() => readSession({ ...good, csrfToken: undefined })).toThrow('csrfToken should be a string');
    expect(() => readSession(null)).toThrow('session should be an object');
  });
});

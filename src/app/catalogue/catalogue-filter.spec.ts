import { convertToParamMap } from '@angular/router';
import { emptyFilter, queryToView, viewToQuery } from './catalogue-filter';

describe('catalogue filter in the URL', () => {
  it('reads back what it writes', () => {
    const view = {
      filter: { ...emptyFilter, family: 'stadium', taumin: '10', dimKey: 'length', dimMax: '400', tags: ['a', 'b'] },
      sort: 'lifetime' as const,
      dir: 'desc' as const,
      page: 3,
      pageSize: 50,
    };
    const query = viewToQuery(view);
    expect(query).toEqual({ family: 'stadium', taumin: '10', 'dim.length.max': '400', tag: ['a', 'b'], sort: 'lifetime', dir: 'desc', page: '3', pageSize: '50' });
    expect(queryToView(convertToParamMap(query))).toEqual(view);
  });

  it('ignores an unknown sort key and a bad page', () => {
    const view = queryToView(convertToParamMap({ sort: 'colour', page: '-2' }));
    expect(view.sort).toBe('');
    expect(view.page).toBe(1);
  });
});

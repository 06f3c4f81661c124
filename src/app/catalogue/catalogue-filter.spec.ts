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
      cursor: '',
    };
    const query = viewToQuery(view);
    expect(query).toEqual({ family: 'stadium', taumin: '10', 'dim.length.max': '400', tag: ['a', 'b'], sort: 'lifetime', dir: 'desc', page: '3', pageSize: '50' });
    expect(queryToView(convertToParamMap(query))).toEqual(view);
  });

  it('carries a cursor instead of a page number, and drops one that is not a cursor', () => {
    const view = { filter: { ...emptyFilter, emin: '2' }, sort: 'width' as const, dir: 'asc' as const, page: 4, pageSize: 25, cursor: 'eyJ2IjoxfQ' };
    const query = viewToQuery(view);
    expect(query).toEqual({ emin: '2', sort: 'width', dir: 'asc', cursor: 'eyJ2IjoxfQ' });
    expect(queryToView(convertToParamMap(query))).toEqual({ ...view, page: 1 });
    expect(queryToView(convertToParamMap({ cursor: 'a b<script>' })).cursor).toBe('');
  });

  it('ignores an unknown sort key and a bad page', () => {
    const view = queryToView(convertToParamMap({ sort: 'colour', page: '-2' }));
    expect(view.sort).toBe('');
    expect(view.page).toBe(1);
  });

  it('carries the validity filter and the new dimension names (ry, area) to the API', () => {
    const view = { filter: { ...emptyFilter, aboveLimit: 'true', dimKey: 'ry', dimMax: '10' }, sort: '' as const, dir: '' as const, page: 1, pageSize: 25, cursor: '' };
    const query = viewToQuery(view);
    expect(query).toEqual({ aboveLimit: 'true', 'dim.ry.max': '10' });
    expect(queryToView(convertToParamMap(query))).toEqual(view);
  });

  it('shows the sorted dimension in the dimension picker when no dimension is filtered', () => {
    expect(queryToView(convertToParamMap({ sort: 'dim.area', dir: 'desc' })).filter.dimKey).toBe('area');
    // A dimension filter names the picker's dimension, whatever the sort.
    expect(queryToView(convertToParamMap({ sort: 'dim.area', 'dim.rx.min': '10' })).filter.dimKey).toBe('rx');
  });
});

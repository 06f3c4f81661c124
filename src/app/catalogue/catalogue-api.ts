import { HttpClient, HttpParams } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { Observable } from 'rxjs';
import { type CataloguePage, type ResonanceDetail, getResonanceRoute, labelResonanceRoute, searchCatalogueRoute } from '../../../shared/api/catalogue';
import type { ResonanceRow } from '../../../shared/api/resonance-row';
import { parseAnswer } from '../core/http/parse-answer';

/** The catalogue query exactly as the API names its parameters (strings, as in a URL). */
type CatalogueQuery = Record<string, string | string[]>;

/** HTTP for the group's resonance catalogue (routes declared in shared/api/catalogue.ts). */
@Injectable({ providedIn: 'root' })
export class CatalogueApi {
  private readonly http = inject(HttpClient);

  list(groupId: string, query: CatalogueQuery): Observable<CataloguePage> {
    return this.http.get(`${base(groupId)}/catalogue`, { params: new HttpParams({ fromObject: query }) }).pipe(parseAnswer(searchCatalogueRoute, 'catalogue page'));
  }

  /** A link (not a request) so the browser downloads the file with the session cookie. */
  exportUrl(groupId: string, format: 'csv' | 'json', query: CatalogueQuery): string {
    const params = new HttpParams({ fromObject: withoutPaging(query) }).toString();
    return `${base(groupId)}/catalogue/export.${format}${params ? `?${params}` : ''}`;
  }

  resonance(groupId: string, id: string): Observable<ResonanceDetail> {
    return this.http.get(`${base(groupId)}/resonances/${encodeURIComponent(id)}`).pipe(parseAnswer(getResonanceRoute, 'resonance'));
  }

  update(groupId: string, id: string, change: { tags?: string[]; notes?: string }): Observable<ResonanceRow> {
    return this.http.patch(`${base(groupId)}/resonances/${encodeURIComponent(id)}`, change).pipe(parseAnswer(labelResonanceRoute, 'resonance'));
  }

  modeImageUrl(groupId: string, id: string, size: 'thumb' | 'full'): string {
    return `${base(groupId)}/resonances/${encodeURIComponent(id)}/mode.png?size=${size}`;
  }
}

function base(groupId: string): string {
  return `/api/groups/${encodeURIComponent(groupId)}`;
}

/** An export is the whole filtered set, so paging and counting parameters are dropped. */
function withoutPaging(query: CatalogueQuery): CatalogueQuery {
  const { page: _page, pageSize: _size, cursor: _cursor, count: _count, ...rest } = query;
  return rest;
}

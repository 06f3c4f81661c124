import { HttpClient, HttpParams } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { Observable } from 'rxjs';
import type { ResonanceRow } from '../core/answers/resonance-row';
import type { RunCertificate } from '../core/answers/run-certificate';
import type { RunWindow } from '../core/answers/run-window';

export type { ResonanceRow } from '../core/answers/resonance-row';

export interface ResonanceDetail extends ResonanceRow {
  /** null for a fitted resonance of a measured trace. */
  run: { id: string; window: RunWindow; certificate: RunCertificate | null } | null;
  model: { id: string; name: string; version: number };
  otherPoles: { energy: number; width: number }[];
  thresholds: number[];
  leads: { name: string; side: string; width: number }[];
}

/**
 * How the total was obtained (docs/api.md): counted for this answer, counted exactly
 * `countAgeSeconds` ago, or the database's estimate.
 */
export type CountKind = 'exact' | 'cached' | 'estimated';

export interface CataloguePage {
  items: ResonanceRow[];
  total: number;
  totalKind: CountKind;
  countedAt: string | null;
  countAgeSeconds: number | null;
  /** Page number: exact for numbered pages, a label the cursor carries otherwise. */
  page: number;
  pageSize: number;
  /** Opaque keyset cursors of the neighbouring pages; null at either end. */
  nextCursor: string | null;
  prevCursor: string | null;
}

/** The catalogue query exactly as the API names its parameters (strings, as in a URL). */
export type CatalogueQuery = Record<string, string | string[]>;

/** HTTP for the group's resonance catalogue. */
@Injectable({ providedIn: 'root' })
export class CatalogueApi {
  private readonly http = inject(HttpClient);

  list(groupId: string, query: CatalogueQuery): Observable<CataloguePage> {
    return this.http.get<CataloguePage>(`${base(groupId)}/catalogue`, { params: new HttpParams({ fromObject: query }) });
  }

  /** A link (not a request) so the browser downloads the file with the session cookie. */
  exportUrl(groupId: string, format: 'csv' | 'json', query: CatalogueQuery): string {
    const params = new HttpParams({ fromObject: withoutPaging(query) }).toString();
    return `${base(groupId)}/catalogue/export.${format}${params ? `?${params}` : ''}`;
  }

  resonance(groupId: string, id: string): Observable<ResonanceDetail> {
    return this.http.get<ResonanceDetail>(`${base(groupId)}/resonances/${encodeURIComponent(id)}`);
  }

  update(groupId: string, id: string, change: { tags?: string[]; notes?: string }): Observable<ResonanceRow> {
    return this.http.patch<ResonanceRow>(`${base(groupId)}/resonances/${encodeURIComponent(id)}`, change);
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

import { HttpClient, HttpParams } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { Observable } from 'rxjs';
import type { BitmapShape, CavityModelInput } from '../../../../shared/model/cavity-model';
import type { DerivedFigures } from '../../../../shared/model/derived-figures';

export type ModelFamily = 'rectangle' | 'disk' | 'ellipse' | 'stadium' | 'annulus' | 'polygon' | 'sites' | 'bitmap' | 'composite';

export interface ModelSummary {
  id: string;
  name: string;
  family: ModelFamily;
  latestVersion: number;
  material: string;
  spacingNm: number;
  fieldT: number;
  siteCount: number;
  leadCount: number;
  /** Key lengths in nm, e.g. { width, height } or { radius }. */
  keyDimensions: Record<string, number>;
  updatedAt: string;
  createdBy: { id: string; name: string };
}

export interface ModelVersionInfo {
  version: number;
  createdAt: string;
  createdBy: { id: string; name: string };
  usedByRuns: number;
}

export interface ModelDetail extends ModelSummary {
  document: CavityModelInput;
  versions: ModelVersionInfo[];
  derived: DerivedFigures;
}

export interface ModelVersion {
  version: number;
  document: CavityModelInput;
  derived: DerivedFigures;
  createdAt: string;
}

export interface ModelListQuery {
  search?: string;
  family?: string;
  page?: number;
  pageSize?: number;
}

/** HTTP for the group's cavity models and their versions. */
@Injectable({ providedIn: 'root' })
export class ModelsApi {
  private readonly http = inject(HttpClient);

  list(groupId: string, query: ModelListQuery = {}): Observable<{ items: ModelSummary[]; total: number }> {
    let params = new HttpParams();
    for (const [key, value] of Object.entries(query)) {
      if (value !== undefined && value !== '') params = params.set(key, String(value));
    }
    return this.http.get<{ items: ModelSummary[]; total: number }>(`${base(groupId)}/models`, { params });
  }

  model(groupId: string, modelId: string): Observable<ModelDetail> {
    return this.http.get<ModelDetail>(`${base(groupId)}/models/${encodeURIComponent(modelId)}`);
  }

  version(groupId: string, modelId: string, version: number): Observable<ModelVersion> {
    return this.http.get<ModelVersion>(`${base(groupId)}/models/${encodeURIComponent(modelId)}/versions/${version}`);
  }

  create(groupId: string, document: CavityModelInput): Observable<ModelDetail> {
    return this.http.post<ModelDetail>(`${base(groupId)}/models`, { document });
  }

  /** Saves a new version; the versions runs already used stay as they were. */
  update(groupId: string, modelId: string, document: CavityModelInput): Observable<ModelDetail> {
    return this.http.put<ModelDetail>(`${base(groupId)}/models/${encodeURIComponent(modelId)}`, { document });
  }

  /** Live check without saving: derived figures, or a 400 with issues by field path. */
  validate(groupId: string, document: CavityModelInput): Observable<{ ok: true; derived: DerivedFigures }> {
    return this.http.post<{ ok: true; derived: DerivedFigures }>(`${base(groupId)}/models/validate`, { document });
  }

  /** Turns a drawn outline (PNG, black inside) into a bitmap shape at the given spacing. */
  maskFromBitmap(groupId: string, file: Blob, spacingNm: number, widthNm: number): Observable<{ shape: BitmapShape }> {
    const body = new FormData();
    body.append('file', file);
    body.append('spacingNm', String(spacingNm));
    body.append('widthNm', String(widthNm));
    return this.http.post<{ shape: BitmapShape }>(`${base(groupId)}/models/mask-from-bitmap`, body);
  }
}

function base(groupId: string): string {
  return `/api/groups/${encodeURIComponent(groupId)}`;
}

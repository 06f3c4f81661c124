import { HttpClient, HttpParams } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { Observable } from 'rxjs';
import type { z } from 'zod';
import {
  type BitmapMask,
  type ModelCheck,
  type ModelDetail,
  type ModelList,
  type ModelVersion,
  checkModelRoute,
  createModelRoute,
  getModelRoute,
  getModelVersionRoute,
  listModelsRoute,
  maskFromBitmapRoute,
  type modelListQuery,
  updateModelRoute,
} from '../../../../shared/api/models';
import type { CavityModelInput } from '../../../../shared/model/cavity-model';
import { parseAnswer } from '../http/parse-answer';

/** Search and page of the model list, as the API names them. */
type ModelListQuery = Partial<z.input<typeof modelListQuery>>;

/** HTTP for the group's cavity models and their versions (routes declared in shared/api/models.ts). */
@Injectable({ providedIn: 'root' })
export class ModelsApi {
  private readonly http = inject(HttpClient);

  list(groupId: string, query: ModelListQuery = {}): Observable<ModelList> {
    let params = new HttpParams();
    for (const [key, value] of Object.entries(query)) {
      if (value !== undefined && value !== '') params = params.set(key, String(value));
    }
    return this.http.get(`${base(groupId)}/models`, { params }).pipe(parseAnswer(listModelsRoute, 'list of models'));
  }

  model(groupId: string, modelId: string): Observable<ModelDetail> {
    return this.http.get(`${base(groupId)}/models/${encodeURIComponent(modelId)}`).pipe(parseAnswer(getModelRoute, 'model'));
  }

  version(groupId: string, modelId: string, version: number): Observable<ModelVersion> {
    return this.http.get(`${base(groupId)}/models/${encodeURIComponent(modelId)}/versions/${version}`).pipe(parseAnswer(getModelVersionRoute, 'model version'));
  }

  create(groupId: string, document: CavityModelInput): Observable<ModelDetail> {
    return this.http.post(`${base(groupId)}/models`, { document }).pipe(parseAnswer(createModelRoute, 'model'));
  }

  /** Saves a new version; the versions runs already used stay as they were. */
  update(groupId: string, modelId: string, document: CavityModelInput): Observable<ModelDetail> {
    return this.http.put(`${base(groupId)}/models/${encodeURIComponent(modelId)}`, { document }).pipe(parseAnswer(updateModelRoute, 'model'));
  }

  /** Live check without saving: derived figures, or a 400 with issues by field path. */
  validate(groupId: string, document: CavityModelInput): Observable<ModelCheck> {
    return this.http.post(`${base(groupId)}/models/validate`, { document }).pipe(parseAnswer(checkModelRoute, 'model check'));
  }

  /** Turns a drawn outline (PNG, black inside) into a bitmap shape at the given spacing. */
  maskFromBitmap(groupId: string, file: Blob, spacingNm: number, widthNm: number): Observable<BitmapMask> {
    const body = new FormData();
    body.append('file', file);
    body.append('spacingNm', String(spacingNm));
    body.append('widthNm', String(widthNm));
    return this.http.post(`${base(groupId)}/models/mask-from-bitmap`, body).pipe(parseAnswer(maskFromBitmapRoute, 'mask'));
  }
}

function base(groupId: string): string {
  return `/api/groups/${encodeURIComponent(groupId)}`;
}

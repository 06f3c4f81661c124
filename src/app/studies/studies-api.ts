import { HttpClient, HttpParams } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { Observable } from 'rxjs';
import type { z } from 'zod';
import {
  type StudyDetail,
  type StudyEstimate,
  type StudyRequest,
  type StudyStepDetail,
  cancelStudyRoute,
  createStudyRoute,
  listStudiesRoute,
  saveStudyStepRoute,
  studyDetailRoute,
  studyEstimateRoute,
  type SavedStep,
  studyStepRoute,
  type studyListSchema,
} from '../../../shared/api/studies';
import { parseAnswer } from '../core/http/parse-answer';

type StudyList = z.infer<typeof studyListSchema>;
export type { SavedStep };

/** Polling period of the study list and the study page while a study runs (the API has no event stream for studies). */
export const studyPollMs = 2000;

/** HTTP for parameter studies and tolerance ensembles (routes declared in shared/api/studies.ts). */
@Injectable({ providedIn: 'root' })
export class StudiesApi {
  private readonly http = inject(HttpClient);

  estimate(groupId: string, request: StudyRequest): Observable<StudyEstimate> {
    return this.http.post(`${base(groupId)}/studies/estimate`, request).pipe(parseAnswer(studyEstimateRoute, 'estimate'));
  }

  create(groupId: string, request: StudyRequest): Observable<StudyDetail> {
    return this.http.post(`${base(groupId)}/studies`, request).pipe(parseAnswer(createStudyRoute, 'study'));
  }

  list(groupId: string, page = 1, pageSize = 25): Observable<StudyList> {
    const params = new HttpParams().set('page', page).set('pageSize', pageSize);
    return this.http.get(`${base(groupId)}/studies`, { params }).pipe(parseAnswer(listStudiesRoute, 'list of studies'));
  }

  study(groupId: string, studyId: string): Observable<StudyDetail> {
    return this.http.get(`${base(groupId)}/studies/${encodeURIComponent(studyId)}`).pipe(parseAnswer(studyDetailRoute, 'study'));
  }

  cancel(groupId: string, studyId: string): Observable<StudyDetail> {
    return this.http.post(`${base(groupId)}/studies/${encodeURIComponent(studyId)}/cancel`, {}).pipe(parseAnswer(cancelStudyRoute, 'study'));
  }

  step(groupId: string, studyId: string, index: number): Observable<StudyStepDetail> {
    return this.http.get(`${base(groupId)}/studies/${encodeURIComponent(studyId)}/steps/${index}`).pipe(parseAnswer(studyStepRoute, 'step'));
  }

  saveStep(groupId: string, studyId: string, index: number): Observable<SavedStep> {
    return this.http
      .post(`${base(groupId)}/studies/${encodeURIComponent(studyId)}/steps/${index}/save`, {})
      .pipe(parseAnswer(saveStudyStepRoute, 'saved version'));
  }

  /** The export link (a plain GET the browser downloads with the session cookie). */
  exportUrl(groupId: string, studyId: string, format: 'csv' | 'json', table: 'trajectories' | 'transmission' = 'trajectories'): string {
    return `${base(groupId)}/studies/${encodeURIComponent(studyId)}/export?format=${format}${table === 'transmission' ? '&table=transmission' : ''}`;
  }
}

function base(groupId: string): string {
  return `/api/groups/${encodeURIComponent(groupId)}`;
}

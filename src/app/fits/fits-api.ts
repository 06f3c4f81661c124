import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { Observable } from 'rxjs';

export type Lineshape = 'bw' | 'fano' | 'thermal' | 'thermal-fano';

export interface TraceSummary {
  id: string;
  deviceName: string;
  fileName: string;
  temperatureMK: number;
  notes: string;
  modelId: string | null;
  modelName: string | null;
  columns: string[];
  selection: Record<string, unknown>;
  points: number;
  createdBy: string | null;
  createdAt: string;
}

export interface TraceDetail extends TraceSummary {
  energies: number[];
  transmission: number[];
}

export interface TracePreview {
  columns: string[];
  hasHeader: boolean;
  delimiter: string;
  rowCount: number;
  rows: { line: number; cells: string[] }[];
}

export interface FittedParameter {
  name: string;
  role: string;
  peak: number | null;
  unit: string;
  value: number;
  error: number | null;
  atBound: 'lower' | 'upper' | null;
}

export interface FittedPeak {
  energy: number;
  energyError: number | null;
  width: number;
  widthError: number | null;
  lifetimePs: number;
  lifetimeError: number | null;
  quality: number;
  qualityError: number | null;
  amplitude: number;
  amplitudeError: number | null;
  q: number | null;
  qError: number | null;
  fwhm: number | null;
}

export interface FitResult {
  lineshape: Lineshape;
  background: 'constant' | 'linear';
  temperatureMK: number | null;
  parameters: FittedParameter[];
  covariance: number[][];
  chiSquare: number;
  reducedChiSquare: number;
  degreesOfFreedom: number;
  points: number;
  iterations: number;
  converged: boolean;
  peaks: FittedPeak[];
  warnings: { code: string; message: string }[];
  curve: { x: number[]; y: number[]; fit: number[]; background: number[]; components: number[][]; residuals: number[] };
}

export interface PoleComparison {
  peak: number;
  pole: { id: string; energy: number; width: number; petermann: number | null; overlapping: boolean; runId: string | null; modelVersion: number } | null;
  energyPercent: number | null;
  energySigmas: number | null;
  widthPercent: number | null;
  widthSigmas: number | null;
  positionComparable: boolean;
  warnings: string[];
}

export interface FitDetail {
  id: string;
  runId: string | null;
  traceId: string | null;
  modelId: string | null;
  modelName: string | null;
  request: Record<string, unknown>;
  status: 'queued' | 'running' | 'completed' | 'failed';
  progressFraction: number | null;
  error: string | null;
  comparison: PoleComparison[] | null;
  deviceName: string | null;
  createdBy: string | null;
  createdAt: string;
  result?: FitResult | null;
  peaks?: FittedPeak[] | null;
  catalogueIds?: string[];
}

export interface FitRequest {
  source: { kind: 'run'; runId: string; pair: number; from: number; to: number } | { kind: 'trace'; traceId: string; from?: number; to?: number };
  lineshape: Lineshape;
  background: 'constant' | 'linear';
  peaks: number;
  temperatureMK?: number;
  modelId?: string;
  hints?: { energy: number; width?: number }[];
}

const base = (groupId: string) => `/api/groups/${encodeURIComponent(groupId)}`;

/** HTTP for measured traces and peak fits. */
@Injectable({ providedIn: 'root' })
export class FitsApi {
  private readonly http = inject(HttpClient);

  traces(groupId: string): Observable<TraceSummary[]> {
    return this.http.get<TraceSummary[]>(`${base(groupId)}/traces`);
  }

  trace(groupId: string, id: string): Observable<TraceDetail> {
    return this.http.get<TraceDetail>(`${base(groupId)}/traces/${encodeURIComponent(id)}`);
  }

  preview(groupId: string, file: File): Observable<TracePreview> {
    const form = new FormData();
    form.append('file', file);
    return this.http.post<TracePreview>(`${base(groupId)}/traces/preview`, form);
  }

  upload(groupId: string, file: File, fields: Record<string, string>): Observable<TraceDetail> {
    const form = new FormData();
    for (const [k, v] of Object.entries(fields)) form.append(k, v);
    form.append('file', file);
    return this.http.post<TraceDetail>(`${base(groupId)}/traces`, form);
  }

  fits(groupId: string): Observable<FitDetail[]> {
    return this.http.get<FitDetail[]>(`${base(groupId)}/fits`);
  }

  fit(groupId: string, id: string): Observable<FitDetail> {
    return this.http.get<FitDetail>(`${base(groupId)}/fits/${encodeURIComponent(id)}`);
  }

  create(groupId: string, request: FitRequest): Observable<FitDetail> {
    return this.http.post<FitDetail>(`${base(groupId)}/fits`, request);
  }
}

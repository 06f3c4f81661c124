/**
 * The geometry and engine work a request needs, as pure functions of plain data:
 * they run in the compute pool's threads (compute-pool.ts), never on the API's
 * event loop. An expected refusal (a bad model, a drawing too large) comes back as
 * a problem, since a thrown error loses its class crossing the thread boundary.
 */
import { InvalidModelError } from '../../shared/engine/effective-hamiltonian.js';
import { ApiError, type FieldIssue } from '../http/error-handler.js';
import { maskFromBitmap, type BitmapMask } from '../models/mask-from-bitmap.js';
import { checkModel, type CheckedModel, invalidModel } from '../models/model-figures.js';
import { estimateRun, type RunEstimate } from '../runs/run-estimate.js';
import type { RunRequest } from '../runs/run-window.js';
import { buildLayoutFiles, type LayoutFiles, type StoredOutline } from '../fabrication/layout-files.js';
import { renderSpecSheet, type SpecSheetInput } from '../fabrication/spec-sheet.js';
import { renderModePng, type ModeLattice } from '../catalogue/mode-image.js';

export type ComputeTask =
  | { kind: 'check-model'; document: unknown }
  | { kind: 'mask-from-bitmap'; file: Uint8Array; spacingNm: number; widthNm: number; maxSites: number }
  | { kind: 'estimate-run'; document: unknown; request: Pick<RunRequest, 'kind' | 'window'> }
  | { kind: 'device-layout'; document: unknown; title: string; structureName: string; time: Date; stored: StoredOutline | null }
  | { kind: 'spec-sheet'; input: SpecSheetInput }
  | { kind: 'mode-images'; lattice: ModeLattice; modes: Float64Array[]; sides: number[] };

/** What each task kind answers. */
export interface ComputeAnswers {
  'check-model': CheckedModel;
  'mask-from-bitmap': BitmapMask;
  'estimate-run': RunEstimate;
  'device-layout': LayoutFiles;
  'spec-sheet': Uint8Array;
  /** One PNG per mode and side, in the order asked. */
  'mode-images': Uint8Array[][];
}

export interface ComputeProblem {
  status: number;
  code: string;
  message: string;
  issues?: FieldIssue[];
}

export type ComputeOutcome<T = unknown> = { ok: true; value: T } | { ok: false; problem: ComputeProblem };

function compute(task: ComputeTask): unknown {
  switch (task.kind) {
    case 'check-model':
      return checkModel(task.document);
    case 'mask-from-bitmap': {
      const file = Buffer.from(task.file.buffer, task.file.byteOffset, task.file.byteLength);
      return maskFromBitmap(file, task.spacingNm, task.widthNm, task.maxSites);
    }
    case 'estimate-run':
      try {
        return estimateRun(task.document, task.request);
      } catch (err) {
        if (err instanceof InvalidModelError) throw invalidModel(err.issues);
        throw err;
      }
    case 'device-layout':
      return buildLayoutFiles(task.document, task.title, task.structureName, task.time, task.stored);
    case 'spec-sheet':
      // Font parsing and subsetting take a second or two of CPU under load: never on the API thread.
      return renderSpecSheet(task.input).then((pdf) => new Uint8Array(pdf.buffer, pdf.byteOffset, pdf.byteLength));
    case 'mode-images':
      // PNG encoding of full-size mode images takes tens of ms each: never on the API thread.
      return task.modes.map((mode) =>
        task.sides.map((maxSide) => {
          const png = renderModePng(task.lattice, mode, { maxSide });
          return new Uint8Array(png.buffer, png.byteOffset, png.byteLength);
        }),
      );
  }
}

/** Runs one task (some, like the spec sheet, finish asynchronously); ApiErrors become problems, anything else is thrown (a 500 on the API side). */
export async function runComputeTask(task: ComputeTask): Promise<ComputeOutcome> {
  try {
    return { ok: true, value: await compute(task) };
  } catch (err) {
    if (err instanceof ApiError) {
      return { ok: false, problem: { status: err.status, code: err.code, message: err.message, issues: err.issues } };
    }
    throw err;
  }
}

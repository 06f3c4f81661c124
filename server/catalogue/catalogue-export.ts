import type { Response } from 'express';
import Papa from 'papaparse';
import type { ResonanceRecord } from './catalogue-repository.js';
import { resonanceCsvColumns, resonanceCsvHeader, resonanceJsonUnits } from '../../shared/api/resonance-columns.js';
import { toResonanceRow, type ResonanceRow } from './resonance-row.js';

export type ExportFormat = 'csv' | 'json';

/** Hands batches of matching rows to `onBatch` until it returns false; resolves to the number of rows read. */
export type RowSource = (onBatch: (rows: ResonanceRecord[]) => Promise<boolean>) => Promise<number>;

// The columns and units are one table with the run page's pole download (shared/api/resonance-columns.ts).
const csvColumns = resonanceCsvColumns;
const csvHeader = resonanceCsvHeader;
const jsonUnits = resonanceJsonUnits;

/**
 * RFC 4180 lines (CRLF). escapeFormulae prefixes text cells that start with =, +, -, @
 * so a spreadsheet does not run a note as a formula; numbers are left alone.
 */
function csvLines(rows: ResonanceRow[], header: boolean): string {
  const data = rows.map((r) => csvColumns.map(([, get]) => get(r)));
  const text = Papa.unparse({ fields: csvHeader, data }, { header, newline: '\r\n', escapeFormulae: true });
  if (text.length === 0) return '';
  return text.endsWith('\r\n') ? text : text + '\r\n';
}

/** Writes with back-pressure; false once the client has gone away. */
function write(res: Response, chunk: string): Promise<boolean> {
  if (res.destroyed || res.writableEnded) return Promise.resolve(false);
  if (res.write(chunk)) return Promise.resolve(true);
  return new Promise((resolve) => {
    const done = (ok: boolean) => {
      res.off('drain', onDrain);
      res.off('close', onClose);
      resolve(ok);
    };
    const onDrain = () => done(true);
    const onClose = () => done(false);
    res.on('drain', onDrain);
    res.on('close', onClose);
  });
}

function exportFileName(format: ExportFormat, now: Date): string {
  return `poleward-catalogue-${now.toISOString().slice(0, 10)}.${format}`;
}

/**
 * Streams the whole filtered catalogue as a download. Headers go out with the first
 * batch, so a failure before any row still answers a normal JSON error; a failure
 * after that cuts the connection, so a truncated file is never mistaken for a whole one.
 */
export async function sendCatalogueExport(
  res: Response,
  format: ExportFormat,
  source: RowSource,
  now = new Date(),
  /** The model versions the rows came from (JSON only), so an import can rebuild them. */
  models?: (modelVersionIds: string[]) => Promise<unknown[]>,
): Promise<void> {
  let started = false;
  const versionIds = new Set<string>();
  let first = true;
  const start = async (): Promise<boolean> => {
    if (started) return true;
    started = true;
    res.status(200);
    res.setHeader('Content-Type', format === 'csv' ? 'text/csv; charset=utf-8' : 'application/json; charset=utf-8');
    res.setHeader('Content-Disposition', `attachment; filename="${exportFileName(format, now)}"`);
    res.setHeader('Cache-Control', 'no-store');
    const opening =
      format === 'csv' ? csvLines([], true) : `{"exportedAt":${JSON.stringify(now.toISOString())},"units":${JSON.stringify(jsonUnits)},"items":[`;
    return write(res, opening);
  };
  try {
    await source(async (records) => {
      if (!(await start())) return false;
      for (const r of records) versionIds.add(r.modelVersionId);
      const rows = records.map(toResonanceRow);
      if (format === 'csv') return write(res, csvLines(rows, false));
      const body = rows.map((r) => JSON.stringify(r)).join(',\n');
      const chunk = (first ? '\n' : ',\n') + body;
      first = false;
      return write(res, chunk);
    });
    if (!(await start())) return;
    if (format === 'json') {
      const trailer = models ? `,"models":${JSON.stringify(await models([...versionIds]))}` : '';
      await write(res, `\n]${trailer}}\n`);
    }
    res.end();
  } catch (err) {
    if (!started) throw err;
    res.destroy(err instanceof Error ? err : new Error(String(err)));
  }
}

import type { RequestHandler } from 'express';
import multer from 'multer';
import { TRACE_MAX_BYTES } from '../../shared/engine/fit-trace.js';
import { ApiError } from '../http/error-handler.js';

/** Browsers label CSV files variously; anything else (images, PDFs, archives) is refused with 415. */
const TEXT_TYPES = /^(text\/.*|application\/(vnd\.ms-excel|csv|octet-stream|x-csv|tab-separated-values))$/i;

const upload = multer({
  storage: multer.memoryStorage(),
  limits: { fileSize: TRACE_MAX_BYTES, files: 1, fields: 30, fieldSize: 4096 },
});

/**
 * One file in the multipart field `file`, held in memory (never written to disk, so a
 * refused file leaves nothing behind): 413 over TRACE_MAX_BYTES, 415 for a type that is
 * not text, 400 when the file is missing.
 */
export function traceUpload(): RequestHandler {
  const single = upload.single('file');
  return (req, res, next) => {
    single(req, res, (err: unknown) => {
      if (err instanceof multer.MulterError) {
        if (err.code === 'LIMIT_FILE_SIZE')
          return next(new ApiError(413, 'payload_too_large', `The file is larger than the limit of ${TRACE_MAX_BYTES} bytes. Nothing was stored.`));
        return next(new ApiError(400, 'validation_failed', `The upload was refused: ${err.message}.`, [{ path: err.field ?? 'file', message: err.message }]));
      }
      if (err) return next(err);
      if (!req.file)
        return next(
          new ApiError(400, 'validation_failed', 'Attach the trace as a CSV or TSV file in the field "file".', [{ path: 'file', message: 'missing' }]),
        );
      if (!TEXT_TYPES.test(req.file.mimetype))
        return next(new ApiError(415, 'unsupported_media_type', `A ${req.file.mimetype} file is not a CSV or TSV table. Nothing was stored.`));
      next();
    });
  };
}

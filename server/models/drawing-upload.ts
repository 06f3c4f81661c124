import type { RequestHandler } from 'express';
import multer from 'multer';
import { ApiError } from '../http/error-handler.js';

/** Largest drawing file accepted (bytes). */
const MAX_DRAWING_BYTES = 8 * 1024 * 1024;

const upload = multer({
  storage: multer.memoryStorage(),
  // One file, a few small text fields: anything more is a wrong request, refused while streaming.
  limits: { fileSize: MAX_DRAWING_BYTES, files: 1, fields: 8, fieldSize: 1024, parts: 10 },
}).single('file');

/** What each multer refusal means for the person uploading, with its status. */
function uploadProblem(err: multer.MulterError): ApiError {
  switch (err.code) {
    case 'LIMIT_FILE_SIZE':
      return new ApiError(
        413,
        'payload_too_large',
        `The drawing is larger than ${MAX_DRAWING_BYTES / 1024 / 1024} MiB; save it smaller (a black-and-white PNG of the outline is enough).`,
        [{ path: 'file', message: `larger than ${MAX_DRAWING_BYTES} bytes` }],
      );
    case 'LIMIT_FILE_COUNT':
      return new ApiError(400, 'validation_failed', 'Upload one drawing at a time, in the field "file".', [{ path: 'file', message: 'more than one file' }]);
    case 'LIMIT_UNEXPECTED_FILE':
      return new ApiError(
        400,
        'validation_failed',
        `The upload has a file in the field "${err.field ?? '?'}"; send the drawing in the field "file", and only one file.`,
        [{ path: err.field ?? 'file', message: 'unexpected file field' }],
      );
    case 'LIMIT_FIELD_VALUE':
    case 'LIMIT_FIELD_KEY':
    case 'LIMIT_FIELD_COUNT':
    case 'LIMIT_PART_COUNT':
      return new ApiError(400, 'validation_failed', 'The upload has too many or too long form fields; send only "file", "spacingNm" and "widthNm".', [
        { path: err.field ?? 'body', message: 'too many or too long form fields' },
      ]);
    default:
      return new ApiError(400, 'bad_upload', `The upload could not be read: ${err.message}.`);
  }
}

/**
 * multer for the drawing upload, with its refusals turned into the API's 4xx answers
 * (413 too large, 400 wrong or extra file field, 400 a broken multipart body) instead
 * of a 500.
 */
export const drawingUpload: RequestHandler = (req, res, next) => {
  upload(req, res, (err: unknown) => {
    if (!err) return next();
    if (err instanceof multer.MulterError) return next(uploadProblem(err));
    // busboy's own errors: a truncated or malformed multipart body.
    const message = err instanceof Error ? err.message : String(err);
    next(new ApiError(400, 'bad_upload', `The upload is not a valid multipart form: ${message}.`));
  });
};

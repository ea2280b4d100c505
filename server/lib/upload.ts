/**
 * Multipart uploads (multer over busboy), one setup for every upload route: files are held in
 * memory up to the configured size, file names are decoded as UTF-8, and the form may hold only a
 * few short text fields. Every way a multipart body can be wrong (cut off, malformed, too many
 * parts, a field that is not expected, a file too large) becomes a 4xx answer in the API's error
 * shape, never a 500 and never a stack trace in the log (docs/compliance.md, "Hardened inputs").
 */
import type { RequestHandler } from 'express';
import multer from 'multer';
import { AppError } from './errors';
import { freeTextProblem } from './contract';

export interface UploadOptions {
  /** Largest file, in bytes (config.uploadMaxBytes). */
  maxBytes: number;
  /** The form field of the file(s). */
  field: string;
  /** Most files in one request (1: a single file, req.file; more: req.files). */
  maxFiles?: number;
}

/** Text fields a form may carry besides its files, and their greatest size. */
const MAX_FIELDS = 20;
const MAX_FIELD_BYTES = 16 * 1024;

/**
 * Buffers whose whole ArrayBuffer belongs to one upload (made by ContiguousStorage): the compute
 * pool may lend them to a worker by transfer (server/workers/pool.ts).
 */
const wholeUploads = new WeakSet<Buffer>();
export function ownsItsMemory(b: Buffer): boolean {
  return wholeUploads.has(b) || (b.byteOffset === 0 && b.byteLength === b.buffer.byteLength && b.byteLength > 0);
}

/**
 * Memory storage that writes each file straight into one buffer as the chunks arrive, instead of
 * keeping the chunks and joining them at the end (multer's memory storage): no 20 MB copy in one
 * go on the event loop. A single-file form gets a buffer sized from Content-Length (bounded by the
 * upload limit) after its first megabyte; otherwise the buffer doubles as needed.
 */
class ContiguousStorage implements multer.StorageEngine {
  constructor(
    private maxBytes: number,
    private singleFile: boolean,
  ) {}

  _handleFile(
    req: Express.Request,
    file: Express.Multer.File,
    cb: (error?: unknown, info?: Partial<Express.Multer.File>) => void,
  ) {
    const declared = Number((req as { headers?: Record<string, string | undefined> }).headers?.['content-length']);
    const cap = this.maxBytes + 1;
    // The size the body announces, once the client has sent the first megabyte of it (so that a
    // request announcing 20 MB and sending little costs no 20 MB up front).
    const announced = this.singleFile && Number.isFinite(declared) && declared > 0 ? Math.min(declared, cap) : 0;
    let buf = Buffer.allocUnsafeSlow(Math.min(cap, announced || 64 * 1024, 1024 * 1024));
    let n = 0;
    file.stream.on('data', (chunk: Buffer) => {
      if (n + chunk.length > buf.length) {
        const want = Math.max(n + chunk.length, announced > buf.length ? announced : buf.length * 2);
        const grown = Buffer.allocUnsafeSlow(Math.min(cap, want));
        buf.copy(grown, 0, 0, n);
        buf = grown;
      }
      n += chunk.copy(buf, n, 0, Math.min(chunk.length, buf.length - n));
    });
    file.stream.on('error', (e) => cb(e));
    file.stream.on('end', () => {
      const buffer = buf.subarray(0, n);
      wholeUploads.add(buffer);
      cb(null, { buffer, size: n });
    });
  }

  _removeFile(_req: Express.Request, file: Express.Multer.File, cb: (error: Error | null) => void) {
    (file as { buffer?: Buffer }).buffer = undefined;
    cb(null);
  }
}

export function uploadMiddleware(o: UploadOptions): RequestHandler {
  const maxFiles = o.maxFiles ?? 1;
  const m = multer({
    storage: new ContiguousStorage(o.maxBytes, maxFiles === 1),
    defParamCharset: 'utf8',
    limits: {
      fileSize: o.maxBytes,
      files: maxFiles,
      fields: MAX_FIELDS,
      fieldSize: MAX_FIELD_BYTES,
      fieldNameSize: 100,
      parts: MAX_FIELDS + maxFiles,
      headerPairs: 100,
    },
  });
  const handler = maxFiles === 1 ? m.single(o.field) : m.array(o.field, maxFiles);
  return Object.assign(handler, { maxBytes: o.maxBytes });
}

const MULTER_SENTENCES: Record<string, string> = {
  LIMIT_PART_COUNT: 'The form has too many parts.',
  LIMIT_FILE_COUNT: 'Too many files were sent in one upload.',
  LIMIT_FIELD_KEY: 'A form field name is too long.',
  LIMIT_FIELD_VALUE: 'A form field is too long.',
  LIMIT_FIELD_COUNT: 'The form has too many fields.',
  LIMIT_UNEXPECTED_FILE: 'A file was sent in a field this upload does not take.',
  MISSING_FIELD_NAME: 'A part of the form has no field name.',
  LIMIT_FIELD_NESTING: 'A form field name is nested too deeply.',
  LIMIT_FIELD_ARRAY_INDEX: 'A form field name holds too large an index.',
  INVALID_FIELD_NAME: 'A form field name is not valid.',
  STREAM_DESTROYED: 'The upload stopped before the file was complete.',
};

/** The API error for anything the multipart parser refused. */
export function uploadError(err: unknown, maxBytes: number): AppError {
  if (err instanceof AppError) return err;
  const e = err as { name?: string; code?: string; field?: string; message?: string };
  if (e?.name === 'MulterError') {
    if (e.code === 'LIMIT_FILE_SIZE')
      return new AppError(
        413,
        'FILE_TOO_LARGE',
        `The file is larger than the upload limit of ${Math.round(maxBytes / (1024 * 1024))} MB. Export only the spectrum and try again.`,
      );
    const what = MULTER_SENTENCES[e.code ?? ''] ?? 'The form could not be read.';
    return new AppError(
      400,
      'UPLOAD_REFUSED',
      `Upload refused: ${what}${e.field ? ` (field "${e.field}")` : ''} Send the file again from the upload form.`,
      { reason: e.code },
    );
  }
  const msg = String(e?.message ?? '');
  if (/Unexpected end of (form|multipart data)|aborted|Request closed|stream was destroyed/i.test(msg))
    return new AppError(
      400,
      'UPLOAD_INCOMPLETE',
      'The upload ended before the file was complete (the connection may have dropped). Nothing was stored; upload the file again.',
    );
  return new AppError(
    400,
    'UPLOAD_MALFORMED',
    'The upload is not a well-formed multipart form. Nothing was stored; upload the file again from the form.',
  );
}

/** Refuses uploaded file names that hold control or direction-control characters (they are stored and shown). */
export function fileNameProblem(files: { originalname: string }[]): AppError | null {
  for (const f of files) {
    const p = freeTextProblem(f.originalname, false);
    if (p) return new AppError(400, 'BAD_FILE_NAME', `The file name is not acceptable. ${p} Rename the file.`);
    if (f.originalname.length > 255)
      return new AppError(400, 'BAD_FILE_NAME', 'The file name is longer than 255 characters. Rename the file.');
  }
  return null;
}

/**
 * Runs an upload middleware and turns every parser error into the API's 4xx error (server/lib/http.ts
 * wraps every route's `upload` with it).
 */
export function guardedUpload(upload: RequestHandler & { maxBytes?: number }): RequestHandler {
  const maxBytes = upload.maxBytes ?? 20 * 1024 * 1024;
  return (req, res, next) => {
    upload(req, res, (err?: unknown) => {
      if (err) return next(uploadError(err, maxBytes));
      const files = req.file ? [req.file] : Array.isArray(req.files) ? req.files : [];
      const bad = fileNameProblem(files);
      if (bad) return next(bad);
      next();
    });
  };
}

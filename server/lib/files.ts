/**
 * Raw uploaded files (spectra, polystyrene checks): kept byte for byte in the append-only
 * stored_file table with their SHA-256, and sent back exactly as stored.
 */
import type { Response } from 'express';
import type { Db } from './db';
import { sha256Hex } from './canonical';

export interface UploadedFile {
  originalname: string;
  mimetype?: string;
  buffer: Buffer;
}

export interface StoredFileRow {
  id: number;
  sha256: string;
  file_name: string;
  media_type: string;
  size: number;
  data: Buffer;
}

/** Stores one uploaded file (in the caller's transaction); returns its id and SHA-256. */
export async function storeFile(
  db: Db,
  file: UploadedFile,
  userId: number,
  at: Date = new Date(),
): Promise<{ id: number; sha256: string }> {
  const sha256 = sha256Hex(file.buffer);
  const [id] = await db('stored_file').insert({
    sha256,
    file_name: file.originalname.slice(0, 255),
    media_type: (file.mimetype || 'application/octet-stream').slice(0, 100),
    size: file.buffer.length,
    data: file.buffer,
    uploaded_by: userId,
    uploaded_at: at,
  });
  return { id: id as number, sha256 };
}

/**
 * Sends a stored file as a download. X-Content-SHA256 is the SHA-256 of the bytes sent (hashed
 * here, or by the caller's integrity check), X-Recorded-SHA256 the one recorded at upload, and
 * X-Integrity says whether they agree ("intact") or not ("mismatch").
 */
export function sendStoredFile(
  res: Response,
  f: Pick<StoredFileRow, 'sha256' | 'file_name' | 'media_type' | 'data'>,
  actualSha256: string = sha256Hex(f.data),
): void {
  res.setHeader('Content-Type', f.media_type || 'application/octet-stream');
  res.setHeader(
    'Content-Disposition',
    `attachment; filename="${String(f.file_name).replace(/[^A-Za-z0-9._-]/g, '_')}"`,
  );
  res.setHeader('X-Content-SHA256', actualSha256);
  res.setHeader('X-Recorded-SHA256', f.sha256);
  res.setHeader('X-Integrity', actualSha256 === f.sha256 ? 'intact' : 'mismatch');
  res.status(200).end(f.data);
}

/**
 * Raw uploaded files (spectra, polystyrene checks): kept byte for byte in the append-only
 * stored_file table with their SHA-256, and sent back exactly as stored.
 */
import type { Response } from 'express';
import type { Db } from './db';
import { sha256Hex } from './canonical';
import type { StoredFileRow } from './db-tables';

export interface UploadedFile {
  originalname: string;
  mimetype?: string;
  buffer: Buffer;
}

/**
 * Stores one uploaded file (in the caller's transaction); returns its id and SHA-256. Pass the
 * SHA-256 when the compute pool has already taken it (server/workers/pool.ts), so that a big file
 * is not hashed on the event loop.
 *
 * The row goes in as a prepared statement (mysql2 `execute`, binary protocol) on the transaction's
 * own connection: knex would send the bytes as a hex literal inside the SQL text, and building that
 * text for a 20 MB file holds the event loop for about half a second; the binary protocol sends the
 * bytes as they are.
 */
export async function storeFile(
  db: Db,
  file: UploadedFile,
  /** null: received by the system itself (the export-folder watcher) */
  userId: number | null,
  at: Date = new Date(),
  knownSha256?: string,
): Promise<{ id: number; sha256: string }> {
  const sha256 = knownSha256 ?? sha256Hex(file.buffer);
  const values = [
    sha256,
    file.originalname.slice(0, 255),
    (file.mimetype || 'application/octet-stream').slice(0, 100),
    file.buffer.length,
    file.buffer,
    userId,
    at,
  ];
  const sql =
    'INSERT INTO stored_file (sha256, file_name, media_type, size, data, uploaded_by, uploaded_at) VALUES (?, ?, ?, ?, ?, ?, ?)';
  const id = await executeOn(db, sql, values);
  return { id, sha256 };
}

interface RawConnection {
  execute(sql: string, values: unknown[], cb: (err: Error | null, result: { insertId: number }) => void): void;
}
interface KnexClientLike {
  acquireConnection(): Promise<RawConnection>;
  releaseConnection(c: RawConnection): Promise<void>;
}

/** Runs one INSERT as a prepared statement on the connection of `db` (the transaction's, when it is one). */
async function executeOn(db: Db, sql: string, values: unknown[]): Promise<number> {
  // Inside a transaction, knex's client hands out the transaction's connection and releases nothing.
  const client = (db as unknown as { client: KnexClientLike }).client;
  const conn = await client.acquireConnection();
  try {
    return await new Promise<number>((resolve, reject) =>
      conn.execute(sql, values, (err, result) => (err ? reject(err) : resolve(Number(result.insertId)))),
    );
  } finally {
    await client.releaseConnection(conn);
  }
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

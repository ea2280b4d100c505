/**
 * Archives in open formats (issue 13 item 6; docs/operations.md, "Records retention and archives").
 *
 * - A stored spectrum as JCAMP-DX 4.24, written by Drumline (jcamp-writer.ts) from the raw file
 *   read by the engine, with the measurement's metadata; the raw file stays downloadable beside it.
 * - A lot's complete record as one zip (archiver): the raw files, their JCAMP-DX copies, every
 *   certificate PDF, the review of every test as PDF, the audit events of every record involved
 *   (lot, tests, measurements, certificates, investigations) as CSV and JSON, the lot's facts as
 *   JSON, and manifest.json with every file's SHA-256 and size. Everything is read first, then
 *   streamed; the export itself is an audit event.
 */
import crypto from 'node:crypto';
import type { Response } from 'express';
import { ZipArchive } from 'archiver';
import type { Knex } from 'knex';
import { auditNow, type Actor, type AuditRow } from '../../lib/audit';
import { must, parseJson } from '../../lib/db';
import type { IdentityTestRow, MeasurementRow, StoredFileRow } from '../../lib/db-tables';
import { notFound, unprocessable } from '../../lib/errors';
import { renderPdf, type Content, type TableCell } from '../../lib/pdf';
import { readSpectrumOff } from '../../workers/pool';
import { CSV_COLUMNS, csvLine, eventCsvLine } from '../audit';
import { UnevenAxisError, writeJcamp } from './jcamp-writer';
import type { ArchiveManifest, LotFacts } from './contract';

const sha256 = (b: Buffer | string) => crypto.createHash('sha256').update(b).digest('hex');

type FileRow = Pick<StoredFileRow, 'id' | 'sha256' | 'file_name' | 'size' | 'data' | 'uploaded_at'>;

/** A measurement with its raw file's SHA-256, name and size (the join of gather). */
type MeasurementWithFile = MeasurementRow & Pick<StoredFileRow, 'sha256' | 'file_name' | 'size'>;

/** The stored file a record names (file_id is a foreign key into the append-only stored_file). */
async function storedFile(db: Knex, id: number): Promise<FileRow> {
  return must(await db('stored_file').where({ id }).first(), `Stored file ${id}`);
}

/** Safe file name part: letters, digits, dot, dash, underscore. */
const part = (s: string) => s.replace(/[^A-Za-z0-9._-]+/g, '_').slice(0, 80);

export interface JcampContext {
  title: string;
  origin: string;
  instrument?: string | null;
  sampling?: string | null;
  labels: Record<string, string | number | null | undefined>;
}

/** The JCAMP-DX copy of a stored raw file (read by the engine in the compute pool). */
export async function jcampOfFile(f: FileRow, ctx: JcampContext): Promise<string> {
  const spectrum = await readSpectrumOff(f.data, f.file_name);
  try {
    return writeJcamp(spectrum, {
      title: ctx.title,
      origin: ctx.origin,
      owner: ctx.origin,
      measuredAt: new Date(f.uploaded_at),
      instrument: ctx.instrument,
      sampling: ctx.sampling,
      drumline: { ...ctx.labels, 'raw file name': f.file_name, 'raw file sha256': f.sha256 },
    });
  } catch (e) {
    if (e instanceof UnevenAxisError) throw unprocessable('UNEVEN_X_AXIS', e.message);
    throw e;
  }
}

async function instrumentOf(db: Knex, id: number | null): Promise<{ name: string; sampling: string | null } | null> {
  if (!id) return null;
  const i = await db('instrument').where({ id }).first();
  if (!i) return null;
  return { name: i.name, sampling: i.sampling ?? i.technique ?? null };
}

export async function measurementJcamp(
  db: Knex,
  id: number,
  siteName: string,
): Promise<{ name: string; text: string }> {
  const m = await db('measurement').where({ id }).first();
  if (!m) throw notFound('The measurement');
  const f = await storedFile(db, m.file_id);
  const c = await db('container').where({ id: m.container_id }).first();
  const inst = await instrumentOf(db, m.instrument_id);
  const text = await jcampOfFile(f, {
    title: `Container ${c?.label ?? m.container_id}, measurement ${id}`,
    origin: siteName,
    instrument: inst?.name,
    sampling: inst?.sampling,
    labels: {
      'measurement id': id,
      'container label': c?.label,
      'test id': m.test_id,
      verdict: m.verdict,
      'correlation coefficient (r)': m.match_score,
      'engine version': m.engine_version,
    },
  });
  return { name: `measurement-${id}-${part(c?.label ?? '')}.jdx`, text };
}

export async function referenceJcamp(db: Knex, id: number, siteName: string): Promise<{ name: string; text: string }> {
  const r = await db('reference_spectrum').where({ id }).first();
  if (!r) throw notFound('The reference spectrum');
  const f = await storedFile(db, r.file_id);
  const inst = await instrumentOf(db, r.instrument_id);
  const text = await jcampOfFile(f, {
    title: `Reference ${r.code}`,
    origin: siteName,
    instrument: inst?.name,
    sampling: inst?.sampling ?? r.technique,
    labels: { 'reference id': id, 'reference code': r.code, status: r.status, technique: r.technique },
  });
  return { name: `reference-${part(r.code)}.jdx`, text };
}

/** The review of one test as PDF: what the verifier saw, one row per measurement, the signatures. */
async function reviewPdf(
  db: Knex,
  lot: { lot_number: string; material: string },
  t: IdentityTestRow,
  ms: MeasurementWithFile[],
  labels: Map<number, string>,
): Promise<Buffer> {
  const sigs = await db('e_signature')
    .where({ entity_type: 'identity_test', entity_id: String(t.id) })
    .orderBy('id')
    .select('printed_name', 'meaning', 'signed_at', 'statement');
  const rows: TableCell[][] = [
    ['Measurement', 'Container', 'Verdict', 'Correlation coefficient (r)', 'Raw file SHA-256'].map((h) => ({
      text: h,
      bold: true,
    })),
    ...ms.map((m) => [
      String(m.id),
      labels.get(Number(m.container_id)) ?? String(m.container_id),
      String(m.verdict),
      m.match_score === null ? '—' : Number(m.match_score).toFixed(4),
      { text: String(m.sha256), fontSize: 6 },
    ]),
  ];
  const content: Content[] = [
    { text: `Identity test review: lot ${lot.lot_number}, attempt ${String(t.attempt)}`, fontSize: 14, bold: true },
    { text: `${lot.material}; test ${String(t.id)}, status ${String(t.status)}`, margin: [0, 4, 0, 8] },
    { table: { headerRows: 1, widths: ['auto', 'auto', 'auto', 'auto', '*'], body: rows }, fontSize: 8 },
    { text: 'Signatures', bold: true, margin: [0, 10, 0, 4] },
    ...sigs.map((s) => ({
      text: `${s.printed_name}: ${s.meaning}, ${new Date(s.signed_at).toISOString()}${s.statement ? ` (${s.statement})` : ''}`,
      fontSize: 9,
    })),
    {
      text: 'Exported from Drumline as part of the lot archive. This review supports, and does not replace, the lab’s validated procedure and the responsible person’s judgement under local GMP rules.',
      fontSize: 7,
      margin: [0, 12, 0, 0],
    },
  ];
  return renderPdf({ content });
}

/** Everything about a lot, read once; the archive is then built from it alone. */
async function gather(db: Knex, lotId: number, siteName: string) {
  const lot = await db('lot').where({ id: lotId }).first();
  if (!lot) throw notFound('The lot');
  // material_id is a foreign key
  const material = must(await db('material').where({ id: lot.material_id }).first(), `Material ${lot.material_id}`);
  const containers = await db('container').where({ lot_id: lotId }).orderBy('seq');
  const labels = new Map<number, string>(containers.map((c) => [Number(c.id), String(c.label)]));
  const tests = await db('identity_test').where({ lot_id: lotId }).orderBy('id');
  const testIds = tests.map((t) => Number(t.id));
  const measurements = testIds.length
    ? await db('measurement as m')
        .join('stored_file as f', 'f.id', 'm.file_id')
        .whereIn('m.test_id', testIds)
        .orderBy('m.id')
        .select<MeasurementWithFile[]>('m.*', 'f.sha256', 'f.file_name', 'f.size')
    : [];
  const certificates = await db('certificate').where({ lot_id: lotId }).orderBy('id');
  const investigations = await db('investigation').where({ lot_id: lotId }).orderBy('id');
  const signatures = testIds.length
    ? await db('e_signature')
        .where({ entity_type: 'identity_test' })
        .whereIn('entity_id', testIds.map(String))
        .orderBy('id')
        .select('id', 'entity_id', 'printed_name', 'meaning', 'signed_at', 'content_hash')
    : [];
  const scope: [string, string[]][] = [
    ['lot', [String(lotId)]],
    ['identity_test', testIds.map(String)],
    ['measurement', measurements.map((m) => String(m.id))],
    ['certificate', certificates.map((c) => String(c.id))],
    ['investigation', investigations.map((i) => String(i.id))],
  ];
  const events: AuditRow[] = await db('audit_event')
    .where((q) => {
      for (const [type, ids] of scope)
        if (ids.length) q.orWhere((w) => w.where('entity_type', type).whereIn('entity_id', ids));
    })
    .orderBy('id');
  const facts: LotFacts = {
    lotNumber: lot.lot_number,
    material: { code: material.code, name: material.name },
    supplier: lot.supplier,
    supplierLot: lot.supplier_lot,
    receivedDate: String(
      lot.received_date instanceof Date ? lot.received_date.toISOString().slice(0, 10) : lot.received_date,
    ),
    containerCount: Number(lot.container_count),
    identityStatus: lot.identity_status,
    status: lot.status,
    containers: containers.map((c) => ({ id: Number(c.id), seq: Number(c.seq), label: c.label })),
    tests: tests.map((t) => ({
      id: Number(t.id),
      attempt: Number(t.attempt),
      status: t.status,
      signatures: signatures
        .filter((s) => s.entity_id === String(t.id))
        .map((s) => ({
          meaning: s.meaning,
          printedName: s.printed_name,
          signedAt: new Date(s.signed_at).toISOString(),
        })),
    })),
    measurements: measurements.map((m) => ({
      id: Number(m.id),
      testId: Number(m.test_id),
      container: labels.get(Number(m.container_id)) ?? String(m.container_id),
      verdict: m.verdict,
      matchScore: m.match_score === null ? null : Number(m.match_score),
      rawFile: `raw/${m.id}-${part(m.file_name)}`,
      rawSha256: m.sha256,
    })),
    certificates: certificates.map((c) => ({
      number: c.number,
      file: `certificates/${part(c.number)}.pdf`,
      sha256: c.sha256,
      issuedAt: new Date(c.issued_at).toISOString(),
      supersedesId: c.supersedes_id === null ? null : Number(c.supersedes_id),
      current: Number(lot.certificate_id) === Number(c.id),
    })),
    investigations: investigations.map((i) => ({ id: Number(i.id), number: i.number, status: i.status })),
    auditEvents: events.length,
  };
  // Files: raw bytes, JCAMP-DX copies, certificates, reviews, audit CSV and JSON, facts.
  const files: { name: string; data: Buffer }[] = [];
  for (const m of measurements) {
    const f = await storedFile(db, m.file_id);
    files.push({ name: `raw/${m.id}-${part(m.file_name)}`, data: f.data });
    try {
      const inst = await instrumentOf(db, m.instrument_id);
      const text = await jcampOfFile(f, {
        title: `Container ${labels.get(Number(m.container_id))}, measurement ${m.id}`,
        origin: siteName,
        instrument: inst?.name,
        sampling: inst?.sampling,
        labels: {
          'measurement id': m.id,
          'lot number': lot.lot_number,
          verdict: m.verdict,
          'correlation coefficient (r)': m.match_score,
        },
      });
      files.push({
        name: `jcamp/${m.id}-${part(labels.get(Number(m.container_id)) ?? '')}.jdx`,
        data: Buffer.from(text),
      });
    } catch (e) {
      files.push({
        name: `jcamp/${m.id}-NOT-WRITTEN.txt`,
        data: Buffer.from(`No JCAMP-DX copy: ${(e as Error).message}\nThe raw file is the record.\n`),
      });
    }
  }
  for (const c of certificates) files.push({ name: `certificates/${part(c.number)}.pdf`, data: c.pdf });
  for (const t of tests) {
    const ms = measurements.filter((m) => Number(m.test_id) === Number(t.id));
    files.push({
      name: `review/test-${t.id}-attempt-${t.attempt}.pdf`,
      data: await reviewPdf(
        db,
        { lot_number: lot.lot_number, material: `${material.code} ${material.name}` },
        t,
        ms,
        labels,
      ),
    });
  }
  files.push({
    name: 'audit/events.csv',
    data: Buffer.from(csvLine([...CSV_COLUMNS]) + events.map((e) => eventCsvLine(e)).join('')),
  });
  files.push({
    name: 'audit/events.json',
    data: Buffer.from(
      JSON.stringify(
        events.map((e) => ({
          ...e,
          id: Number(e.id),
          occurred_at: new Date(e.occurred_at).toISOString(),
          before: parseJson(e.before_json, null),
          after: parseJson(e.after_json, null),
        })),
        null,
        1,
      ),
    ),
  });
  files.push({ name: 'facts.json', data: Buffer.from(JSON.stringify(facts, null, 2)) });
  return { lot, facts, files };
}

/** Streams the zip of a lot's complete record; the export is audited first. */
export async function sendLotArchive(
  db: Knex,
  res: Response,
  lotId: number,
  by: { actor: Actor; ip: string | null; siteName: string },
): Promise<void> {
  const { lot, facts, files } = await gather(db, lotId, by.siteName);
  const manifest: ArchiveManifest = {
    format: 'drumline-lot-archive/1',
    site: by.siteName,
    lotNumber: lot.lot_number,
    exportedAt: new Date().toISOString(),
    exportedBy: by.actor.name,
    files: files.map((f) => ({ name: f.name, bytes: f.data.length, sha256: sha256(f.data) })),
    note: 'Check every file against its SHA-256 (sha256sum). facts.json states the lot; audit/events.json holds each event with its hash and the previous event hash.',
  };
  const manifestText = JSON.stringify(manifest, null, 2);
  await auditNow(db, {
    actor: by.actor,
    action: 'lot.archive-exported',
    entityType: 'lot',
    entityId: lotId,
    after: { files: files.length, manifestSha256: sha256(manifestText), auditEvents: facts.auditEvents },
    ip: by.ip,
  });
  const zip = new ZipArchive({ zlib: { level: 6 } });
  res.setHeader('Content-Type', 'application/zip');
  res.setHeader('Content-Disposition', `attachment; filename="lot-${part(lot.lot_number)}-archive.zip"`);
  res.setHeader('X-Manifest-SHA256', sha256(manifestText));
  const done = new Promise<void>((resolve, reject) => {
    res.on('finish', resolve);
    zip.on('error', reject);
  });
  zip.pipe(res);
  const root = `lot-${part(lot.lot_number)}/`;
  for (const f of files) zip.append(f.data, { name: root + f.name });
  zip.append(manifestText, { name: root + 'manifest.json' });
  await zip.finalize();
  await done;
}

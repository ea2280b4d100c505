/**
 * Check specifications of the instruments (versioned, QA-approved limits).
 *
 * - A new mid-IR instrument starts with polystyrene specification version 1 = the Ph. Eur. 2.2.24
 *   positions with the FT tolerances (every band +-1.0 cm-1, Table 2.2.24.-1). It is the published
 *   standard adopted as is, so it is approved on creation without a separate signature (the
 *   creation is audited). An NIR instrument gets no default: QA approves a site specification.
 * - Check types beyond polystyrene (ATR blank, noise figure, NIR wavelength accuracy and
 *   photometric noise) take site limits only (no pharmacopoeial table is built in), approved the
 *   same way; approving limits for a type makes that check required on the instrument
 *   (repo.requiredCheckTypes). A type must fit the instrument (contract checkTypeFits).
 * - Any other specification is created and approved in one step by a qa_manager with an
 *   e-signature (meaning "approved") whose signed statement is the written justification (at
 *   least 20 characters). The previous approved version becomes superseded.
 */
import type { Knex } from 'knex';
import { appendAudit, type Actor } from '../../lib/audit';
import type { SignatureInput } from '../../lib/contract';
import { checkSignatureCredentials, recordSignature } from '../../lib/esign';
import { notFound, unprocessable } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import { PH_EUR_POLYSTYRENE_FT, PH_EUR_POLYSTYRENE_MONOCHROMATOR, type PolystyreneSpec } from '../../spectra';
import * as repo from './repo';
import {
  CHECK_TYPE_LABELS,
  checkTypeFits,
  LIMITS_SCHEMAS,
  type CheckBand,
  type CheckLimits,
  type CheckType,
} from './contract';
import { transactionWithRetry } from '../../lib/retry';

export const DEFAULT_SPEC_JUSTIFICATION =
  'Default: Ph. Eur. 2.2.24, Table 2.2.24.-1, polystyrene film positions with the FT-instrument tolerances (all bands +-1.0 cm-1).';

export function pharmacopoeiaBands(kind: string): CheckBand[] {
  const spec = kind === 'pharmacopoeia-monochromator' ? PH_EUR_POLYSTYRENE_MONOCHROMATOR : PH_EUR_POLYSTYRENE_FT;
  return spec.bands.map((b) => ({ nominal: b.nominal, tolerance: b.tolerance }));
}

/** The engine specification for a stored specification row. */
export function engineSpecOf(spec: repo.SpecRow): PolystyreneSpec {
  const bands = repo.toSpec(spec).bands;
  const name =
    spec.kind === 'site'
      ? `Site specification v${spec.version} (QA-approved)`
      : spec.kind === 'pharmacopoeia-monochromator'
        ? PH_EUR_POLYSTYRENE_MONOCHROMATOR.name
        : PH_EUR_POLYSTYRENE_FT.name;
  return { name, bands, instrument: spec.kind === 'pharmacopoeia-monochromator' ? 'monochromator' : 'ft' };
}

/** The content a specification approval signs (polystyrene: as before the other check types existed). */
export function specSignedContent(
  specId: number,
  instrumentId: number,
  version: number,
  kind: string,
  bands: CheckBand[],
  checkType: CheckType = 'polystyrene',
  limits: CheckLimits | null = null,
) {
  if (checkType === 'polystyrene') return { specId, instrumentId, version, kind, bands };
  return { specId, instrumentId, version, kind, checkType, limits };
}

export async function approveSpec(
  db: Knex,
  user: AuthUser,
  instrumentId: number,
  input: {
    checkType?: CheckType;
    kind: string;
    bands?: CheckBand[];
    limits?: unknown;
    justification: string;
    signature: SignatureInput;
  },
  ip: string | null,
): Promise<void> {
  const inst = await repo.findInstrument(db, instrumentId);
  if (!inst) throw notFound('The instrument');
  const checkType: CheckType = input.checkType ?? 'polystyrene';
  if (!checkTypeFits(checkType, inst))
    throw unprocessable(
      'CHECK_TYPE_UNFIT',
      `${CHECK_TYPE_LABELS[checkType]} does not apply to ${inst.name} (${inst.technique}, ${inst.sampling}).`,
    );
  const polystyrene = checkType === 'polystyrene';
  const bands = !polystyrene
    ? []
    : input.kind === 'site'
      ? [...input.bands!].sort((a, b) => b.nominal - a.nominal)
      : pharmacopoeiaBands(input.kind);
  // The contract validated the limits against their type's schema; parse again for the defaults.
  const limits: CheckLimits | null = polystyrene
    ? null
    : (LIMITS_SCHEMAS[checkType as Exclude<CheckType, 'polystyrene'>].parse(input.limits) as CheckLimits);
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'approved',
    entityType: 'instrument',
    entityId: instrumentId,
    ip,
  });
  const actor: Actor = { id: user.id, name: user.fullName };
  await transactionWithRetry(db, async (trx) => {
    await trx('instrument').where({ id: instrumentId }).forUpdate().first();
    const latest = await trx('instrument_check_spec')
      .where({ instrument_id: instrumentId })
      .max({ v: 'version' })
      .first();
    const version = Number(latest?.v ?? 0) + 1;
    const previous = await repo.approvedSpecOf(trx, instrumentId, checkType);
    const now = new Date();
    const [specId] = await trx('instrument_check_spec').insert({
      instrument_id: instrumentId,
      check_type: checkType,
      version,
      kind: input.kind,
      bands: JSON.stringify(bands),
      limits: limits ? JSON.stringify(limits) : null,
      justification: input.justification,
      status: 'draft',
      created_by: user.id,
      created_at: now,
      approved_signature_id: null,
    });
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'approved',
      entityType: 'instrument_check_spec',
      entityId: specId,
      content: specSignedContent(specId, instrumentId, version, input.kind, bands, checkType, limits),
      statement: input.justification,
      ip,
    });
    await trx('instrument_check_spec')
      .where({ id: specId })
      .update({ status: 'approved', approved_signature_id: sig.id });
    if (previous) {
      await trx('instrument_check_spec').where({ id: previous.id }).update({ status: 'superseded' });
      await appendAudit(trx, {
        actor,
        action: 'instrument.spec-superseded',
        entityType: 'instrument_check_spec',
        entityId: previous.id,
        before: { status: 'approved' },
        after: { status: 'superseded', supersededBy: specId },
        ip,
      });
    }
    await appendAudit(trx, {
      actor,
      action: 'instrument.spec-approved',
      entityType: 'instrument_check_spec',
      entityId: specId,
      before: previous ? repo.toSpec(previous) : null,
      after: {
        instrumentId,
        checkType,
        version,
        kind: input.kind,
        bands,
        limits,
        status: 'approved',
        signatureId: sig.id,
      },
      reason: input.justification,
      ip,
    });
  });
}

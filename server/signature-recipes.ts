/**
 * How each kind of e-signature's content is rebuilt from the records as they are stored now
 * (docs/compliance.md, "Integrity sweep"): the same function the signing code used, fed from the
 * database instead of the request. The sweep hashes the rebuilt content and compares it with the
 * signature's content_hash; a difference means the signed record changed after signing. A kind of
 * signature without a recipe here is counted as "not checked" in the run (never silently passed).
 * The composition root (server/app.ts) hands this table to the integrity module
 * (`useRecipes`), so integrity imports none of the modules whose records it checks
 * (docs/architecture.md, "Direction of imports").
 */
import type { Knex } from 'knex';
import { isOneOf, must, parseJson } from './lib/db';
import { alertSignedContent, type Recipe } from './modules/integrity';
import { reviewSignedContent } from './modules/audit-review';
import { PHASE1_ITEMS, PHASE1_LABELS, type TrendSubject } from './modules/investigations/contract';
import { openingContent } from './modules/investigations';
import {
  CHECK_TYPES,
  QUALIFICATION_STAGES,
  QUALIFICATION_STATUSES,
  type AnyCheckResult,
  type CheckBand,
  type CheckLimits,
} from './modules/instruments/contract';
import { METHOD_STATUSES, type StoredBand } from './modules/library/contract';
import {
  assessmentSignedContent,
  backInServiceSignedContent,
  checkSignedContent,
  qualificationSignedContent,
  specSignedContent,
} from './modules/instruments';
import { referenceSignedContent } from './modules/library';
import { methodSignedContent } from './modules/library';
import { irSuitabilitySignedContent, overrideSignedContent } from './modules/library';
import { loadContext, signedContent } from './modules/testing';
import { releaseSignedContent } from './modules/provenance';
import { retestSignedContent } from './modules/disposition';
import { roleRequestSignedContent } from './modules/users';

// a record's file_id is a foreign key into the append-only stored_file
const fileSha = async (db: Knex, fileId: number): Promise<string> => {
  const f = await db('stored_file').where({ id: fileId }).first('sha256');
  return must(f, `Stored file ${fileId}`).sha256;
};

/**
 * The content a recipe rebuilds when a stored value is one the signing code never writes (a value
 * outside its column's set, a missing value the database's guards require): the record was changed
 * behind the application, and this content matches no signature, so the sweep reports it.
 */
const changedBehindApplication = (column: string, value: unknown) => ({ changedBehindApplication: column, value });

const OVERRIDE_ENTITIES = ['identity_method', 'reference_spectrum'] as const;

const investigationRecipe: Recipe = async (db, s) => {
  const inv = await db('investigation')
    .where({ id: Number(s.entity_id) })
    .first();
  if (!inv) return undefined;
  const failing = parseJson<{ containerId: number; label: string }[]>(inv.failing, []);
  if (s.meaning === 'investigation-opened') {
    const subject = parseJson<TrendSubject | null>(inv.subject, null);
    return subject ? openingContent(inv.number, subject) : null;
  }
  if (s.meaning === 'trend-concluded')
    return { investigation: inv.number, decision: 'concluded', conclusion: inv.justification };
  if (s.meaning === 'phase-1-recorded') {
    const p = parseJson<{ items: unknown; summary: string } | null>(inv.phase1, null);
    return { investigation: inv.number, items: p?.items, summary: p?.summary };
  }
  if (s.meaning === 'failure-confirmed')
    return {
      investigation: inv.number,
      decision: 'confirmed',
      justification: inv.justification,
      failing: failing.map((f) => f.label),
    };
  // result-invalidated: the stored justification is "<cause title>: <justification>"
  const stored = String(inv.justification ?? '');
  const cause = PHASE1_ITEMS.find((k) => stored.startsWith(`${PHASE1_LABELS[k].title}: `));
  const retest = parseJson<number[]>(inv.retest_containers, []);
  return {
    investigation: inv.number,
    decision: 'invalidated',
    cause,
    justification: cause ? stored.slice(PHASE1_LABELS[cause].title.length + 2) : stored,
    retestContainers: failing.filter((f) => retest.includes(f.containerId)).map((f) => f.label),
  };
};

const testRecipe: Recipe = async (db, s) => {
  const exists = await db('identity_test')
    .where({ id: Number(s.entity_id) })
    .first('id');
  if (!exists) return undefined;
  return signedContent(await loadContext(db, Number(s.entity_id)));
};

const referenceApproval: Recipe = async (db, s) => {
  const r = await db('reference_spectrum')
    .where({ id: Number(s.entity_id) })
    .first();
  if (!r) return undefined;
  // the database's guard requires the method with the approval (db/migrations/050_record_guards.ts)
  if (r.approved_method_id === null) return changedBehindApplication('approved_method_id', null);
  return referenceSignedContent(
    r.id,
    await fileSha(db, r.file_id),
    parseJson<StoredBand[]>(r.bands, []),
    r.approved_method_id,
  );
};

const overrideRequest: Recipe = async (db, s) => {
  const o = await db('gate_override').where({ signature_id: s.id }).first();
  if (!o) return undefined;
  if (!isOneOf(OVERRIDE_ENTITIES, o.entity_type)) return changedBehindApplication('entity_type', o.entity_type);
  return overrideSignedContent({
    entityType: o.entity_type,
    entityId: o.entity_id,
    justification: o.justification,
    changeControl: o.change_control,
    gateSha256: o.gate_sha256,
  });
};

export const RECIPES: Record<string, Recipe> = {
  'audit_review/audit-trail-reviewed': async (db, s) => {
    const r = await db('audit_review')
      .where({ id: Number(s.entity_id) })
      .first();
    return r ? reviewSignedContent(r) : undefined;
  },
  'identity_method/approved': async (db, s) => {
    const m = await db('identity_method')
      .where({ id: Number(s.entity_id) })
      .first();
    if (!m) return undefined;
    const status = m.status;
    if (!isOneOf(METHOD_STATUSES, status)) return changedBehindApplication('status', status);
    const a = await db('method_approval').where({ method_id: m.id, signature_id: s.id }).first();
    return methodSignedContent(
      { ...m, status },
      a
        ? {
            validationSha256: a.validation_sha256,
            firstReferenceIds: JSON.parse(a.first_reference_ids) as number[],
            gateOverrideId: a.gate_override_id ?? null,
          }
        : null,
    );
  },
  'identity_method/gate-override-requested': overrideRequest,
  'reference_spectrum/gate-override-requested': overrideRequest,
  'material/ir-suitability-decided': async (db, s) => {
    const d = await db('material_ir_suitability').where({ signature_id: s.id }).first();
    return d ? irSuitabilitySignedContent(d.material_id, !!d.suitable, d.replacement_test, d.reason) : undefined;
  },
  'reference_spectrum/approved': referenceApproval,
  'reference_spectrum/approved-with-justification': referenceApproval,
  'reference_spectrum/retired': async (db, s) => {
    const r = await db('reference_spectrum')
      .where({ id: Number(s.entity_id) })
      .first();
    if (!r) return undefined;
    return {
      referenceId: r.id,
      fileSha256: await fileSha(db, r.file_id),
      previousStatus: r.approved_signature_id ? 'approved' : 'draft',
      reason: r.retire_reason,
    };
  },
  'instrument_check_spec/approved': async (db, s) => {
    const sp = await db('instrument_check_spec')
      .where({ id: Number(s.entity_id) })
      .first();
    if (!sp) return undefined;
    if (!isOneOf(CHECK_TYPES, sp.check_type)) return changedBehindApplication('check_type', sp.check_type);
    return specSignedContent(
      sp.id,
      sp.instrument_id,
      sp.version,
      sp.kind,
      parseJson<CheckBand[]>(sp.bands, []),
      sp.check_type,
      parseJson<CheckLimits | null>(sp.limits, null),
    );
  },
  'instrument_check/instrument-check': async (db, s) => {
    const c = await db('instrument_check')
      .where({ id: Number(s.entity_id) })
      .first();
    if (!c) return undefined;
    if (!isOneOf(CHECK_TYPES, c.check_type)) return changedBehindApplication('check_type', c.check_type);
    return checkSignedContent({
      id: c.id,
      instrumentId: c.instrument_id,
      specId: c.spec_id,
      checkType: c.check_type,
      fileSha256: await fileSha(db, c.file_id),
      result: parseJson<AnyCheckResult | null>(c.result, null),
    });
  },
  'instrument/qualification-approved': async (db, s) => {
    const q = await db('instrument_qualification').where({ signature_id: s.id }).first();
    if (!q) return undefined;
    if (!isOneOf(QUALIFICATION_STAGES, q.stage)) return changedBehindApplication('stage', q.stage);
    if (!isOneOf(QUALIFICATION_STATUSES, q.status)) return changedBehindApplication('status', q.status);
    const day = (d: Date) => new Date(d).toISOString().slice(0, 10);
    return qualificationSignedContent(q.instrument_id, {
      stage: q.stage,
      documentRef: q.document_ref,
      executedFrom: day(q.executed_from),
      executedTo: day(q.executed_to),
      status: q.status,
      nextDue: q.next_due ? day(q.next_due) : null,
      summary: q.summary,
    });
  },
  'instrument/back-in-service': async (db, s) => {
    const e = await db('instrument_service_event').where({ signature_id: s.id }).first();
    return e ? backInServiceSignedContent(e.instrument_id, e.reason) : undefined;
  },
  'check_impact_assessment/impact-assessed': async (db, s) => {
    const a = await db('check_impact_assessment')
      .where({ id: Number(s.entity_id) })
      .first();
    if (!a || !a.decision) return undefined;
    // the database's guard requires the rationale with the decision (db/migrations/161_check_lookback.ts)
    if (a.rationale === null) return changedBehindApplication('rationale', null);
    const ms = await db('check_impact_measurement')
      .where({ assessment_id: a.id })
      .orderBy('measured_at')
      .orderBy('measurement_id')
      .select('measurement_id');
    return assessmentSignedContent({
      id: a.id,
      instrumentCheckId: a.instrument_check_id,
      measurementIds: ms.map((m) => m.measurement_id),
      decision: a.decision,
      retestContainerIds: parseJson<number[]>(a.retest_containers, []),
      rationale: a.rationale,
    });
  },
  'identity_test/performed': testRecipe,
  'identity_test/verified': testRecipe,
  'identity_test/returned': testRecipe,
  'investigation/phase-1-recorded': investigationRecipe,
  'investigation/result-invalidated': investigationRecipe,
  'investigation/failure-confirmed': investigationRecipe,
  'investigation/investigation-opened': investigationRecipe,
  'investigation/trend-concluded': investigationRecipe,
  'certificate/issued': async (db, s) => {
    const c = await db('certificate')
      .where({ number: s.entity_id })
      .first('number', 'sha256', 'lot_id', 'supersedes_id');
    if (!c) return undefined;
    const lot = await db('lot').where({ id: c.lot_id }).first('lot_number');
    const prev = c.supersedes_id ? await db('certificate').where({ id: c.supersedes_id }).first('number') : null;
    return { number: c.number, sha256: c.sha256, lotNumber: lot?.lot_number, supersedes: prev?.number ?? null };
  },
  'role_request/role-change-confirmed': async (db, s) => {
    const r = await db('role_request')
      .where({ id: Number(s.entity_id) })
      .first();
    return r ? roleRequestSignedContent(r) : undefined;
  },
  'container_block/block-released': async (db, s) => {
    const r = await db('container_block')
      .where({ id: Number(s.entity_id) })
      .first();
    if (!r) return undefined;
    // container_id is a foreign key
    const container = await db('container').where({ id: r.container_id }).first('label');
    const c = must(container, `Container ${r.container_id}`);
    const blocked = await db('container_block')
      .where({ container_id: r.container_id, event: 'blocked' })
      .where('id', '<', r.id)
      .orderBy('id', 'desc')
      .first('id');
    // a release is written only for a blocked container, always with its reason
    if (!blocked) return changedBehindApplication('blocked', null);
    if (r.reason === null) return changedBehindApplication('reason', null);
    return releaseSignedContent({
      label: c.label,
      blockId: blocked.id,
      invalidCount: r.invalid_count,
      reason: r.reason,
    });
  },
  'lot/retest-started': async (db, s) => {
    const r = await db('lot_retest as r')
      .join('lot as l', 'l.id', 'r.lot_id')
      .where('r.signature_id', s.id)
      .first('r.*', 'l.lot_number');
    return r
      ? retestSignedContent({
          lotNumber: r.lot_number,
          reopenedDispositionId: r.reopened_disposition_id,
          retestDateDue: r.retest_date_due ? new Date(r.retest_date_due).toISOString().slice(0, 10) : null,
          reason: r.reason,
        })
      : undefined;
  },
  'integrity_alert/integrity-reviewed': async (db, s) => {
    const a = await db('integrity_alert')
      .where({ id: Number(s.entity_id) })
      .first();
    const so = await db('integrity_signoff')
      .where({ alert_id: Number(s.entity_id) })
      .first();
    if (!a || !so) return undefined;
    return alertSignedContent(a, so.comment);
  },
};

/**
 * HTTP edge of the reference library. Every signed-in role reads; only qa_manager writes
 * (server-enforced here through defineRoute; the uploader-is-not-approver rule in the service).
 */
import { Router } from 'express';
import type { AppConfig } from '../../lib/config';
import { getDb } from '../../lib/db';
import { sendCheckedFile } from '../integrity';
import { uploadMiddleware } from '../../lib/upload';
import { defineRoute, idParams } from '../../lib/http';
import * as refs from './references';
import {
  approveMethodSchema,
  approveReferenceSchema,
  bandsUpdateSchema,
  gateOverrideRequestSchema,
  irSuitabilitySchema,
  materialCreateSchema,
  materialUpdateSchema,
  methodCreateSchema,
  methodUpdateSchema,
  referenceUploadFieldsSchema,
  referenceStatusQuerySchema,
  retireReferenceSchema,
  specificityMatrixQuerySchema,
} from './contract';
import * as service from './service';
import { specificityMatrixFor } from './specificity';
import { decideIrSuitability } from './method-control';

const QA = { roles: ['qa_manager'] as const };
/** The GMP readers (docs/access.md): the library is the lab's; the administrator manages accounts only. */
const READERS = { roles: ['operator', 'verifier', 'qa_manager', 'auditor'] as const };
/** A reference's raw file: those who review or own references (docs/access.md). */
const REFERENCE_FILE = { roles: ['verifier', 'qa_manager', 'auditor'] as const };
/** Most files per upload request. */
export const MAX_FILES_PER_UPLOAD = 20;

export function libraryRoutes(config: AppConfig): Router {
  const r = Router();
  const upload = uploadMiddleware({ maxBytes: config.uploadMaxBytes, field: 'files', maxFiles: MAX_FILES_PER_UPLOAD });

  // ---- materials
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/materials',
      summary: 'Materials (grades) with method and reference status',
      tag: 'library',
      access: READERS,
    },
    () => service.listMaterials(getDb()),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/materials/:id',
      summary: 'One material with its identity method versions',
      tag: 'library',
      access: READERS,
      params: idParams,
    },
    ({ params }) => service.getMaterial(getDb(), params.id),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/materials',
      summary: 'Create a material; identity method version 1 starts as a draft from the engine default',
      tag: 'library',
      access: QA,
      body: materialCreateSchema,
      status: 201,
    },
    ({ body, actor, ip }) => service.createMaterial(getDb(), actor, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'patch',
      path: '/api/materials/:id',
      summary: 'Change a material (audited with a reason)',
      tag: 'library',
      access: QA,
      params: idParams,
      body: materialUpdateSchema,
    },
    ({ params, body, actor, ip }) => service.updateMaterial(getDb(), actor, params.id, body, ip),
  );

  // ---- identity methods
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/materials/:id/methods',
      summary: 'New draft identity method version (copy of the latest unless params are given)',
      tag: 'library',
      access: QA,
      params: idParams,
      body: methodCreateSchema,
      status: 201,
    },
    ({ params, body, actor, ip }) => service.createMethodVersion(getDb(), actor, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/methods/:id',
      summary: 'One identity method version with its signatures',
      tag: 'library',
      access: READERS,
      params: idParams,
    },
    ({ params }) => service.getMethod(getDb(), params.id),
  );
  defineRoute(
    r,
    {
      method: 'patch',
      path: '/api/methods/:id',
      summary: 'Edit a draft method version',
      description:
        'An approved version is immutable: the answer is 409 METHOD_IMMUTABLE and a new draft version carrying the requested changes is created (details.newDraftId); when a draft exists already, details.draftId names it and nothing is created.',
      tag: 'library',
      access: QA,
      params: idParams,
      body: methodUpdateSchema,
    },
    ({ params, body, actor, ip }) => service.updateMethod(getDb(), actor, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/methods/:id/new-version',
      summary: 'New draft version from this version',
      tag: 'library',
      access: QA,
      params: idParams,
      body: methodCreateSchema,
      status: 201,
    },
    ({ params, body, actor, ip }) => service.newVersionFrom(getDb(), actor, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/methods/:id/approve',
      summary: 'Approve a draft method version (e-signature)',
      tag: 'library',
      access: QA,
      params: idParams,
      body: approveMethodSchema,
    },
    ({ params, body, user, ip }) => service.approveMethod(getDb(), user, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/methods/:id/gate',
      summary: 'Specificity gate of a draft method version, computed now (no signature)',
      tag: 'library',
      access: READERS,
      params: idParams,
    },
    ({ params }) => service.previewMethodGate(getDb(), null, params.id),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/methods/:id/gate-override',
      summary: 'Request an override of the specificity gate for a method version (first of two QA signatures)',
      tag: 'library',
      access: QA,
      params: idParams,
      body: gateOverrideRequestSchema,
      status: 201,
    },
    ({ params, body, user, ip }) => service.requestMethodOverride(getDb(), user, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/methods/:id/validation-record',
      summary: 'The validation record (PDF) signed with the approval of a method version',
      tag: 'library',
      access: READERS,
      params: idParams,
      produces: 'application/pdf',
    },
    async ({ params, res, user, ip }) => {
      const f = await service.validationRecordFile(getDb(), params.id);
      await sendCheckedFile(getDb(), res, f, { foundIn: 'download', user, ip });
    },
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/materials/:id/ir-suitability',
      summary: 'Decide whether identity by IR suits a material (e-signature; the test that replaces it)',
      tag: 'library',
      access: QA,
      params: idParams,
      body: irSuitabilitySchema,
      status: 201,
    },
    ({ params, body, user, ip }) => decideIrSuitability(getDb(), user, params.id, body, ip),
  );

  // ---- reference spectra
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/materials/:id/references',
      summary: 'Reference spectra of a material',
      tag: 'library',
      access: READERS,
      params: idParams,
    },
    ({ params }) => refs.listReferences(getDb(), params.id),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/materials/:id/references',
      summary: 'Upload reference spectra (drafts), several files at once',
      description:
        'All or nothing: each file is read, quality-checked and prepared before anything is stored; the first refusal answers 422 with the file name and the reason, and nothing of the batch is stored. Files above the upload limit give 413.',
      tag: 'library',
      access: QA,
      params: idParams,
      upload,
      uploadFields: {
        files: 'spectrum files (JCAMP-DX or delimited text), one or more',
        supplier: 'supplier',
        supplierLot: 'supplier lot',
        measuredHow: 'how it was measured',
        instrumentId: 'instrument id (optional)',
      },
      body: referenceUploadFieldsSchema,
      status: 201,
    },
    ({ req, params, body, user, ip }) =>
      refs.uploadReferences(getDb(), user, params.id, (req.files as Express.Multer.File[]) ?? [], body, ip),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/references',
      summary: 'References of all materials by status (drafts await approval)',
      tag: 'library',
      access: READERS,
      query: referenceStatusQuerySchema,
    },
    ({ query }) => refs.referencesByStatus(getDb(), query.status),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/references/:id',
      summary: 'One reference spectrum with bands and signatures',
      tag: 'library',
      access: READERS,
      params: idParams,
    },
    ({ params, user }) => refs.getReference(getDb(), params.id, user),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/references/:id/overlay',
      summary: 'Absorbance traces of this reference and the other references of its grade',
      tag: 'library',
      access: READERS,
      params: idParams,
    },
    ({ params }) => refs.referenceOverlay(getDb(), params.id),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/references/:id/file',
      summary: 'The raw uploaded file, byte for byte',
      tag: 'library',
      access: REFERENCE_FILE,
      params: idParams,
      produces: 'application/octet-stream',
    },
    async ({ params, res, user, ip }) => {
      const f = await refs.referenceFile(getDb(), params.id);
      await sendCheckedFile(getDb(), res, f, { foundIn: 'download', user, ip });
    },
  );
  defineRoute(
    r,
    {
      method: 'put',
      path: '/api/references/:id/bands',
      summary: 'Replace the band list of a draft reference (audited with a reason)',
      tag: 'library',
      access: QA,
      params: idParams,
      body: bandsUpdateSchema,
    },
    ({ params, body, actor, ip }) => refs.updateBands(getDb(), actor, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/references/:id/specificity',
      summary: 'Specificity gate of a reference, computed now (no signature)',
      tag: 'library',
      access: READERS,
      params: idParams,
    },
    ({ params }) => refs.previewGate(getDb(), params.id),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/references/:id/approve',
      summary: 'Approve a draft reference (e-signature; specificity gate; never by its uploader)',
      description:
        '409 SPECIFICITY_GATE with the gate report in details when a reference of another material would pass, comes within the margin of a limit, or could not be compared; a second QA manager approves anyway only by confirming an override another QA manager requested (overrideId; signature meaning approved-with-justification).',
      tag: 'library',
      access: QA,
      params: idParams,
      body: approveReferenceSchema,
    },
    ({ params, body, user, ip }) => refs.approveReference(getDb(), user, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/references/:id/gate-override',
      summary: 'Request an override of the specificity gate for a reference (first of two QA signatures)',
      tag: 'library',
      access: QA,
      params: idParams,
      body: gateOverrideRequestSchema,
      status: 201,
    },
    ({ params, body, user, ip }) => refs.requestReferenceOverride(getDb(), user, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/references/:id/retire',
      summary: 'Retire a reference (reason and e-signature; nothing is deleted)',
      tag: 'library',
      access: QA,
      params: idParams,
      body: retireReferenceSchema,
    },
    ({ params, body, user, ip }) => refs.retireReference(getDb(), user, params.id, body, ip),
  );

  // ---- specificity matrix
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/library/specificity',
      summary: 'Specificity matrix of the approved library of one technique',
      tag: 'library',
      access: READERS,
      query: specificityMatrixQuerySchema,
    },
    ({ query }) => specificityMatrixFor(query.technique),
  );
  return r;
}

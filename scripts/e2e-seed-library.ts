/**
 * Browser tests only: a small approved library in the e2e database so that lots can be received
 * and tested at once: two approved materials with real reference spectra (nylon 6,6 and
 * polyester PET fibres from ../shared/reference-data) and one mid-IR ATR instrument with a
 * passing instrument check. Written straight into the tables (db/seeds/testing-library.ts);
 * the approvals are attributed to the demo QA manager. Idempotent.
 *   DRUMLINE_E2E_DB=drumline_e2e tsx scripts/e2e-seed-library.ts
 */
import { FIBRES, seedApprovedMaterial, seedInstrument } from '../db/seeds/testing-library';
import { closeDb, initDb, must } from '../server/lib/db';

const database = process.env.DRUMLINE_E2E_DB ?? 'drumline_e2e';

const E2E_LIBRARY = {
  nylon: { code: 'E2E-NY66', name: 'Nylon 6,6 staple fibre' },
  pet: { code: 'E2E-PET', name: 'Polyester (PET) staple fibre' },
  instrument: 'ATR bench E2E-1',
  supplier: { code: 'SUP-E2E', name: 'Harrowgate Fibre Supply' },
};

async function main(): Promise<void> {
  const db = initDb(database);
  const quinn = await db('app_user').where({ username: 'quinn' }).first();
  if (!quinn) throw new Error('the demo QA account "quinn" is missing; seed the accounts first');
  const qa = { id: quinn.id, fullName: quinn.full_name };
  // Irene wrote the methods and uploaded the references; Quinn approved (never the author).
  const irene = await db('app_user').where({ username: 'irene' }).first();
  if (!irene) throw new Error('the demo QA account "irene" is missing; seed the accounts first');
  const author = { id: irene.id, fullName: irene.full_name };
  if (!(await db('material').where({ code: E2E_LIBRARY.nylon.code }).first()))
    await seedApprovedMaterial(db, qa, {
      ...E2E_LIBRARY.nylon,
      grade: 'technical',
      referenceFiles: [FIBRES.nylon66Reference],
      author,
    });
  if (!(await db('material').where({ code: E2E_LIBRARY.pet.code }).first()))
    await seedApprovedMaterial(db, qa, {
      ...E2E_LIBRARY.pet,
      grade: 'technical',
      referenceFiles: [FIBRES.petReference],
      author,
    });
  // Supplier master and material profile (issue 14): one qualified supplier of both fibres, sampled
  // container by container, and release checks for nylon; each row signed by the demo QA manager.
  if (!(await db('supplier').where({ code: E2E_LIBRARY.supplier.code }).first())) {
    const now = new Date();
    const signature = async (entityType: string, entityId: number, meaning: string) =>
      (
        await db('e_signature').insert({
          user_id: qa.id,
          printed_name: qa.fullName,
          meaning,
          entity_type: entityType,
          entity_id: String(entityId),
          content_hash: '0'.repeat(64),
          statement: 'browser test fixture',
          signed_at: now,
        })
      )[0];
    const [supplierId] = await db('supplier').insert({
      ...E2E_LIBRARY.supplier,
      kind: 'supplier',
      created_by: qa.id,
      created_at: now,
    });
    for (const code of [E2E_LIBRARY.nylon.code, E2E_LIBRARY.pet.code]) {
      // both materials were seeded above
      const m = must(await db('material').where({ code }).first(), `Material ${code}`);
      const [sourceId] = await db('material_source').insert({
        material_id: m.id,
        supplier_id: supplierId,
        manufacturer_id: null,
        manufacturer_key: 0,
        created_by: qa.id,
        created_at: now,
      });
      await db('source_status').insert({
        source_id: sourceId,
        status: 'qualified',
        sampling_plan: 'every-container',
        effective_from: now.toISOString().slice(0, 10),
        reason: 'browser test fixture',
        signature_id: await signature('material_source', sourceId, 'source-status-set'),
        set_by: qa.id,
        set_at: now,
      });
    }
    const nylon = must(
      await db('material').where({ code: E2E_LIBRARY.nylon.code }).first(),
      `Material ${E2E_LIBRARY.nylon.code}`,
    );
    await db('material_profile').insert({
      material_id: nylon.id,
      version: 1,
      retest_months: 24,
      shelf_life_months: 36,
      risk_class: 'medium',
      checks: JSON.stringify([
        { key: 'coa-review', kind: 'coa-review', label: 'CoA reviewed against the specification' },
      ]),
      reason: 'browser test fixture',
      signature_id: await signature('material', nylon.id, 'material-profile-approved'),
      created_by: qa.id,
      created_at: now,
    });
  }
  if (!(await db('instrument').where({ name: E2E_LIBRARY.instrument }).first()))
    await seedInstrument(db, qa, { name: E2E_LIBRARY.instrument, state: 'valid', location: 'Warehouse goods-in' });
}

main()
  .then(() => console.log(`[e2e-seed-library] approved library in ${database}`))
  .catch((e) => {
    console.error('[e2e-seed-library] failed:', e instanceof Error ? e.message : e);
    process.exitCode = 1;
  })
  .finally(() => closeDb());

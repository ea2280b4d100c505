/**
 * Identity certificates: the lot points at its current certificate (set in the same
 * transaction that stores the certificate), a superseding certificate keeps the reason and the
 * QA signature that issued it, and the certificate keeps the content it printed (JSON) so that
 * lists and the verification page need not parse PDFs. Certificates are append-only in the
 * database too: triggers refuse UPDATE and DELETE (the runtime account holds only SELECT and
 * INSERT on the table as well).
 */
import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('certificate', (t) => {
    t.text('content', 'longtext').nullable(); // JSON of what the PDF prints
    t.text('supersede_reason').nullable();
    t.integer('supersede_signature_id').unsigned().nullable().references('e_signature.id');
    t.index(['issued_at']);
  });
  await knex.schema.alterTable('lot', (t) => {
    t.integer('certificate_id').unsigned().nullable().references('certificate.id');
  });
  await knex.raw(
    "CREATE TRIGGER certificate_no_update BEFORE UPDATE ON certificate FOR EACH ROW SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'certificate is append-only'",
  );
  await knex.raw(
    "CREATE TRIGGER certificate_no_delete BEFORE DELETE ON certificate FOR EACH ROW SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'certificate is append-only'",
  );
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('DROP TRIGGER IF EXISTS certificate_no_update');
  await knex.raw('DROP TRIGGER IF EXISTS certificate_no_delete');
  await knex.schema.alterTable('lot', (t) => {
    t.dropForeign(['certificate_id']);
    t.dropColumn('certificate_id');
  });
  await knex.schema.alterTable('certificate', (t) => {
    t.dropForeign(['supersede_signature_id']);
    t.dropIndex(['issued_at']);
    t.dropColumn('supersede_signature_id');
    t.dropColumn('supersede_reason');
    t.dropColumn('content');
  });
}

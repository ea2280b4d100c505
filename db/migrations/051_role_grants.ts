/**
 * Segregation of duties (docs/access.md, "Roles and who grants them"; issue 12 item 1). An
 * account's roles come from the append-only table role_grant, and the database keeps
 * app_user.roles equal to the account's latest grant:
 * - role_request: an administrator asks for a change of someone else's roles (never their own);
 * - role_decision: a second administrator confirms it with an e-signature (or declines it; the
 *   requester may withdraw it);
 * - role_grant: the roles an account holds from then on, with how they were granted:
 *   'administrator' (one administrator; never adds QA manager, verifier or administrator),
 *   'two-person' (a confirmed request, the confirmer neither the requester nor the account), or
 *   'site-setup' (the command that creates a site's first accounts, through the owner account).
 * Triggers check each rule on INSERT, so the runtime account cannot give anyone a role behind the
 * application, cannot give itself one, cannot combine the administrator role with another, and
 * cannot write app_user.roles except to the roles of the latest grant. All three tables are
 * append-only. Existing accounts get a 'site-setup' grant of the roles they hold now.
 */
import type { Knex } from 'knex';
import { appendOnly, dropAppendOnly, dropGuard, guardRows } from '../protect';

const ROLE_ORDER = ['operator', 'verifier', 'qa_manager', 'auditor', 'admin'];
const canonical = (roles: string[]) =>
  JSON.stringify([...new Set(roles)].sort((a, b) => ROLE_ORDER.indexOf(a) - ROLE_ORDER.indexOf(b)));

const refuse = (message: string) => `SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = '${message.replace(/'/g, "''")}'`;

const IS_ADMIN = (col: string) =>
  `EXISTS (SELECT 1 FROM app_user a WHERE a.id = ${col} AND a.active = 1 AND JSON_CONTAINS(a.roles, '"admin"'))`;

const ROLES_SHAPE = (col: string) => `
  IF JSON_VALID(${col}) = 0 OR JSON_TYPE(${col}) <> 'ARRAY' THEN ${refuse('roles must be a JSON array')}; END IF;
  IF JSON_CONTAINS(${col}, '"admin"') AND JSON_LENGTH(${col}) > 1 THEN
    ${refuse('the administrator role cannot be combined with another role')};
  END IF;`;

const ADDS = (role: string) => `(JSON_CONTAINS(NEW.roles, '"${role}"') AND NOT JSON_CONTAINS(prev, '"${role}"'))`;

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('role_request', (t) => {
    t.increments('id').primary();
    t.integer('user_id').unsigned().notNullable().references('app_user.id');
    t.string('roles_before', 200).notNullable(); // canonical JSON array
    t.string('roles_after', 200).notNullable();
    t.integer('requested_by').unsigned().notNullable().references('app_user.id');
    t.datetime('requested_at', { precision: 3 }).notNullable();
    t.text('reason').notNullable();
    t.index(['user_id']);
  });
  await knex.schema.createTable('role_decision', (t) => {
    t.increments('id').primary();
    t.integer('request_id').unsigned().notNullable().unique().references('role_request.id');
    t.string('decision', 16).notNullable(); // confirmed, declined, withdrawn
    t.integer('decided_by').unsigned().notNullable().references('app_user.id');
    t.datetime('decided_at', { precision: 3 }).notNullable();
    t.text('reason').nullable();
    t.integer('signature_id').unsigned().nullable().references('e_signature.id');
  });
  await knex.schema.createTable('role_grant', (t) => {
    t.increments('id').primary();
    t.integer('user_id').unsigned().notNullable().references('app_user.id');
    t.string('roles', 200).notNullable(); // canonical JSON array: what the account holds from now on
    t.string('kind', 16).notNullable(); // site-setup, administrator, two-person
    t.integer('granted_by').unsigned().nullable().references('app_user.id');
    t.integer('request_id').unsigned().nullable().references('role_request.id');
    t.integer('decision_id').unsigned().nullable().unique().references('role_decision.id');
    t.datetime('granted_at', { precision: 3 }).notNullable();
    t.text('reason').notNullable();
    t.index(['user_id', 'id']);
  });

  // Existing accounts keep the roles they hold, recorded as their first grant.
  const now = new Date();
  for (const u of await knex('app_user').select('id', 'roles')) {
    let roles: string[];
    try {
      roles = JSON.parse(u.roles) as string[];
    } catch {
      roles = [];
    }
    if (roles.includes('admin') && roles.length > 1)
      console.warn(`[migrate 051] account ${u.id} holds the administrator role with others; change it`);
    const c = canonical(roles);
    await knex('app_user').where({ id: u.id }).update({ roles: c });
    // the row as this migration wrote it; migration 170 adds the link and the seal to every grant
    await knex<Record<string, unknown>>('role_grant').insert({
      user_id: u.id,
      roles: c,
      kind: 'site-setup',
      granted_by: null,
      granted_at: now,
      reason: 'roles held before role grants were recorded (migration 051)',
    });
  }

  for (const t of ['role_request', 'role_decision', 'role_grant']) await appendOnly(knex, t);

  await knex.raw(`CREATE TRIGGER role_request_check BEFORE INSERT ON role_request FOR EACH ROW
BEGIN
  ${ROLES_SHAPE('NEW.roles_after')}
  IF NEW.requested_by = NEW.user_id THEN ${refuse('nobody changes their own roles')}; END IF;
  IF NOT ${IS_ADMIN('NEW.requested_by')} THEN ${refuse('only an active administrator requests a role change')}; END IF;
END`);

  await knex.raw(`CREATE TRIGGER role_decision_check BEFORE INSERT ON role_decision FOR EACH ROW
BEGIN
  DECLARE requester INT;
  DECLARE subject INT;
  SET requester = (SELECT r.requested_by FROM role_request r WHERE r.id = NEW.request_id);
  SET subject = (SELECT r.user_id FROM role_request r WHERE r.id = NEW.request_id);
  IF NEW.decision = 'withdrawn' THEN
    IF NOT (NEW.decided_by <=> requester) THEN ${refuse('only the requester withdraws a request')}; END IF;
  ELSEIF NEW.decision IN ('confirmed', 'declined') THEN
    IF NEW.decided_by <=> requester THEN ${refuse('a second administrator decides a role change, not the requester')}; END IF;
    IF NEW.decided_by <=> subject THEN ${refuse('nobody decides a change of their own roles')}; END IF;
    IF NOT ${IS_ADMIN('NEW.decided_by')} THEN ${refuse('only an active administrator decides a role change')}; END IF;
    IF NEW.decision = 'confirmed' AND NOT EXISTS (SELECT 1 FROM e_signature s WHERE s.id = NEW.signature_id
        AND s.user_id = NEW.decided_by AND s.entity_type = 'role_request' AND BINARY s.entity_id = BINARY CAST(NEW.request_id AS CHAR)
        AND s.meaning = 'role-change-confirmed') THEN
      ${refuse('a confirmation needs the signature of the confirming administrator on this request')};
    END IF;
  ELSE
    ${refuse('decision must be confirmed, declined or withdrawn')};
  END IF;
END`);

  await knex.raw(`CREATE TRIGGER role_grant_check BEFORE INSERT ON role_grant FOR EACH ROW
BEGIN
  DECLARE prev VARCHAR(200);
  ${ROLES_SHAPE('NEW.roles')}
  SET prev = IFNULL((SELECT g.roles FROM role_grant g WHERE g.user_id = NEW.user_id ORDER BY g.id DESC LIMIT 1), '[]');
  IF NEW.kind = 'site-setup' THEN
    -- USER() is the connected account, CURRENT_USER() the trigger's definer (the owner account).
    IF SUBSTRING_INDEX(USER(), '@', 1) <> SUBSTRING_INDEX(CURRENT_USER(), '@', 1) THEN
      ${refuse('site-setup grants are made by the site setup command (owner account) only')};
    END IF;
  ELSEIF NEW.kind = 'administrator' THEN
    IF NEW.granted_by IS NULL OR NEW.granted_by = NEW.user_id THEN ${refuse('nobody changes their own roles')}; END IF;
    IF NOT ${IS_ADMIN('NEW.granted_by')} THEN ${refuse('only an active administrator grants roles')}; END IF;
    IF ${ADDS('qa_manager')} OR ${ADDS('verifier')} OR ${ADDS('admin')} THEN
      ${refuse('granting QA manager, verifier or administrator needs a second administrator to confirm')};
    END IF;
  ELSEIF NEW.kind = 'two-person' THEN
    IF NOT EXISTS (SELECT 1 FROM role_decision d JOIN role_request r ON r.id = d.request_id
        WHERE d.id = NEW.decision_id AND r.id = NEW.request_id AND d.decision = 'confirmed'
          AND r.user_id = NEW.user_id AND BINARY r.roles_after = BINARY NEW.roles AND BINARY r.roles_before = BINARY prev
          AND d.decided_by = NEW.granted_by AND d.decided_by <> r.requested_by
          AND d.decided_by <> r.user_id AND r.requested_by <> r.user_id) THEN
      ${refuse('a two-person grant needs a request for exactly this change, confirmed by a second administrator')};
    END IF;
  ELSE
    ${refuse('kind must be site-setup, administrator or two-person')};
  END IF;
END`);

  await knex.raw(`CREATE TRIGGER app_user_roles_on_insert BEFORE INSERT ON app_user FOR EACH ROW
BEGIN
  IF NOT (BINARY NEW.roles = BINARY '[]') THEN ${refuse('an account is created without roles; its roles come from role grants')}; END IF;
END`);

  await guardRows(knex, {
    table: 'app_user',
    fixed: ['id', 'username', 'created_at'],
    mutable: [
      'full_name',
      'email',
      'password_hash',
      'roles',
      'must_change_password',
      'failed_attempts',
      'locked_until',
      'active',
      'password_changed_at',
      'updated_at',
    ],
    checks: [
      {
        sql:
          'BINARY NEW.roles <=> BINARY OLD.roles OR BINARY NEW.roles <=> ' +
          '(SELECT BINARY g.roles FROM role_grant g WHERE g.user_id = NEW.id ORDER BY g.id DESC LIMIT 1)',
        message: 'roles change only to the roles of the latest role grant',
      },
    ],
  });
}

export async function down(knex: Knex): Promise<void> {
  await dropGuard(knex, 'app_user');
  await knex.raw('DROP TRIGGER IF EXISTS app_user_roles_on_insert');
  for (const t of ['role_grant', 'role_decision', 'role_request']) {
    await knex.raw(`DROP TRIGGER IF EXISTS ${t}_check`);
    await dropAppendOnly(knex, t);
    await knex.schema.dropTableIfExists(t);
  }
}

/**
 * The guard generator of db/protect.ts (docs/compliance.md, "What protects what"): the trigger it
 * writes names every column's class in its marker, compares the right columns, and marks a column
 * nobody classified, which tests/api/db-protection.test.ts then refuses (a column added by a later
 * migration is classified and the guard re-applied). The refusals themselves are tried against
 * MariaDB in tests/api/db-protection.test.ts. (common practice: generated SQL checked as text)
 */
import { describe, expect, it } from 'vitest';
import { guardTriggerSql, type GuardSpec } from '../../db/protect';

const SPEC: GuardSpec = {
  table: 'thing',
  fixed: ['id', 'code'],
  setOnce: ['sig_id'],
  mutable: ['note', 'updated_at'],
  states: [
    {
      column: 'status',
      transitions: [
        ['draft', 'approved'],
        ['approved', 'retired'],
      ],
      frozen: [{ states: ['approved', 'retired'], except: ['updated_at', 'sig_id'] }],
      requires: { approved: ['sig_id'] },
    },
  ],
  signatures: { sig_id: { entityType: 'thing', meanings: ['approved'] } },
};
const COLUMNS = ['id', 'code', 'status', 'note', 'sig_id', 'updated_at'];

describe('guardTriggerSql', () => {
  const sql = guardTriggerSql(SPEC, COLUMNS);

  it('classifies every column in its marker', () => {
    const marker = /drumline-guard thing: ([^*]*)\*\//.exec(sql)![1];
    for (const c of COLUMNS) expect(marker).toContain(c);
    expect(marker).not.toContain('UNCLASSIFIED');
  });

  it('refuses changes of fixed columns, of set-once columns once set, and of content in frozen states', () => {
    expect(sql).toContain('IF NOT (NEW.`code` <=> OLD.`code`) THEN');
    expect(sql).toContain('IF OLD.`sig_id` IS NOT NULL AND NOT (NEW.`sig_id` <=> OLD.`sig_id`) THEN');
    expect(sql).toContain("OLD.`status` IN ('approved', 'retired') AND NOT (NEW.`note` <=> OLD.`note`)");
    // the excepted columns and the state column itself are not frozen
    expect(sql).not.toContain("OLD.`status` IN ('approved', 'retired') AND NOT (NEW.`updated_at`");
    expect(sql).not.toContain("OLD.`status` IN ('approved', 'retired') AND NOT (NEW.`status`");
  });

  it('allows only the listed transitions, requires the signature, and ties it to this row', () => {
    expect(sql).toContain(
      "AND NOT ((OLD.`status` = 'draft' AND NEW.`status` = 'approved') OR (OLD.`status` = 'approved' AND NEW.`status` = 'retired'))",
    );
    expect(sql).toContain("NEW.`status` = 'approved' AND NOT (OLD.`status` <=> 'approved') AND (NEW.`sig_id` IS NULL)");
    expect(sql).toMatch(
      /s\.entity_type = 'thing' AND BINARY s\.entity_id = BINARY CAST\(NEW\.id AS CHAR\) AND s\.meaning IN \('approved'\)/,
    );
  });

  it('marks a column nobody classified (added later), and still freezes it in frozen states', () => {
    const later = guardTriggerSql(SPEC, [...COLUMNS, 'added_later']);
    expect(later).toMatch(/UNCLASSIFIED added_later/);
    expect(later).toContain(
      "OLD.`status` IN ('approved', 'retired') AND NOT (NEW.`added_later` <=> OLD.`added_later`)",
    );
  });

  it('refuses a declaration naming a column the table does not have', () => {
    expect(() => guardTriggerSql({ ...SPEC, mutable: ['nope'] }, COLUMNS)).toThrow(/no column\(s\) nope/);
  });
});

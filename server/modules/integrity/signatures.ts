/**
 * The signed-content recipes the integrity checks use (docs/compliance.md, "Integrity sweep"). The
 * table itself is server/signature-recipes.ts, built from every module's signing code and handed
 * over once by the composition root (server/app.ts) with `useRecipes`, so this module imports
 * none of them. A check before the table was handed over fails loudly instead of passing.
 */
import type { Knex } from 'knex';
import type { ESignatureRow } from '../../lib/db-tables';

/** What a recipe and the checks read of a signature. */
export type SignatureRow = Pick<
  ESignatureRow,
  'id' | 'user_id' | 'meaning' | 'entity_type' | 'entity_id' | 'content_hash' | 'statement'
>;

/** Rebuilds the signed content; undefined when the record it belongs to no longer exists. */
export type Recipe = (db: Knex, s: SignatureRow) => Promise<unknown>;

let recipes: Record<string, Recipe> | null = null;

/** Hands over the recipe table (server/app.ts, once at start). */
export function useRecipes(table: Record<string, Recipe>): void {
  recipes = table;
}

/** The recipe of a kind of signature, or undefined ("not checked"); throws before the table is handed over. */
export function recipeFor(key: string): Recipe | undefined {
  if (!recipes) throw new Error('The signature recipes were not handed to the integrity module (server/app.ts).');
  return recipes[key];
}

/** The content QA signs when signing off an alert. */
export function alertSignedContent(
  a: { id: number; kind: string; subject_type: string; subject_id: string; expected: string; found: string },
  comment: string,
) {
  return {
    alertId: a.id,
    kind: a.kind,
    subject: `${a.subject_type} ${a.subject_id}`,
    expected: a.expected,
    found: a.found,
    comment,
  };
}

export const recipeKey = (s: Pick<SignatureRow, 'entity_type' | 'meaning'>) => `${s.entity_type}/${s.meaning}`;

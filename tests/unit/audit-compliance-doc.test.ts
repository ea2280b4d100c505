/**
 * docs/compliance.md cites tests as `file` › describe › test name. This keeps the citations true:
 * every cited file exists and holds a describe block and a test with exactly those names (names
 * made with it.each('%s') match any value), and every clause the issue lists has a row.
 * Whether the cited tests pass is checked by running them (npm test).
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { repoRoot } from '../../db/config';

const doc = fs.readFileSync(path.join(repoRoot, 'docs', 'compliance.md'), 'utf8');

interface Citation {
  file: string;
  chain: string[];
}

/** Evidence cells: "`file` › a › b · › c · › e › f · `file2` › d" ("› c" continues file and block a; "› e › f" is block e of the same file). */
function citations(): Citation[] {
  const out: Citation[] = [];
  for (const line of doc.split('\n')) {
    if (!line.startsWith('| **')) continue;
    const cells = line.split(' | ');
    const evidence = cells[cells.length - 1].replace(/\s*\|\s*$/, '');
    let file = '';
    let parent: string[] = [];
    for (const part of evidence.split(' · ')) {
      const m = /^`([^`]+\.(?:test|spec)\.ts)`\s*›\s*(.+)$/.exec(part.trim());
      if (m) {
        file = m[1];
        const chain = m[2].split(' › ').map((x) => x.trim());
        parent = chain.slice(0, -1);
        out.push({ file, chain });
      } else if (part.trim().startsWith('› ') && file) {
        // "› test" continues the describe block; "› block › test" starts another block of the same file
        const segs = part
          .trim()
          .slice(2)
          .split(' › ')
          .map((x) => x.trim());
        if (segs.length > 1) parent = segs.slice(0, -1);
        out.push({ file, chain: [...parent, segs[segs.length - 1]] });
      }
    }
  }
  return out;
}

/** Names of describe/it/test blocks in a test file (string literals only). */
function names(file: string): string[] {
  const src = fs.readFileSync(path.join(repoRoot, file), 'utf8');
  const re = /\b(?:describe|it|test)(?:\.each\([\s\S]*?\))?\(\s*(['"`])((?:\\.|(?!\1).)*)\1/g;
  const found: string[] = [];
  for (const m of src.matchAll(re)) found.push(m[2].replace(/\\(['"`\\])/g, '$1'));
  return found;
}

function matches(name: string, cited: string): boolean {
  if (name === cited) return true;
  if (!name.includes('%s') && !name.includes('${')) return false;
  const pattern = name
    .split(/%s|\$\{[^}]*\}/)
    .map((x) => x.replace(/[.*+?^${}()|[\]\\]/g, '\\$&'))
    .join('.+');
  return new RegExp(`^${pattern}$`).test(cited);
}

describe('docs/compliance.md', () => {
  const cited = citations();

  it('has a row for every clause the issue names', () => {
    for (const clause of [
      '11.10(a)',
      '11.10(b)',
      '11.10(c)',
      '11.10(d)',
      '11.10(e)',
      '11.10(f)',
      '11.10(g)',
      '11.10(h)',
      '11.10(i)',
      '11.10(j)',
      '11.10(k)',
      '11.50',
      '11.70',
      '11.100',
      '11.200',
      '11.300',
    ])
      expect(doc, clause).toContain(`| **${clause}**`);
    for (const s of ['§4', '§7', '§9', '§12', '§14']) expect(doc, s).toContain(`| **${s} `);
  });

  it('cites at least one test in every clause row and every claim row', () => {
    const rows = doc.split('\n').filter((l) => l.startsWith('| **'));
    // 21 clause rows (Part 11 and Annex 11); the rest are the claims of "What protects what" and "Integrity sweep"
    expect(rows.filter((l) => /^\| \*\*(11\.|§)/.test(l)).length).toBe(21);
    expect(rows.length).toBeGreaterThan(21);
    for (const r of rows) expect(r, r.slice(0, 40)).toMatch(/`(tests|e2e)\/[^`]+\.(test|spec)\.ts`/);
  });

  it('every cited test exists with exactly that describe block and name', () => {
    expect(cited.length).toBeGreaterThan(60);
    const missing: string[] = [];
    for (const c of cited) {
      if (!fs.existsSync(path.join(repoRoot, c.file))) {
        missing.push(`${c.file} (no such file)`);
        continue;
      }
      const n = names(c.file);
      for (const part of c.chain) if (!n.some((x) => matches(x, part))) missing.push(`${c.file} › ${part}`);
    }
    expect(missing).toEqual([]);
  });
});

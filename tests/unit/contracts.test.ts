/**
 * The contract files (DEVELOPERS.md, "Contracts"): every server/**\/contract.ts is safe for
 * the browser bundle because it imports nothing but zod and other contract files. A contract that
 * pulled in knex, express, node:* or a repo/service would drag server code into the client.
 */
import fs from 'node:fs';
import path from 'node:path';
import ts from 'typescript';
import { describe, expect, it } from 'vitest';

const root = path.resolve(__dirname, '../..');

function contractFiles(dir: string): string[] {
  const out: string[] = [];
  for (const e of fs.readdirSync(dir, { withFileTypes: true })) {
    const p = path.join(dir, e.name);
    if (e.isDirectory()) out.push(...contractFiles(p));
    else if (e.name === 'contract.ts') out.push(p);
  }
  return out;
}

/** The imports of a contract file's text that are not allowed (zod, or a relative contract file). */
function forbiddenImports(file: string, text: string): string[] {
  const { importedFiles } = ts.preProcessFile(text, true, true);
  return importedFiles
    .map((f) => f.fileName)
    .filter((spec) => {
      if (spec === 'zod') return false;
      if (!spec.startsWith('.')) return true;
      const target = path.resolve(path.dirname(file), spec);
      return (
        path.basename(target).replace(/\.ts$/, '') !== 'contract' || !fs.existsSync(`${target.replace(/\.ts$/, '')}.ts`)
      );
    });
}

describe('contract files import only zod and other contract files', () => {
  const files = contractFiles(path.join(root, 'server'));

  it('finds a contract file for every server module and one for server/lib', () => {
    const modules = fs
      .readdirSync(path.join(root, 'server/modules'), { withFileTypes: true })
      .filter((e) => e.isDirectory())
      .map((e) => e.name);
    const rel = files.map((f) => path.relative(root, f).split(path.sep).join('/'));
    expect(rel).toContain('server/lib/contract.ts');
    for (const m of modules) expect(rel).toContain(`server/modules/${m}/contract.ts`);
  });

  it.each(contractFiles(path.join(root, 'server')).map((f) => [path.relative(root, f)]))('%s', (rel) => {
    const file = path.join(root, rel);
    expect(forbiddenImports(file, fs.readFileSync(file, 'utf8'))).toEqual([]);
  });

  it('the check itself reports a package, a node built-in, a repo file and a missing contract', () => {
    const file = path.join(root, 'server/modules/lots/contract.ts');
    const text = [
      "import { z } from 'zod';",
      "import type { Knex } from 'knex';",
      "import fs from 'node:fs';",
      "import * as repo from './repo';",
      "export { x } from '../nowhere/contract';",
      "import type { Role } from '../../lib/contract';",
      "import { signatureInput } from '../../lib/contract.ts';",
    ].join('\n');
    expect(forbiddenImports(file, text)).toEqual(['knex', 'node:fs', './repo', '../nowhere/contract']);
  });
});

/**
 * Import cycles between server modules (docs/architecture.md, "Direction of imports"). Walks every
 * relative import of server/modules/** (type-only imports included, contract files excluded: a
 * contract imports only zod and other contracts, tests/unit/contracts.test.ts) and fails when an
 * import edge between two modules lies on a cycle and is not in the list of known cycles below.
 * The list only shrinks: an edge that no longer closes a cycle must be taken off it.
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';

const root = path.resolve(__dirname, '../..');
const modulesDir = path.join(root, 'server/modules');

/** Module-to-module edges that still close a cycle (none left; docs/architecture.md, "Direction of imports"). */
const KNOWN_CYCLIC_EDGES: string[] = [];

const IMPORT = /(?:import|export)\s[^'"]*?from\s*['"]([^'"]+)['"]|import\(\s*['"]([^'"]+)['"]\s*\)/g;

function sourceFiles(dir: string): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => {
    const p = path.join(dir, e.name);
    if (e.isDirectory()) return sourceFiles(p);
    return /\.tsx?$/.test(e.name) ? [p] : [];
  });
}

/** The module of a file under server/modules, or null. */
const moduleOf = (file: string) => /^([^/]+)\//.exec(path.relative(modulesDir, file).split(path.sep).join('/'))?.[1];

function resolve(from: string, spec: string): string {
  const base = path.resolve(path.dirname(from), spec);
  for (const c of [base + '.ts', base + '.tsx', path.join(base, 'index.ts'), base]) if (fs.existsSync(c)) return c;
  return base;
}

/** Module -> modules it imports (outside contract files). */
function moduleGraph(files: { file: string; text: string }[]): Map<string, Set<string>> {
  const graph = new Map<string, Set<string>>();
  for (const { file, text } of files) {
    const from = moduleOf(file);
    if (!from || from.startsWith('..')) continue;
    for (const m of text.matchAll(IMPORT)) {
      const spec = m[1] ?? m[2];
      if (!spec.startsWith('.')) continue;
      const target = resolve(file, spec);
      const to = moduleOf(target);
      if (!to || to.startsWith('..') || to === from || /contract\.ts$/.test(target)) continue;
      if (!graph.has(from)) graph.set(from, new Set());
      graph.get(from)!.add(to);
    }
  }
  return graph;
}

/** Edges a -> b where b reaches a again (the edge lies on a cycle). */
function cyclicEdges(graph: Map<string, Set<string>>): string[] {
  const reaches = (a: string, b: string) => {
    const seen = new Set<string>();
    const stack = [a];
    while (stack.length) {
      const v = stack.pop()!;
      if (v === b) return true;
      if (seen.has(v)) continue;
      seen.add(v);
      stack.push(...(graph.get(v) ?? []));
    }
    return false;
  };
  const out: string[] = [];
  for (const [a, bs] of graph) for (const b of bs) if (reaches(b, a)) out.push(`${a} -> ${b}`);
  return out.sort();
}

describe('import cycles between server modules', () => {
  it('finds a cycle in a small graph and none in a chain (the check can fail)', () => {
    const g = new Map([
      ['a', new Set(['b'])],
      ['b', new Set(['c'])],
      ['c', new Set(['a'])],
      ['d', new Set(['a'])],
    ]);
    expect(cyclicEdges(g)).toEqual(['a -> b', 'b -> c', 'c -> a']);
    expect(cyclicEdges(new Map([['a', new Set(['b'])]]))).toEqual([]);
  });

  it('sees an import of a module index as an edge to that module, and ignores contract files', () => {
    const g = moduleGraph([
      {
        file: path.join(modulesDir, 'alpha/service.ts'),
        text: "import { x } from '../lots';\nimport type { Y } from '../testing/contract';\n",
      },
    ]);
    expect([...(g.get('alpha') ?? [])]).toEqual(['lots']);
  });

  it('has no cycle beyond the known ones, and every known one still exists', () => {
    const files = sourceFiles(modulesDir).map((file) => ({ file, text: fs.readFileSync(file, 'utf8') }));
    const found = cyclicEdges(moduleGraph(files));
    expect(found.filter((e) => !KNOWN_CYCLIC_EDGES.includes(e))).toEqual([]);
    expect(KNOWN_CYCLIC_EDGES.filter((e) => !found.includes(e))).toEqual([]);
  });
});

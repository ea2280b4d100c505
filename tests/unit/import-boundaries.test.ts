/**
 * Drumline's import boundaries (DEVELOPERS.md, "Contracts"), as the ESLint rule
 * `drumline/boundaries` in eslint.config.js applies them to every import of the tree.
 */
import { ESLint } from 'eslint';
import { describe, expect, it } from 'vitest';
import { boundaryViolation } from '../../eslint.config.js';

describe('boundaryViolation', () => {
  it('reports a feature importing another feature', () => {
    expect(boundaryViolation('src/features/testing/components/Review.tsx', 'src/features/library/api')).toMatch(
      /a feature imports another feature \(testing -> library\)/,
    );
  });

  it('lets a feature import its own files, shared components and lib', () => {
    expect(boundaryViolation('src/features/testing/components/Review.tsx', 'src/features/testing/api')).toBeNull();
    expect(boundaryViolation('src/features/testing/components/Review.tsx', 'src/components/Dialog')).toBeNull();
    expect(boundaryViolation('src/routes/lot.tsx', 'src/features/library/api')).toBeNull();
  });

  it('reports the client importing a server internal (repo, service, lib)', () => {
    expect(boundaryViolation('src/features/library/api/index.ts', 'server/modules/library/repo')).toMatch(
      /the client imports a server internal \(server\/modules\/library\/repo\)/,
    );
    expect(boundaryViolation('src/lib/roles.ts', 'server/lib/esign')).toMatch(/server internal/);
    expect(boundaryViolation('src/routes/lot.tsx', 'server/modules/testing/service')).toMatch(/server internal/);
  });

  it('lets the client import contract files', () => {
    expect(boundaryViolation('src/features/library/api/index.ts', 'server/modules/library/contract')).toBeNull();
    expect(boundaryViolation('src/lib/roles.ts', 'server/lib/contract')).toBeNull();
  });

  it('reports the engine importing application code', () => {
    expect(boundaryViolation('server/spectra/score.ts', 'server/lib/db')).toMatch(
      /the engine imports application code/,
    );
    expect(boundaryViolation('server/spectra/score.ts', 'server/spectra/bands')).toBeNull();
  });

  it("reports a server module importing another module's internals", () => {
    expect(boundaryViolation('server/modules/testing/service.ts', 'server/modules/lots/repo')).toMatch(
      /a server module imports another module's internals \(testing -> server\/modules\/lots\/repo\)/,
    );
    expect(boundaryViolation('server/modules/lots/service.ts', 'server/modules/testing/outcome.ts')).toMatch(
      /another module's internals/,
    );
  });

  it("lets a server module import another module's index or contract, and its own files", () => {
    expect(boundaryViolation('server/modules/testing/service.ts', 'server/modules/lots')).toBeNull();
    expect(boundaryViolation('server/modules/testing/service.ts', 'server/modules/lots/index')).toBeNull();
    expect(boundaryViolation('server/modules/testing/service.ts', 'server/modules/lots/contract')).toBeNull();
    expect(boundaryViolation('server/modules/testing/service.ts', 'server/modules/testing/repo')).toBeNull();
    expect(boundaryViolation('server/modules/testing/service.ts', 'server/lib/db')).toBeNull();
  });

  it("reports a script or the seed importing a module's internals; tests and benchmarks may", () => {
    expect(boundaryViolation('scripts/e2e-seed-trend.ts', 'server/modules/trending/service')).toMatch(
      /a script or seed imports a module's internals \(server\/modules\/trending\/service\)/,
    );
    expect(boundaryViolation('db/seeds/trend-history.ts', 'server/modules/provenance/copies')).toMatch(
      /a script or seed imports/,
    );
    expect(boundaryViolation('scripts/e2e-seed-trend.ts', 'server/modules/trending')).toBeNull();
    expect(boundaryViolation('db/seeds/demo.ts', 'server/modules/lots/contract')).toBeNull();
    expect(boundaryViolation('db/seeds/demo.ts', 'server/lib/audit')).toBeNull();
    expect(boundaryViolation('tests/api/lots.test.ts', 'server/modules/lots/repo')).toBeNull();
    expect(boundaryViolation('bench/provenance.ts', 'server/modules/provenance/copies')).toBeNull();
  });
});

describe('the drumline/boundaries rule in ESLint', () => {
  it('fails the lint of a module file that reaches into another module', async () => {
    const eslint = new ESLint();
    const code = "import { findLot } from '../lots/repo';\nexport const f = findLot;\n";
    const [bad] = await eslint.lintText(code, { filePath: 'server/modules/testing/example.ts' });
    expect(bad.messages.map((m) => m.ruleId)).toContain('drumline/boundaries');
    const fine = "import { findLot } from '../lots';\nexport const f = findLot;\n";
    const [good] = await eslint.lintText(fine, { filePath: 'server/modules/testing/example.ts' });
    expect(good.messages.filter((m) => m.ruleId === 'drumline/boundaries')).toEqual([]);
  });
});

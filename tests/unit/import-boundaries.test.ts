/**
 * Drumline's import boundaries (DEVELOPERS.md, "Contracts"), as the ESLint rule
 * `drumline/boundaries` in eslint.config.js applies them to every import of the tree.
 */
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
});

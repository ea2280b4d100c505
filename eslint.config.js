// ESLint flat config: typescript-eslint, the React hooks rules, Prettier's "no style rules" preset
// and Drumline's import boundaries (docs/architecture.md, "Module map"):
//   - a client feature never imports another feature (compose them in src/routes);
//   - the client imports nothing from server/ except the contract files (server/**/contract.ts);
//   - the engine (server/spectra) imports nothing of the application, only itself and packages;
//   - a server module (server/modules/<a>) imports another module only through its index.ts (its
//     public face) or its contract.ts; so do scripts/ and db/ (tests and benchmarks may reach in).
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import js from '@eslint/js';
import tseslint from 'typescript-eslint';
import reactHooks from 'eslint-plugin-react-hooks';
import prettier from 'eslint-config-prettier';
import globals from 'globals';

const root = path.dirname(fileURLToPath(import.meta.url));
const rel = (file) => path.relative(root, file).split(path.sep).join('/');

/** Resolves a relative import of `file` to a repository path; package imports give null. */
function target(file, spec) {
  if (!spec.startsWith('.')) return null;
  return rel(path.resolve(path.dirname(file), spec));
}

/** The boundary an import of `from` crosses when it points at `to`, or null when it is allowed. */
export function boundaryViolation(from, to) {
  const feature = (p) => /^src\/features\/([^/]+)\//.exec(p)?.[1];
  if (from.startsWith('src/')) {
    const own = feature(from);
    const other = feature(to + '/');
    if (own && other && own !== other)
      return `a feature imports another feature (${own} -> ${other}); compose them in src/routes`;
    if (to.startsWith('server/') && !/\/contract(\.ts)?$/.test(to))
      return `the client imports a server internal (${to}); import the module's contract file instead`;
  }
  const serverModule = (p) => /^server\/modules\/([^/]+)(\/|$)/.exec(p)?.[1];
  const own = serverModule(from);
  const other = serverModule(to);
  if (own && other && own !== other && !new RegExp(`^server/modules/${other}(/index|/contract)?(\\.ts)?$`).test(to))
    return `a server module imports another module's internals (${own} -> ${to}); import its index (server/modules/${other}) or its contract.ts`;
  // Application code outside server/ (scripts, the database set-up and demo seed) uses a module
  // through its public face too; tests and benchmarks may reach a module's internals on purpose.
  if (
    /^(scripts|db)\//.test(from) &&
    other &&
    !new RegExp(`^server/modules/${other}(/index|/contract)?(\\.ts)?$`).test(to)
  )
    return `a script or seed imports a module's internals (${to}); import its index (server/modules/${other}) or its contract.ts`;
  if (from.startsWith('server/spectra/') && !to.startsWith('server/spectra/'))
    return `the engine imports application code (${to}); server/spectra uses nothing of ours`;
  return null;
}

const boundaries = {
  meta: { type: 'problem', schema: [], messages: { crossed: 'Import boundary: {{why}}.' } },
  create(context) {
    const from = rel(context.filename);
    const check = (node, source) => {
      if (!source || typeof source.value !== 'string') return;
      const to = target(context.filename, source.value);
      if (!to) return;
      const why = boundaryViolation(from, to);
      if (why) context.report({ node, messageId: 'crossed', data: { why } });
    };
    return {
      ImportDeclaration: (n) => check(n, n.source),
      ExportNamedDeclaration: (n) => check(n, n.source),
      ExportAllDeclaration: (n) => check(n, n.source),
      ImportExpression: (n) => check(n, n.source),
    };
  },
};

export default tseslint.config(
  {
    ignores: [
      'node_modules/',
      'dist/',
      'dist-e2e/',
      '.data/',
      '.keys/',
      'test-results/',
      'playwright-report/',
      'public/',
      'fixtures/spectra/',
      'tests/bad-files/files/',
    ],
  },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    languageOptions: { ecmaVersion: 2023, sourceType: 'module', globals: { ...globals.node, ...globals.browser } },
    plugins: { drumline: { rules: { boundaries } } },
    rules: {
      'drumline/boundaries': 'error',
      '@typescript-eslint/no-unused-vars': [
        'error',
        { argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrors: 'none' },
      ],
      '@typescript-eslint/consistent-type-imports': ['error', { fixStyle: 'inline-type-imports' }],
      'no-control-regex': 'off', // the readers and input checks match control characters on purpose
    },
  },
  {
    files: ['src/**/*.{ts,tsx}'],
    plugins: { 'react-hooks': reactHooks },
    rules: {
      'react-hooks/rules-of-hooks': 'error',
      'react-hooks/exhaustive-deps': 'error',
    },
  },
  {
    // The demo seed drives the public API like a script; its calls read JSON loosely on purpose
    // (a wrong field fails the seed run at once, which demo-seed.test.ts exercises).
    files: ['db/seeds/demo-client.ts'],
    rules: { '@typescript-eslint/no-explicit-any': 'off' },
  },
  prettier,
);

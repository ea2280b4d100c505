// Types of what eslint.config.js exports besides the config (tests/unit/import-boundaries.test.ts).
import type { Linter } from 'eslint';

/** The boundary an import of `from` crosses when it points at `to` (repository paths), or null when it is allowed. */
export function boundaryViolation(from: string, to: string): string | null;

declare const config: Linter.Config[];
export default config;

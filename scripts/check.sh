#!/usr/bin/env bash
# `npm run check`: the quick gate before every commit (type check, lint and format, unit tests).
# Installs nothing and starts no database; `npm test` runs everything.
set -euo pipefail
cd "$(dirname "${BASH_SOURCE[0]}")/.."
echo "[check] type check" >&2
npx tsc --noEmit -p tsconfig.json
echo "[check] lint and format" >&2
npx eslint . --cache --cache-location node_modules/.cache/eslint/
npx prettier --check . --log-level warn --cache
echo "[check] unit tests" >&2
npx vitest run --project unit

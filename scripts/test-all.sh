#!/usr/bin/env bash
# `npm test`: installs what is missing (npm dependencies; MariaDB, Chromium and poppler-utils from
# Debian's packages), runs the lint (ESLint with the import boundaries, Prettier), starts the
# private MariaDB, then runs the type check, every vitest test (engine and API, against a fresh
# real database) and the Playwright tests in Debian's Chromium.
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"
ensure_node_modules
say "lint (ESLint and Prettier)"
npx eslint .
npx prettier --check . --log-level warn
ensure_apt mariadbd mariadb-server
ensure_apt chromium chromium
ensure_apt pdfsig poppler-utils
ensure_apt qpdf qpdf
ensure_apt openssl openssl
bash db/mariadb.sh start
say "type check"
npx tsc --noEmit -p tsconfig.json
say "unit and API tests (vitest)"
npx vitest run
say "browser tests (Playwright, Debian Chromium)"
npx playwright test

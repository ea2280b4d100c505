#!/usr/bin/env bash
# Server for the Playwright tests (started by playwright.config.ts's webServer):
# private MariaDB, a fresh `drumline_e2e` database with the demo accounts, the built client,
# then the Drumline server on 127.0.0.1:4173 against that database.
# E2E_PORT and DRUMLINE_E2E_DB (a drumline_* name) let two runs share one machine.
set -euo pipefail
ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "$ROOT"
export DRUMLINE_E2E_DB="${DRUMLINE_E2E_DB:-drumline_e2e}"
bash db/mariadb.sh start
npx tsx scripts/e2e-db.ts
npx tsx scripts/e2e-seed-library.ts  # approved library and a checked instrument for the testing e2e (e2e/testing.spec.ts)
npx tsx scripts/e2e-seed-trend.ts     # synthetic trend history with a drift signal (e2e/trending.spec.ts)
export PORT="${E2E_PORT:-4173}"
# The client is built into its own folder so that `npm start`, `npm run build` or another test
# run in the same tree cannot replace the files under the running test.
export DRUMLINE_CLIENT_DIR="dist-e2e/$PORT"
npx vite build --logLevel warn --outDir "$DRUMLINE_CLIENT_DIR" --emptyOutDir
export DRUMLINE_DB_NAME="$DRUMLINE_E2E_DB"
export SIGNIN_RATE_LIMIT=1000
exec npx tsx server/index.ts

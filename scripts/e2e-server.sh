#!/usr/bin/env bash
# Server for the Playwright tests (started by playwright.config.ts's webServer):
# private MariaDB, a fresh `drumline_e2e` database with the demo accounts, the built client,
# then the Drumline server on 127.0.0.1:4173 against that database.
set -euo pipefail
ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "$ROOT"
export DRUMLINE_E2E_DB="${DRUMLINE_E2E_DB:-drumline_e2e}"
bash db/mariadb.sh start
npx tsx scripts/e2e-db.ts
npx vite build --logLevel warn
export DRUMLINE_DB_NAME="$DRUMLINE_E2E_DB"
export PORT="${E2E_PORT:-4173}"
export SIGNIN_RATE_LIMIT=1000
exec npx tsx server/index.ts

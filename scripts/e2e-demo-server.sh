#!/usr/bin/env bash
# Second server for the Playwright tests (playwright.config.ts, after the first web server, which
# has built the client): a fresh `drumline_e2e_demo` database with the full demo site (accounts,
# grades, references, instruments, lots in every state), served on 127.0.0.1:$E2E_DEMO_PORT (default: E2E_PORT + 100, i.e. 4273). Used by
# e2e/demo-roles.spec.ts.
set -euo pipefail
ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "$ROOT"
export DRUMLINE_DB_NAME="${DRUMLINE_E2E_DEMO_DB:-${DRUMLINE_E2E_DB:-drumline_e2e}_demo}"
export SITE_NAME="${SITE_NAME:-Lindenhall Pharma, Werk Süd (demo)}"
bash db/mariadb.sh start
npx tsx scripts/demo-reset.ts --force
# Serves the client the first web server built (scripts/e2e-server.sh) for this run.
export DRUMLINE_CLIENT_DIR="dist-e2e/${E2E_PORT:-4173}"
export PORT="${E2E_DEMO_PORT:-$(( ${E2E_PORT:-4173} + 100 ))}"
export SIGNIN_RATE_LIMIT=1000
exec npx tsx server/index.ts

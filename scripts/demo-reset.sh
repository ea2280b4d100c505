#!/usr/bin/env bash
# `npm run demo:reset`: resets the demo database to its initial state (drops it, recreates and
# migrates it, seeds the demo accounts and the demo site). Stop `npm start` first or sign in again
# afterwards: every session ends with the reset. Pass --force to reset a database that holds
# grades other than the demo's.
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"
ensure_node_modules
export SITE_NAME="${SITE_NAME:-Lindenhall Pharma, Werk Süd (demo)}"
bash db/mariadb.sh start
npx tsx scripts/demo-reset.ts "$@"

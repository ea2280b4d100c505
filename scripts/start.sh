#!/usr/bin/env bash
# `npm start`: installs what is missing, starts the private MariaDB on loopback, migrates,
# seeds the demo site (idempotent), builds the client and serves everything on 127.0.0.1:${PORT:-8080}.
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"
ensure_node_modules
# The seeded demo is an invented site; a real site sets SITE_NAME (and never runs the seed).
export SITE_NAME="${SITE_NAME:-Lindenhall Pharma, Werk Süd (demo)}"
bash db/mariadb.sh start
npx tsx db/migrate.ts
npx tsx db/seed.ts
say "building the client"
npx vite build --logLevel warn
cat <<TXT

  Demo accounts (DEMO ONLY, password: drumline-demo-2026)
    olga     operator            victor   verifier
    quinn    QA manager          aurelia  auditor
    adam     administrator       dana     operator + verifier
    irene    QA manager (a second one: uploads references that quinn approves)

TXT
exec npx tsx server/index.ts

#!/usr/bin/env bash
# `npm run dev`: API server (tsx watch) on :8080 and Vite with a proxy to it on :5173.
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"
ensure_node_modules
bash db/mariadb.sh start
npx tsx db/migrate.ts
npx tsx db/seed.ts
npx tsx watch server/index.ts &
API_PID=$!
trap 'kill $API_PID 2>/dev/null || true' EXIT
npx vite --host 127.0.0.1 --port 5173

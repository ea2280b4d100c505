#!/usr/bin/env bash
# `npm run check`: the quick gate before every commit (type check, lint and format, unit tests).
# Installs nothing and starts no database; `npm test` runs everything.
#
# Speed (docs/architecture.md, "The quick check"): the type check is incremental and ESLint and
# Prettier keep caches (all under node_modules/.cache/, git-ignored), and the three steps run side by
# side; each step's output is shown when it fails. A cache never hides an error: the type check
# re-checks every file whose content or dependencies changed, ESLint and Prettier every file whose
# size or time stamp changed.
set -euo pipefail
cd "$(dirname "${BASH_SOURCE[0]}")/.."
cache=node_modules/.cache
mkdir -p "$cache/tsc" "$cache/check"
out="$cache/check"

step() { # name, command...
  local name=$1
  shift
  ("$@" >"$out/$name.log" 2>&1 && echo ok >"$out/$name.rc") || echo failed >"$out/$name.rc"
}

rm -f "$out"/*.rc
echo "[check] type check, lint and format, unit tests (side by side)" >&2
step typecheck npx tsc --noEmit -p tsconfig.json --incremental --tsBuildInfoFile "$cache/tsc/drumline.tsbuildinfo" &
step lint bash -c "npx eslint . --cache --cache-location $cache/eslint/ && npx prettier --check . --log-level warn --cache --cache-strategy metadata" &
step unit npx vitest run --project unit &
wait

status=0
for name in typecheck lint unit; do
  if [ "$(cat "$out/$name.rc")" != ok ]; then
    echo "[check] $name FAILED:" >&2
    cat "$out/$name.log" >&2
    status=1
  fi
done
if [ "$status" = 0 ]; then
  tail -n 6 "$out/unit.log" | sed 's/\x1b\[[0-9;]*m//g' >&2
  echo "[check] passed: type check, lint and format, unit tests" >&2
fi
exit "$status"

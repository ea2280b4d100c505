#!/usr/bin/env bash
# Shared set-up steps of the start and test commands: install what is missing, nothing else.
set -euo pipefail
ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "$ROOT"

say() { echo "[drumline] $*" >&2; }

APT_UPDATED=0
# ensure_apt <command-to-check> <debian-package>...
ensure_apt() {
  local cmd="$1"; shift
  if command -v "$cmd" >/dev/null 2>&1; then return 0; fi
  if [ "$(id -u)" != "0" ]; then say "missing $cmd; install the Debian packages $* (needs root)"; exit 1; fi
  say "installing $* from Debian's packages"
  export DEBIAN_FRONTEND=noninteractive
  if [ "$APT_UPDATED" = 0 ]; then apt-get update -qq >/dev/null; APT_UPDATED=1; fi
  apt-get install -y -qq "$@" >/dev/null
}

ensure_node_modules() {
  local major
  major="$(node -p 'process.versions.node.split(".")[0]')"
  if [ "$major" -lt 20 ]; then say "Node.js 20 or newer is needed (found $(node --version))"; exit 1; fi
  if [ ! -f node_modules/.package-lock.json ] || [ package-lock.json -nt node_modules/.package-lock.json ]; then
    say "installing npm dependencies (npm ci)"
    npm ci --no-audit --no-fund --loglevel=error
  fi
}

#!/usr/bin/env bash
# Installs what the end-to-end test needs: Debian's chromium and the build tools code-server's
# native modules compile with, then code-server and playwright-core into tests/e2e/node_modules
# (never into the extension's own dependencies). Idempotent: when everything is in place it
# only checks and returns in well under a second. Runs as root (CI does) or through sudo.
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
cd "$here"

as_root() { if [ "$(id -u)" = 0 ]; then "$@"; else sudo "$@"; fi; }

packages=(build-essential python3 pkg-config libkrb5-dev ripgrep chromium)
missing=()
for p in "${packages[@]}"; do dpkg -s "$p" >/dev/null 2>&1 || missing+=("$p"); done
if [ ${#missing[@]} -gt 0 ]; then
  echo "e2e: installing ${missing[*]}"
  as_root apt-get update -q
  as_root env DEBIAN_FRONTEND=noninteractive apt-get install -y -q -o DPkg::Lock::Timeout=600 --no-install-recommends "${missing[@]}"
fi

installed_version() { node -p "require('./node_modules/$1/package.json').version" 2>/dev/null || true; }
if [ "$(installed_version code-server)" = "4.100.3" ] && [ "$(installed_version playwright-core)" = "1.65.1" ] && [ -x node_modules/.bin/code-server ]; then
  exit 0
fi

# @vscode/ripgrep (a code-server dependency) downloads `rg` unless it finds this tarball in its
# cache under the temporary folder; there is no network for that download, so hand it Debian's rg.
cache="$(node -p 'require("os").tmpdir()')/vscode-ripgrep-cache-1.15.11"
tarball="$cache/ripgrep-v13.0.0-10-x86_64-unknown-linux-musl.tar.gz"
if [ ! -s "$tarball" ]; then
  mkdir -p "$cache"
  work="$(mktemp -d)"
  cp "$(command -v rg)" "$work/rg"
  tar -C "$work" -czf "$tarball" rg
  rm -rf "$work"
fi

# Root needs unsafe_perm for the install scripts; node-pty's build runs npx, which needs yes.
export npm_config_unsafe_perm=true npm_config_yes=true
if [ -f package-lock.json ]; then
  npm ci --no-audit --no-fund
else
  npm install --no-audit --no-fund
fi
test -x node_modules/.bin/code-server

#!/usr/bin/env bash
# Installs the real editor hosts the end-to-end suites drive: Debian's Neovim (LSP client),
# Debian's Chromium (for Playwright), and code-server from npm into a tool directory outside the
# repository's node_modules (it is 300 MB and must not become a dependency of the project).
#
# Usage: bash scripts/install-editor-hosts.sh [TOOLS_DIR]
# Prints the tool directory on its last line. Safe to run again: each step is skipped when done.
set -euo pipefail

TOOLS=${1:-${OFFLOAD_LEDGER_TOOLS:-$HOME/.cache/offload-ledger-tools}}
CODE_SERVER_VERSION=4.100.3   # the newest code-server whose engines field accepts Node 20
RIPGREP_CACHE_VERSION=1.15.11 # the @vscode/ripgrep version code-server 4.100.3 depends on
mkdir -p "$TOOLS"

SUDO=""; [ "$(id -u)" -ne 0 ] && SUDO="sudo"
need=()
command -v nvim >/dev/null || need+=(neovim)
command -v chromium >/dev/null || need+=(chromium)
command -v rg >/dev/null || need+=(ripgrep)
# kerberos (a code-server dependency) compiles against the GSSAPI headers.
[ -f /usr/include/gssapi/gssapi.h ] || need+=(libkrb5-dev)
command -v curl >/dev/null || need+=(curl)
if [ ${#need[@]} -gt 0 ]; then
  echo "install-editor-hosts: apt-get install ${need[*]}" >&2
  $SUDO apt-get update -qq
  DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -qq "${need[@]}" >/dev/null
fi

CS="$TOOLS/code-server"
if [ ! -x "$CS/node_modules/.bin/code-server" ] || ! grep -q "\"version\": \"$CODE_SERVER_VERSION\"" "$CS/node_modules/code-server/package.json" 2>/dev/null; then
  echo "install-editor-hosts: npm install code-server@$CODE_SERVER_VERSION into $CS" >&2
  mkdir -p "$CS"
  # @vscode/ripgrep's postinstall downloads rg from a release page this machine cannot reach; it
  # first looks in its cache under TMPDIR, so the cache is seeded with Debian's rg.
  export TMPDIR="$CS/tmp"
  mkdir -p "$TMPDIR/vscode-ripgrep-cache-$RIPGREP_CACHE_VERSION" "$CS/rgpack"
  cp "$(command -v rg)" "$CS/rgpack/rg"
  tar czf "$TMPDIR/vscode-ripgrep-cache-$RIPGREP_CACHE_VERSION/ripgrep-v13.0.0-10-x86_64-unknown-linux-musl.tar.gz" -C "$CS/rgpack" rg
  [ -f "$CS/package.json" ] || (cd "$CS" && npm init -y >/dev/null)
  # node-pty's postinstall runs `npx node-gyp`; npm_config_yes lets npx install it without a prompt.
  (cd "$CS" && npm_config_yes=true npm install --no-audit --no-fund --unsafe-perm "code-server@$CODE_SERVER_VERSION" >&2)
fi
echo "$TOOLS"

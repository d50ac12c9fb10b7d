#!/bin/sh
# Install Debian's chromium for the report package's browser test, if it is not there yet.
# Idempotent: does nothing when /usr/bin/chromium exists. Needs root (CI runs it before tests).
set -eu
if [ -x /usr/bin/chromium ]; then
  echo "ensure-chromium: /usr/bin/chromium present ($(/usr/bin/chromium --version 2>/dev/null || echo 'version unknown'))"
  exit 0
fi
SUDO=""
if [ "$(id -u)" -ne 0 ]; then
  if command -v sudo >/dev/null 2>&1; then SUDO="sudo"; else
    echo "ensure-chromium: /usr/bin/chromium is missing and this is not root (no sudo); install the Debian 'chromium' package." >&2
    exit 1
  fi
fi
echo "ensure-chromium: installing Debian chromium (about 480 MB, about a minute)…"
$SUDO apt-get update
DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y --no-install-recommends chromium
/usr/bin/chromium --version

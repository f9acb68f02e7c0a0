#!/usr/bin/env bash
# Install Debian's chromium for the browser tests if it is missing (needs root, as on CI).
set -euo pipefail
if [ -x /usr/bin/chromium ]; then exit 0; fi
echo "installing Debian's chromium for the browser tests" >&2
export DEBIAN_FRONTEND=noninteractive
apt-get update -qq >&2
apt-get install -y -qq chromium >&2

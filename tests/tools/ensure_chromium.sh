#!/usr/bin/env bash
# Install what the browser and record tests need from Debian if it is missing (needs root, as on CI):
# chromium for the browser tests, poppler-utils (pdftoppm) to render records to PNG, and HarfBuzz's subsetter
# (libharfbuzz-subset0), which WeasyPrint 70 and later use to embed font subsets (without it they warn).
set -euo pipefail
missing=()
[ -x /usr/bin/chromium ] || missing+=(chromium)
command -v pdftoppm >/dev/null 2>&1 || missing+=(poppler-utils)
ldconfig -p | grep 'libharfbuzz-subset\.so' >/dev/null || missing+=(libharfbuzz-subset0)
[ ${#missing[@]} -eq 0 ] && exit 0
echo "installing from Debian for the tests: ${missing[*]}" >&2
export DEBIAN_FRONTEND=noninteractive
apt-get update -qq >&2
apt-get install -y -qq "${missing[@]}" >&2

#!/bin/sh
# Run by .ci/run before the tests: the browser test needs Debian's chromium.
set -eu
sh "$(dirname "$0")/ensure-chromium.sh"

#!/usr/bin/env bash
# CI setup of @tuningfork/cli (run by .ci/run before `npm test`): builds the packages and runs the
# real single-node Slurm job-array test, which installs the scheduler if needed and stops it
# afterwards. A failure of the test fails CI.
set -euo pipefail
cd "$(dirname "${BASH_SOURCE[0]}")/../../.."
npx tsc -b
timeout 1500 bash packages/cli/scripts/slurm-array-test.sh

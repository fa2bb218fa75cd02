#!/usr/bin/env bash
# A longer fuzzing run of the weight-file reader than CI's (50,000 cases per property by default).
set -euo pipefail
cd "$(dirname "$0")/.."
WEFT_FUZZ_RUNS="${1:-50000}" npx vitest run packages/io/test/fuzz.test.ts --testTimeout=3600000

#!/usr/bin/env bash
# A longer fuzzing run than CI's: the weight-file reader (bytes, fields, shapes) and hostile weight files and
# checkpoints through the command (description, metadata and training state), RUNS cases per property
# (default 50,000; CI runs 2,000 and 1,000).
set -euo pipefail
cd "$(dirname "$0")/.."
npm run build >/dev/null
WEFT_FUZZ_RUNS="${1:-50000}" npx vitest run packages/io/test/fuzz.test.ts packages/cli/test/fuzz-files.test.ts --testTimeout=3600000

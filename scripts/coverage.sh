#!/usr/bin/env bash
# Coverage of the 95% intervals on cases with exact answers (closed forms and
# exact Markov chains): each case runs once per master seed, and each checked
# figure gets its exact value, the mean of the estimates with its standard
# error, the bias in standard errors, the coverage and the mean relative
# half-width, then a markdown table for DEVELOPERS.md.
#
#   bash scripts/coverage.sh --seeds 200 --threads 2
#   bash scripts/coverage.sh --seeds 100 --case redials --case engset
#   bash scripts/coverage.sh --list
#
# Exit status: 0 every case passes, 1 some figure fails (coverage below 92%
# or bias beyond 3 standard errors), 2 bad flags or a case that cannot run.
set -euo pipefail
cd "$(dirname "$0")/.."

cargo build --release --quiet --example coverage
exec target/release/examples/coverage "$@"

#!/usr/bin/env bash
# Coverage of the 95% intervals on cases with exact answers (closed forms and
# exact Markov chains): each case runs once per master seed, and each checked
# figure gets its exact value, the mean of the estimates with its standard
# error, the bias in standard errors, the coverage and the mean relative
# half-width, then a markdown table for docs/coverage.md.
#
#   bash scripts/coverage.sh --threads 2                  # 1,000 seeds per case (~15 s on 2 cores)
#   bash scripts/coverage.sh --seeds 200 --case redials --case engset
#   bash scripts/coverage.sh --list
#
# Seeds: with 1,000 (the default) a true 95% coverage falls below 92% with a
# chance near 1e-5 per figure; with 200, near 2.5%, so a full run of 28
# figures then fails by chance about half the time: use small counts only for
# a quick look at one case.
#
# Exit status: 0 every case passes, 1 some figure fails (coverage below 92%
# or bias beyond 3 standard errors), 2 bad flags or a case that cannot run.
set -euo pipefail
cd "$(dirname "$0")/.."

cargo build --release --quiet --example coverage
exec target/release/examples/coverage "$@"

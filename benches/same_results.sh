#!/usr/bin/env bash
# Check that two builds of busyhour give byte-identical results: every shipped
# scenario, the identity scenarios of benches/identity/ (every engine feature;
# a grid of exactly simultaneous events) and the benchmark cases (short runs),
# under several seeds and thread counts, as JSON.
#
#   benches/same_results.sh OLD_BINARY [NEW_BINARY]
#
# NEW_BINARY defaults to target/release/busyhour. Build OLD_BINARY from the
# commit to compare against (for example with `git worktree add`), or keep a
# copy of target/release/busyhour from before a change. Exit status 1 when
# any output differs.
set -euo pipefail
cd "$(dirname "$0")/.."

OLD=${1:?usage: benches/same_results.sh OLD_BINARY [NEW_BINARY]}
NEW=${2:-target/release/busyhour}
WORK=$(mktemp -d)
trap 'rm -rf "$WORK"' EXIT

files=(scenarios/*.toml benches/identity/*.toml)
for f in benches/cases/*.toml; do
    out="$WORK/$(basename "$f")"
    sed 's/"LENGTH"/"3h"/' "$f" >"$out"
    files+=("$out")
done

compared=0
differ=0
for f in "${files[@]}"; do
    for args in "--seed 1" "--seed 2 --threads 1" "--seed 3 --threads 2 --replications 5"; do
        # shellcheck disable=SC2086
        "$OLD" run "$f" $args --json --quiet >"$WORK/old.json"
        # shellcheck disable=SC2086
        "$NEW" run "$f" $args --json --quiet >"$WORK/new.json"
        compared=$((compared + 1))
        if ! cmp -s "$WORK/old.json" "$WORK/new.json"; then
            echo "DIFFERENT: $f $args"
            differ=$((differ + 1))
        fi
    done
done
echo "$compared runs compared, $differ different"
[ "$differ" -eq 0 ]

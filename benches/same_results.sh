#!/usr/bin/env bash
# Check that two builds of busyhour give byte-identical results: every shipped
# scenario, the identity scenarios of benches/identity/ (every engine feature;
# a grid of exactly simultaneous events) and the benchmark cases (short runs),
# under several seeds and thread counts, as JSON.
#
#   benches/same_results.sh OLD_BINARY [NEW_BINARY]
#
# LONG=1 also compares long runs of the benchmark cases (millions of calls,
# so the calendar resizes and re-measures as it does in real studies; about
# under a minute). NEW_BINARY defaults to target/release/busyhour. Build OLD_BINARY from the
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

long=()
if [ "${LONG:-0}" = 1 ]; then
    for spec in case1-exponential:3000h case2-lognormal:1000h case3-servers-10:30000h \
        case3-servers-1000:50h case3-servers-10000:20h case4-overflow-network:2000h \
        case5-queue-peak:2000h; do
        out="$WORK/long-${spec%%:*}.toml"
        sed "s/\"LENGTH\"/\"${spec#*:}\"/" "benches/cases/${spec%%:*}.toml" >"$out"
        long+=("$out")
    done
fi

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
for f in "${long[@]}"; do
    "$OLD" run "$f" --json --quiet >"$WORK/old.json"
    "$NEW" run "$f" --json --quiet >"$WORK/new.json"
    compared=$((compared + 1))
    if ! cmp -s "$WORK/old.json" "$WORK/new.json"; then
        echo "DIFFERENT: $f"
        differ=$((differ + 1))
    fi
done
echo "$compared runs compared, $differ different"
[ "$differ" -eq 0 ]

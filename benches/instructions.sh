#!/usr/bin/env bash
# Instructions executed by two builds of busyhour on the same runs, counted
# exactly by valgrind's cachegrind (no cache simulation), and their ratio.
# Instruction counts do not drift with the load of a shared machine as wall
# times do, so they judge an engine change of a few percent.
#
#   benches/instructions.sh OLD_BINARY [NEW_BINARY]
#
# NEW_BINARY defaults to target/release/busyhour. Each case runs replications
# 0 and 1 on one thread (`--replications 2 --threads 1 --json --quiet`); the
# counts include start-up, parsing and the report, which are small beside
# the hundreds of thousands of calls each case simulates. Settings
# (environment): CASES, a list of CASE:LENGTH (a file of benches/cases/ and
# the length that replaces its "LENGTH"). Needs valgrind. Prints one line
# per case and the instructions per offered call of each build.
set -euo pipefail
cd "$(dirname "$0")/.."

OLD=${1:?usage: benches/instructions.sh OLD_BINARY [NEW_BINARY]}
NEW=${2:-target/release/busyhour}
CASES=${CASES:-case1-exponential:200h case2-lognormal:100h case3-servers-10:1000h case4-overflow-network:60h case5-queue-peak:100h}
command -v valgrind >/dev/null || {
    echo "instructions.sh: valgrind is missing" >&2
    exit 2
}
WORK=$(mktemp -d)
trap 'rm -rf "$WORK"' EXIT

# instructions BINARY FILE -> the instructions executed ("I refs")
instructions() {
    valgrind --tool=cachegrind --cache-sim=no --cachegrind-out-file=/dev/null \
        "$1" run "$2" --replications 2 --threads 1 --json --quiet \
        2>"$WORK/log" >"$WORK/out.json"
    sed -n 's/.*I *refs: *\([0-9,]*\).*/\1/p' "$WORK/log" | tr -d ,
}

# calls_of JSON -> calls offered in the measured periods of both replications
calls_of() {
    python3 -c '
import json, sys
d = json.load(open(sys.argv[1]))
print(sum(round(s["offered_calls"]["mean"] * s["offered_calls"]["replications"]) for s in d["streams"]))' "$1"
}

printf '%-26s %14s %14s %8s %10s %10s\n' case old new new/old "old/call" "new/call"
for spec in $CASES; do
    name=${spec%%:*}
    file="$WORK/$name.toml"
    sed "s/\"LENGTH\"/\"${spec#*:}\"/" "benches/cases/$name.toml" >"$file"
    old=$(instructions "$OLD" "$file")
    new=$(instructions "$NEW" "$file")
    calls=$(calls_of "$WORK/out.json")
    python3 -c "
old, new, calls = $old, $new, $calls
print(f'{\"$name\":<26} {old:>14,} {new:>14,} {new / old:>8.4f} {old / calls:>10.1f} {new / calls:>10.1f}')"
done

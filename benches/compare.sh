#!/usr/bin/env bash
# Engine speed, measured as ratios within one run (the machine is shared and
# noisy, so absolute times drift; ratios measured side by side hold better).
#
#   benches/compare.sh            full run (about 3 minutes)
#   QUICK=1 benches/compare.sh    skip the 100-million-call memory run
#
# Settings (environment): CALLS simulated calls per Rust measurement (default
# 20,000,000), SIMPY_CALLS for the SimPy model (default 300,000), REPEATS
# rounds (default 3). Each round runs every measurement once, in turn; the
# best round of each is reported (the least disturbed by other work), with
# the median beside it.
#
# busyhour is timed as a whole process (`busyhour run ... --json`, start-up,
# parsing and the report included), counting the calls offered in the
# measured period only (warm-up calls are simulated but not counted). The
# minimal loop (examples/minimal_loop.rs) and the SimPy model
# (benches/simpy_case1.py, needs `pip install simpy`) time their own loop.
set -euo pipefail
cd "$(dirname "$0")/.."

CALLS=${CALLS:-20000000}
SIMPY_CALLS=${SIMPY_CALLS:-300000}
REPEATS=${REPEATS:-3}
QUICK=${QUICK:-0}
BIN=target/release/busyhour
LOOP=target/release/examples/minimal_loop
WORK=$(mktemp -d)
trap 'rm -rf "$WORK"' EXIT

cargo build --release --quiet --bin busyhour --example minimal_loop
python3 -c "import simpy" 2>/dev/null || {
    echo "compare.sh: SimPy is missing: pip install simpy" >&2
    exit 2
}

now_ns() { date +%s%N; }

# scenario CASE_FILE CALLS_PER_HOUR TOTAL_CALLS MIN_REPLICATIONS -> writes
# $WORK/NAME.toml sized for TOTAL_CALLS over its replications and prints
# "FILE REPLICATIONS". A replication runs at most 50,000 hours (the file
# format allows ten years).
scenario() {
    local file=$1 per_hour=$2 total=$3 min_reps=$4
    python3 - "$file" "$per_hour" "$total" "$min_reps" "$WORK" <<'EOF'
import math, os, sys
file, per_hour, total, min_reps, work = sys.argv[1], float(sys.argv[2]), float(sys.argv[3]), int(sys.argv[4]), sys.argv[5]
hours = total / per_hour
reps = max(min_reps, math.ceil(hours / 50000))
seconds = max(60, round(hours / reps * 3600))
out = os.path.join(work, os.path.basename(file))
text = open(file).read().replace('"LENGTH"', f'"{seconds}s"')
open(out, "w").write(text)
print(out, reps)
EOF
}

# calls_of JSON -> calls offered in the measured periods of every replication
calls_of() {
    python3 -c '
import json, sys
d = json.load(open(sys.argv[1]))
print(sum(round(s["offered_calls"]["mean"] * s["offered_calls"]["replications"]) for s in d["streams"]))' "$1"
}

# time_busyhour FILE REPLICATIONS THREADS -> "calls wall_seconds cpu_seconds"
time_busyhour() {
    local file=$1 reps=$2 threads=$3 t0 t1
    t0=$(now_ns)
    /usr/bin/time -f "%U %S" -o "$WORK/cpu" \
        "$BIN" run "$file" --replications "$reps" --threads "$threads" --json --quiet >"$WORK/out.json"
    t1=$(now_ns)
    echo "$(calls_of "$WORK/out.json") $(python3 -c "print(($t1 - $t0) / 1e9)") $(python3 -c "print(sum(map(float, '$(cat "$WORK/cpu")'.split())))")"
}

# Measurements: name, then the command producing "calls seconds".
declare -a NAMES=()
declare -A CMDS=()
add() {
    NAMES+=("$1")
    CMDS[$1]=$2
}

read -r F REPS < <(scenario benches/cases/case1-exponential.toml 1800 "$CALLS" 2)
add case1 "time_busyhour $F $REPS 1"
read -r F REPS < <(scenario benches/cases/case2-lognormal.toml 1800 "$CALLS" 2)
add case2 "time_busyhour $F $REPS 1"
for n in 10 100 1000 10000; do
    per_hour=$(sed -n 's/.*rate = "\([0-9.]*\)\/h".*/\1/p' "benches/cases/case3-servers-$n.toml")
    read -r F REPS < <(scenario "benches/cases/case3-servers-$n.toml" "$per_hour" "$CALLS" 2)
    add "case3-$n" "time_busyhour $F $REPS 1"
done
read -r F REPS < <(scenario benches/cases/case4-overflow-network.toml 3200 "$CALLS" 2)
add case4 "time_busyhour $F $REPS 1"
# Case 5's profile averages about 1,000 calls/h over its first two hours and
# holds 800/h after; redials are not counted as calls.
read -r F REPS < <(scenario benches/cases/case5-queue-peak.toml 800 "$((CALLS / 2))" 2)
add case5 "time_busyhour $F $REPS 1"
read -r F REPS < <(scenario benches/cases/case1-exponential.toml 1800 "$CALLS" 8)
add case6-1thread "time_busyhour $F $REPS 1"
add case6-2threads "time_busyhour $F $REPS 2"
add minimal-loop "$LOOP $CALLS 107 90"
add simpy "python3 benches/simpy_case1.py $SIMPY_CALLS 107 90"

declare -A RATES=()
LOAD_BEFORE=$(cut -d' ' -f1-3 /proc/loadavg)
for round in $(seq "$REPEATS"); do
    echo "round $round of $REPEATS" >&2
    for name in "${NAMES[@]}"; do
        read -r calls seconds cpu < <(eval "${CMDS[$name]}")
        RATES[$name]="${RATES[$name]:-} $(python3 -c "print($calls / $seconds)")"
        if [[ $name == case6* ]]; then
            RATES[cpu-$name]="${RATES[cpu-$name]:-} $(python3 -c "print($calls / $cpu)")"
        fi
    done
done

# Results: best and median of the rounds, then the ratios against targets.
{
    for name in "${NAMES[@]}" cpu-case6-1thread cpu-case6-2threads; do
        echo "$name${RATES[$name]}"
    done
} | python3 benches/compare_report.py
LOAD_AFTER=$(cut -d' ' -f1-3 /proc/loadavg)
echo "load average (1, 5, 15 min) before: $LOAD_BEFORE, after: $LOAD_AFTER, on $(nproc) cores"
echo "(two threads can only run twice as fast when two cores are free: other work on the"
echo " machine shows as load; compare case 6 with the load average)"

# Peak memory of a 100-million-call run (two replications of 50 million on
# one thread), and the wall time of `busyhour calc`.
echo
if [ "$QUICK" != 1 ]; then
    read -r F REPS < <(scenario benches/cases/case1-exponential.toml 1800 100000000 2)
    /usr/bin/time -f "%M" -o "$WORK/rss" "$BIN" run "$F" --replications "$REPS" --threads 1 --json --quiet >"$WORK/out.json"
    calls=$(calls_of "$WORK/out.json")
    rss_kb=$(cat "$WORK/rss")
    python3 -c "print(f'memory: {$calls:,} calls, peak resident {$rss_kb / 1024:.1f} MiB   target < 50 MB   ' + ('met' if $rss_kb * 1024 < 50e6 else 'MISSED'))"
fi
python3 - "$BIN" <<'EOF'
# Wall time of `busyhour calc` from spawn to exit, beside the same for
# /bin/true (the floor: starting any process here).
import os, statistics, sys, time

def wall_ms(argv, runs=200):
    times = []
    for _ in range(runs):
        t0 = time.perf_counter()
        pid = os.posix_spawn(argv[0], argv, os.environ,
                             file_actions=[(os.POSIX_SPAWN_OPEN, 1, os.devnull, os.O_WRONLY, 0)])
        os.waitpid(pid, 0)
        times.append((time.perf_counter() - t0) * 1000)
    return min(times), statistics.median(times)

calc = wall_ms([sys.argv[1], "calc", "loss", "--traffic", "90", "--servers", "107"])
floor = wall_ms(["/bin/true"])
verdict = "met" if calc[1] < 5 else "MISSED"
print(f"calc: busyhour calc loss, wall time including process start (200 runs): best {calc[0]:.2f} ms, "
      f"median {calc[1]:.2f} ms   target < 5 ms   {verdict}")
print(f"      (/bin/true, the cost of starting any process here: best {floor[0]:.2f} ms, median {floor[1]:.2f} ms)")
EOF

#!/usr/bin/env bash
# Time of per-interval staffing by simulation on a 20-interval day with
# 50-100 agents (issue 17's target: under a minute on two cores). Prints the
# wall time, the simulations run and the plan's range; not a test.
#
#   bash benches/staffing.sh [BINARY]
set -euo pipefail
cd "$(dirname "$0")/.."
BIN=${1:-target/release/busyhour}
WORK=$(mktemp -d)
trap 'rm -rf "$WORK"' EXIT
cat >"$WORK/day.toml" <<'TOML'
title = "Benchmark: a 20-interval day, 50 to 100 agents"
[simulation]
warmup = "1h"
length = "10h"
interval = "30m"
replications = 100
seed = 1
[[group]]
name = "agents"
servers = 60
queue = "unlimited"
[[stream]]
name = "calls"
arrivals = { law = "poisson", interval = "30m", rates = ["690/h", "862/h", "1035/h", "1207/h", "1322/h", "1380/h", "1322/h", "1207/h", "1092/h", "977/h", "919/h", "862/h", "919/h", "1035/h", "1150/h", "1207/h", "1150/h", "1035/h", "862/h", "690/h"] }
holding = { law = "lognormal", mean = "4m", cv = 0.9 }
route = ["agents"]
patience = { law = "exponential", mean = "2m" }
answer_within = "20s"
TOML
start=$(date +%s.%N)
"$BIN" size "$WORK/day.toml" --group agents --goal "service_level>=80%" --per-interval -q --json >"$WORK/plan.json"
end=$(date +%s.%N)
python3 - "$WORK/plan.json" "$start" "$end" <<'PY'
import json, sys
d = json.load(open(sys.argv[1]))
servers = [i["servers"] for i in d["intervals"]]
wall = float(sys.argv[3]) - float(sys.argv[2])
print(f"{len(servers)} intervals, agents {min(servers)}-{max(servers)}, "
      f"{d['rounds']} simulations of {d['replications']} replications, "
      f"met {d['met']}: {wall:.1f} s wall")
PY

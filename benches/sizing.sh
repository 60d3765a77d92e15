#!/usr/bin/env bash
# Sizing benchmark: the fewest servers for a 1% loss goal on a group near
# 1,000 servers, every replication plan driven to 5% relative precision.
# Prints the answer and the wall time; run from the repository root.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
scenario=$(mktemp --suffix=.toml)
trap 'rm -f "$scenario"' EXIT
cat > "$scenario" <<'TOML'
[simulation]
warmup = "30m"
length = "2h"
precision = "5%"
max_replications = 400
seed = 1
[[group]]
name = "trunks"
servers = 1000
[[stream]]
name = "calls"
arrivals = { law = "poisson", rate = "18800/h" }
holding = { law = "exponential", mean = "3m" }
route = ["trunks"]
TOML
for cap in 400 2000; do
    start=$(date +%s.%N)
    ./target/release/busyhour size "$scenario" --group trunks --goal "loss<=1%" --decide-within "$cap" --quiet \
        | grep -E "^Answer|^Sizes tried|undecided|holds" | head -4
    end=$(date +%s.%N)
    echo "decide-within $cap: $(echo "$end - $start" | bc) s wall on $(nproc) cores"
done

#!/usr/bin/env bash
# Ten million call records through `busyhour records`: rows per second and
# peak memory (maximum resident set size). The memory must not grow with the
# rows: per-interval accumulators and a fixed reservoir sample only.
#
#   bash scripts/records-bench.sh            # 10,000,000 rows in /tmp
#   ROWS=1000000 bash scripts/records-bench.sh
#
# The generated file (about 0.5 GB for 10M rows) is kept in /tmp for reruns;
# it is never committed.
set -euo pipefail
cd "$(dirname "$0")/.."

ROWS=${ROWS:-10000000}
FILE=${FILE:-/tmp/busyhour-calls-$ROWS.csv}
TIME=/usr/bin/time
if [ ! -x "$TIME" ]; then
    echo "needs GNU time at $TIME (apt-get install time)" >&2
    exit 2
fi

cargo build --release --quiet --example synthetic_calls --bin busyhour

if [ ! -s "$FILE" ]; then
    echo "== generating $ROWS rows into $FILE"
    # 36,000 calls/h (1800 E offered to 2000 circuits), lognormal holding.
    ./target/release/examples/synthetic_calls --preset flat --rate 36000/h \
        --mean 3m --cv 1.2 --servers 2000 --days 30 --max-rows "$ROWS" --out "$FILE"
fi

bytes=$(stat -c %s "$FILE")
rows=$(( $(wc -l < "$FILE") - 1 ))
log=$(mktemp)
echo "== busyhour records on $rows rows ($((bytes / 1048576)) MiB)"
"$TIME" -v ./target/release/busyhour records "$FILE" --json --out /tmp/busyhour-records-bench.json 2> "$log"
seconds=$(awk -F': ' '/Elapsed \(wall clock\)/ {
    n = split($2, p, ":"); s = 0; for (i = 1; i <= n; i++) s = s * 60 + p[i]; print s }' "$log")
rss_kb=$(awk -F': ' '/Maximum resident set size/ {print $2}' "$log")
rm -f "$log"
awk -v r="$rows" -v s="$seconds" -v b="$bytes" -v k="$rss_kb" 'BEGIN {
    printf "rows: %d\nwall time: %.2f s\nrows per second: %.0f\nthroughput: %.0f MiB/s\npeak RSS: %.1f MiB\n",
        r, s, r / s, b / 1048576 / s, k / 1024 }'

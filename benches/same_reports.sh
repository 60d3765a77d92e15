#!/usr/bin/env bash
# Check that two builds of busyhour print the same reports: the table, JSON,
# CSV, HTML and SVG of run, check, size, sweep, merge (run and sweep parts)
# and records on the shipped scenarios and call records, with fixed seeds and
# short runs. Wall-clock times are masked; everything else must match byte
# for byte. (benches/same_results.sh compares run JSON over many more seeds.)
#
#   benches/same_reports.sh OLD_BINARY [NEW_BINARY]
#
# NEW_BINARY defaults to target/release/busyhour. KEEP=DIR keeps both sets of
# outputs in DIR/old and DIR/new. Exit status 1 when any output differs.
set -uo pipefail
cd "$(dirname "$0")/.."

# HTML reports carry the time they were made: pin it (the reproducible-builds
# convention busyhour honours; see docs/files.md).
export SOURCE_DATE_EPOCH=1764763200

OLD=$(realpath "${1:?usage: benches/same_reports.sh OLD_BINARY [NEW_BINARY]}")
NEW=$(realpath "${2:-target/release/busyhour}")
ROOT=$PWD
WORK=$(mktemp -d)
trap 'rm -rf "$WORK"' EXIT
mkdir -p "$WORK/old" "$WORK/new" "$WORK/run"

# Every case runs in the same folder under the same paths for both builds
# (outputs quote the files they were given), then its files are moved aside.
cp scenarios/* "$WORK/run/"
cd "$WORK/run"

mask() {
    # Wall-clock seconds differ between runs of the same build.
    # (The events line: "N events simulated in 0.01 s (6.3 million a second)"
    # or "in under 0.01 s".)
    sed -E -e 's/ in [0-9]+\.[0-9]+ s$/ in T s/' \
        -e 's/ events simulated in .*$/ events simulated in T/' \
        -e 's/^Took [0-9]+\.[0-9]+ s\./Took T s./' \
        -e 's/"wall_s": [0-9.eE+-]+/"wall_s": T/'
}

# case NAME ARGS...: run both builds; stdout, stderr and the exit status are
# kept, and every file written to out.* beside them.
case_() {
    local name=$1
    shift
    for side in old new; do
        local bin=$OLD
        [ "$side" = new ] && bin=$NEW
        "$bin" "$@" >stdout 2>stderr
        echo "exit $?" >>stderr
        mask <stdout >"$WORK/$side/$name.stdout"
        mask <stderr >"$WORK/$side/$name.stderr"
        rm -f stdout stderr
        for f in out.* out-holding.csv; do
            [ -e "$f" ] || continue
            mask <"$f" >"$WORK/$side/$name.$f"
            rm -f "$f"
        done
    done
}

reps=(--seed 1 --replications 4 --quiet)
for s in *.toml; do
    b=${s%.toml}
    case_ "run-$b-table" run "$s" "${reps[@]}"
    case_ "run-$b-json" run "$s" "${reps[@]}" --json --report out.html
    case_ "run-$b-csv" run "$s" "${reps[@]}" --csv --out out.csv
    case_ "run-$b-file" run "$s" "${reps[@]}" --out out.txt
    case_ "check-$b" check "$s"
    case_ "check-$b-json" check "$s" --json
    sweep=(sweep "$s" --scale 0.8:1.2:0.2 --seed 2 --replications 3 --quiet)
    case_ "sweep-$b-table" "${sweep[@]}" --report out.html
    case_ "sweep-$b-json" "${sweep[@]}" --json --chart out.svg
    case_ "sweep-$b-csv" "${sweep[@]}" --csv
    case_ "sweep-$b-figure-table" "${sweep[@]}" --figure carried_traffic --figure loss
    case_ "sweep-$b-figure-csv" "${sweep[@]}" --figure loss --csv
    case_ "sweep-$b-figure-json" "${sweep[@]}" --figure loss --json
    # Parts of a run and of a sweep, merged.
    for i in 1 2; do
        "$NEW" run "$s" --seed 3 --replications 4 --shard "$i/2" --out "part$i.json" --quiet
        "$NEW" "${sweep[@]}" --shard "$i/2" --out "sweep$i.json"
    done
    case_ "merge-$b-table" merge part1.json part2.json --report out.html
    case_ "merge-$b-json" merge part1.json part2.json --json
    case_ "merge-$b-csv" merge part1.json part2.json --csv
    case_ "merge-sweep-$b-table" merge sweep1.json sweep2.json --report out.html
    case_ "merge-sweep-$b-json" merge sweep1.json sweep2.json --json
    case_ "merge-sweep-$b-csv" merge sweep1.json sweep2.json --csv
    rm -f part?.json sweep?.json
done
case_ run-harbour-peak-chart run harbour-peak.toml "${reps[@]}" --chart out.svg
case_ run-video-link-chart run video-link.toml "${reps[@]}" --chart out.svg
case_ size-harbour-peak-chart size harbour-peak.toml --group switchboard-lines --goal 'loss<=1%' \
    --seed 4 --replications 4 --decide-within 8 --quiet --chart out.svg
case_ sweep-campus-servers sweep campus-overflow.toml --servers carrier-shared=8:12:2 \
    --seed 2 --replications 3 --goal loss\<=1% --report out.html --quiet

size=(--seed 4 --replications 4 --decide-within 8 --quiet)
for spec in "campus-overflow carrier-shared loss<=1%" \
    "campus-overflow carrier-shared plant.loss<=2% occupancy>=30%" \
    "ferry-booking booking-agents service_level>=80% abandonment<=5%" \
    "harbour-peak switchboard-lines loss<=1%" \
    "video-link site-link video.loss<=2%"; do
    read -r b group goals <<<"$spec"
    goal_flags=()
    for g in $goals; do goal_flags+=(--goal "$g"); done
    name="size-$b-${goals//[^a-z0-9]/_}"
    case_ "$name-table" size "$b.toml" --group "$group" "${goal_flags[@]}" "${size[@]}" --report out.html
    case_ "$name-json" size "$b.toml" --group "$group" "${goal_flags[@]}" "${size[@]}" --json
done

case_ records-table records depot-calls.csv
case_ records-json records depot-calls.csv --json
case_ records-weekdays records depot-calls.csv --days mon-fri --interval 30m --chart out.svg
case_ records-scenario records depot-calls.csv --json --scenario-out out.toml --chart out.svg
case_ records-scenario-table records depot-calls.csv --scenario-out out.toml --grade 0.5% --out out.txt
case_ records-empirical records depot-calls.csv --json --scenario-out out.toml --empirical --servers 9
rm -f out-holding.csv

cd "$ROOT"
if [ -n "${KEEP:-}" ]; then
    mkdir -p "$KEEP"
    cp -r "$WORK/old" "$WORK/new" "$KEEP/"
fi
compared=$(find "$WORK/old" "$WORK/new" -type f -printf '%f\n' | sort -u | wc -l)
differ=0
while read -r f; do
    if ! cmp -s "$WORK/old/$f" "$WORK/new/$f"; then
        echo "DIFFERENT: $f"
        differ=$((differ + 1))
    fi
done < <(find "$WORK/old" "$WORK/new" -type f -printf '%f\n' | sort -u)
echo "$compared outputs compared, $differ different"
[ "$differ" -eq 0 ]

#!/usr/bin/env bash
# Instructions per series, by stage, of `thetaseek analyze --bootstrap 0 --report --table` on an
# invented campaign, beside those of the CSV floor program (examples/csv-floor.rs) on the same
# file. Counted by valgrind's callgrind on one thread: repeatable to the instruction, unlike wall
# time on a shared machine. It shows what the floor ratio of issue #8 is made of.
# Usage: bash scripts/instruction-budget.sh [SERIES]   (default 2000; needs valgrind)
set -euo pipefail
cd "$(dirname "$0")/.."
series=${1:-2000}
command -v valgrind >/dev/null || { echo "valgrind is needed (apt-get install valgrind)"; exit 1; }
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
cargo build --release --quiet --bin thetaseek --example make-campaign --example csv-floor
./target/release/examples/make-campaign --series "$series" --out "$work/campaign.csv" >/dev/null
count() { valgrind --tool=callgrind --callgrind-out-file="$1" "${@:2}" 2>&1 | awk '/Collected/ { print $4 }'; }
floor=$(count "$work/floor.cg" ./target/release/examples/csv-floor "$work/campaign.csv")
total=$(RAYON_NUM_THREADS=1 count "$work/analyze.cg" ./target/release/thetaseek analyze "$work/campaign.csv" \
  --bootstrap 0 --report "$work/r.json" --table "$work/t.csv" -q)
# Inclusive count of the first function whose name matches (0 when none does). awk reads to
# the end: leaving early would end callgrind_annotate by SIGPIPE, a failure under pipefail.
inclusive() {
  callgrind_annotate --inclusive=yes "$work/analyze.cg" 2>/dev/null |
    awk -v f="$1" '!found && index($0, f) { gsub(",", "", $1); print $1; found = 1 } END { if (!found) print 0 }'
}
analysis=$(inclusive "thetaseek::analysis::analyze_series_with_progress")
json=$(inclusive "serde_json::ser::to_writer")
table=$(inclusive "thetaseek::report::table::table_rows_csv")
# valgrind runs SHA-256 in software; the CPU uses its SHA instructions, so it is left out.
sha=$(inclusive "sha2::sha256::compress256")
awk -v n="$series" -v floor="$floor" -v total="$total" -v analysis="$analysis" -v json="$json" \
  -v table="$table" -v sha="$sha" 'BEGIN {
  rest = total - sha - analysis - json - table
  printf "%d series; instructions per series (thousands) and in floors (the floor program = 1)\n", n
  printf "%-44s %8.1f k  %5.2f\n", "floor: read and parse the CSV", floor / n / 1e3, 1
  printf "%-44s %8.1f k  %5.2f\n", "analysis (fits, theta models, joint fit)", analysis / n / 1e3, analysis / floor
  printf "%-44s %8.1f k  %5.2f\n", "JSON report (serde_json)", json / n / 1e3, json / floor
  printf "%-44s %8.1f k  %5.2f\n", "CSV table", table / n / 1e3, table / floor
  printf "%-44s %8.1f k  %5.2f\n", "reading, checks, grouping, the rest", rest / n / 1e3, rest / floor
  printf "%-44s %8.1f k  %5.2f\n", "analyze in all (SHA-256 left out)", (total - sha) / n / 1e3, (total - sha) / floor
}'

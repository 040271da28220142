#!/usr/bin/env bash
# End-to-end scale check: writes an invented 20 000-series campaign, times the CSV floor and
# `thetaseek analyze` on it, and prints their ratio, peak memory, the pandas pipeline's time
# (when pandas is installed) and the 1- vs 2-thread bootstrap.
# Usage: bash scripts/campaign-ratio.sh [SERIES]   (figures go in the notes, not in tests)
set -euo pipefail
cd "$(dirname "$0")/.."
series=${1:-20000}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
cargo build --release --quiet --bin thetaseek --example make-campaign --example csv-floor
./target/release/examples/make-campaign --series "$series" --out "$work/campaign.csv"
size_mb=$(du -m "$work/campaign.csv" | cut -f1)
# Each timing is the median of five runs (the first run of a fresh file is often slower).
median() { sort -g | awk '{ v[NR] = $1 } END { print v[int((NR + 1) / 2)] }'; }
floor=$(for _ in 1 2 3 4 5; do ./target/release/examples/csv-floor "$work/campaign.csv" 2>/dev/null; done | median)
# analyze, timed into new output files (the previous ones removed first, untimed) and replacing
# them: a filesystem that discards freed blocks (mounted with `discard`) spends tens of
# milliseconds releasing a 100 MB file in the rename that replaces it.
run_analyze() {
  start=$(date +%s.%N)
  /usr/bin/time -f "%M" -o "$work/mem" ./target/release/thetaseek analyze "$work/campaign.csv" \
    --bootstrap 0 --report-detail fits --report "$work/r.json" --table "$work/t.csv" -q
  end=$(date +%s.%N)
  cat "$work/mem" >> "$work/mems"
  awk -v a="$start" -v b="$end" 'BEGIN { print b - a }'
}
analyze=$(for _ in 1 2 3 4 5; do rm -f "$work/r.json" "$work/t.csv"; run_analyze; done | median)
replacing=$(for _ in 1 2 3 4 5; do run_analyze; done | median)
peak_mb=$(( $(sort -g "$work/mems" | tail -1) / 1024 ))
printf 'campaign: %s series, %s MB\n' "$series" "$size_mb"
printf 'floor (read + parse): %.3f s\nanalyze --bootstrap 0: %.3f s into new files, %.3f s replacing them\nratio: %.2f (replacing: %.2f)\npeak memory (largest of the ten): %s MB (%.1f x input)\n' \
  "$floor" "$analyze" "$replacing" "$(awk -v a="$analyze" -v f="$floor" 'BEGIN { print a / f }')" \
  "$(awk -v a="$replacing" -v f="$floor" 'BEGIN { print a / f }')" \
  "$peak_mb" "$(awk -v p="$peak_mb" -v s="$size_mb" 'BEGIN { print p / s }')"
# The scripted pipeline the issue compares with, timed once when pandas is installed
# (`pip install numpy pandas`; not needed by CI).
if python3 -c "import numpy, pandas" 2>/dev/null; then
  pandas=$(python3 scripts/pandas-baseline.py "$work/campaign.csv" "$work" 2>/dev/null)
  printf 'pandas group-by pipeline: %.2f s, %.0f x slower than analyze\n' "$pandas" \
    "$(awk -v p="$pandas" -v a="$analyze" 'BEGIN { print p / a }')"
else
  echo "pandas group-by pipeline: skipped (pip install numpy pandas to time it)"
fi
for threads in 1 2; do
  s=$(date +%s.%N)
  RAYON_NUM_THREADS=$threads ./target/release/thetaseek analyze "$work/campaign.csv" --bootstrap 200 -q
  e=$(date +%s.%N)
  printf 'analyze --bootstrap 200, %s thread(s): %.2f s\n' "$threads" "$(awk -v a="$s" -v b="$e" 'BEGIN { print b - a }')"
done

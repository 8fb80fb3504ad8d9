#!/usr/bin/env bash
# Runs each stallscope benchmark and its numpy reference side by side, in one
# run, and prints the ratio reference/stallscope (higher is better for us);
# a case run at several thread counts (Case/1, Case/2) gets a row for each.
# Usage: bench/compare.sh [build-dir]   (machine is shared: read ratios, not times)
set -euo pipefail
cd "$(dirname "$0")/.."
build=${1:-build}
export STALLSCOPE_BENCH_DIR=${STALLSCOPE_BENCH_DIR:-/tmp/stallscope-bench}
mkdir -p "$STALLSCOPE_BENCH_DIR"
# A current numpy is slowed by the OpenBLAS core-type override some machines set.
unset OPENBLAS_CORETYPE OPENBLAS_L2_SIZE || true
printf "%-28s %14s %14s %10s\n" "case" "stallscope s" "numpy s" "ratio"
for bin in "$build"/bench/bench_*; do
  [ -x "$bin" ] || continue
  base=$(basename "$bin"); ref="bench/reference/${base#bench_}.py"
  json=$(mktemp)
  OMP_NUM_THREADS=${OMP_NUM_THREADS:-1} "$bin" --benchmark_format=json --benchmark_min_time=0.5 >"$json" 2>/dev/null
  declare -A ours=()
  while read -r name secs; do ours[$name]=$secs; done < <(/usr/bin/python3 - "$json" <<'PY'
import json, sys
scale = {"ns": 1e-9, "us": 1e-6, "ms": 1e-3, "s": 1.0}
for b in json.load(open(sys.argv[1]))["benchmarks"]:
    # BM_Case/2/real_time -> Case/2: an argument (a thread count) keeps its own row.
    name = b["name"].removeprefix("BM_").removesuffix("/real_time")
    print(name, b["real_time"] * scale[b["time_unit"]])
PY
)
  rm -f "$json"
  if [ -f "$ref" ]; then
    while read -r name secs; do
      for case in $(printf "%s\n" "${!ours[@]}" | sort); do
        [ "$case" = "$name" ] || [ "${case%%/*}" = "$name" ] || continue
        o=${ours[$case]}
        printf "%-28s %14.5f %14.5f %9.1fx\n" "$case" "$o" "$secs" "$(/usr/bin/python3 -c "print($secs/$o)")"
      done
    done < <(/usr/bin/python3 "$ref")
  else
    for name in "${!ours[@]}"; do printf "%-28s %14.5f %14s %10s\n" "$name" "${ours[$name]}" "-" "-"; done
  fi
  unset ours
done

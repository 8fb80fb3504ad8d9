#!/usr/bin/env bash
# Campaign throughput on this machine: the same campaign of 8 runs reduced
# with -j 1, with -j 2 and (with an MPI build) by 2 MPI ranks, each from
# scratch (--force), and the ratios of runs per second between them.
# Usage: bench/campaign_throughput.sh [build-dir] [samples-per-run | synthetic]
#   A number: 8 CSV DAQ records of that many rows (default 400000) made here,
#   pressure-free runs of a fraction of a second. `synthetic`: the three
#   synthetic runs of sample_data/kestrel_ridge (taps, tubing, PIV: about a
#   second each), eight runs in turn from them, as a tunnel campaign's are.
#   The machine is shared, so read the ratios, not the times.
set -euo pipefail
cd "$(dirname "$0")/.."
build=${1:-build}
samples=${2:-400000}
bin="$build/stallscope"
work=${STALLSCOPE_BENCH_DIR:-/tmp/stallscope-bench}/campaign
mkdir -p "$work/raw"

if [ "$samples" = synthetic ]; then
/usr/bin/python3 - "$work" "$PWD" <<'PY'
import os, sys, tomllib
work, root = sys.argv[1], sys.argv[2]
configs = os.path.join(root, "configs")
with open(os.path.join(configs, "demo_campaign.toml"), "rb") as f:
    demo = tomllib.load(f)
def absolute(path):
    return os.path.normpath(os.path.join(configs, path))
def flat(table, prefix=""):  # dotted keys, as the manifest writes them
    for k, v in table.items():
        yield from flat(v, prefix + k + ".") if isinstance(v, dict) else [(prefix + k, v)]
manifest = f'[campaign]\nname = "throughput"\nbase = "{absolute(demo["campaign"]["base"])}"\n'
for r in range(8):
    run = demo["runs"][r % len(demo["runs"])]
    manifest += f'\n[[runs]]\nname = "r{r:02d}"\n'
    if "files" in run:
        manifest += "[runs.files]\n" + "".join(f'{k} = "{absolute(v)}"\n' for k, v in flat(run["files"]))
    if "settings" in run:
        manifest += "[runs.settings]\n"
        for k, v in flat(run["settings"]):
            manifest += f"{k} = {v!r}\n".replace("'", '"')
with open(f"{work}/campaign.toml", "w") as f:
    f.write(manifest)
PY
echo "campaign of 8 synthetic runs (sample_data/kestrel_ridge, in turn)"
else
/usr/bin/python3 - "$work" "$samples" <<'PY'
import math, sys
work, samples = sys.argv[1], int(sys.argv[2])
runs = 8
with open(f"{work}/base.toml", "w") as f:
    f.write('[run]\nname = "base"\nchord_m = 0.2\n\n[daq]\nfile = "raw/r00.csv"\n\n'
            '[daq.roles]\nangle = "alpha_enc"\nq_ref = "q_pitot"\n\n[conditions]\nvelocity_m_s = 20.0\n')
manifest = '[campaign]\nname = "throughput"\nbase = "base.toml"\n'
for r in range(runs):
    name = f"r{r:02d}"
    with open(f"{work}/raw/{name}.csv", "w") as f:
        f.write("time_s,alpha_enc,q_pitot\n")
        for i in range(samples):
            f.write(f"{i * 1e-4:.6f},{0.5 * math.sin(0.002 * i + r):.6f},{2.0 + 0.001 * r:.6f}\n")
    manifest += (f'\n[[runs]]\nname = "{name}"\n[runs.files]\ndaq.file = "raw/{name}.csv"\n'
                 f'[runs.settings]\nconditions.velocity_m_s = {15 + 2 * r}.0\n')
with open(f"{work}/campaign.toml", "w") as f:
    f.write(manifest)
PY
echo "campaign of 8 runs, $samples DAQ rows each"
fi

seconds() {  # wall time of a command, in seconds
  local t0 t1
  t0=$(date +%s.%N)
  "$@" >/dev/null
  t1=$(date +%s.%N)
  /usr/bin/python3 -c "print(f'{$t1 - $t0:.3f}')"
}

# -j 1 gives its one run both cores' threads; on one core (taskset) it is one
# run on one thread, the plain measure of runs reduced side by side.
j1=$(seconds "$bin" campaign -q "$work/campaign.toml" -o "$work/out-j1" -j 1 --force)
j1c=$(seconds taskset -c 0 "$bin" campaign -q "$work/campaign.toml" -o "$work/out-j1c" -j 1 --force)
j2=$(seconds "$bin" campaign -q "$work/campaign.toml" -o "$work/out-j2" -j 2 --force)
printf "%-22s %8s s\n" "-j 1" "$j1" "-j 1, one core" "$j1c" "-j 2" "$j2"
/usr/bin/python3 -c "print(f'throughput -j 2 / -j 1: {$j1 / $j2:.2f}x; -j 2 / -j 1 on one core: {$j1c / $j2:.2f}x')"
if command -v mpirun >/dev/null && \
   ldd "$bin" | grep -q libmpi; then
  mpi=$(seconds mpirun --allow-run-as-root --oversubscribe -np 2 "$bin" campaign -q "$work/campaign.toml" \
        -o "$work/out-mpi" --force)
  printf "%-22s %8s s\n" "mpirun -np 2" "$mpi"
  /usr/bin/python3 -c "print(f'throughput MPI 2 ranks / -j 2: {$j2 / $mpi:.2f}x')"
else
  echo "(no MPI build: skipped the 2-rank case)"
fi

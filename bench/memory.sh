#!/usr/bin/env bash
# Peak memory against the number of PIV frames: the large benchmark scenario
# (48 taps at 2 kHz for about a minute, 160 x 120 frames) made by `stallscope
# synth` with 1,000 and with 10,000 frames, the DAQ record the same in both,
# then reduced with its own reduce.toml. Synth appends frames to the stack one
# at a time and the PIV stages read it a chunk at a time, keeping a row per
# frame, so neither peak should grow with the frames; the ratios are printed,
# nothing is asserted.
# Usage: bench/memory.sh [build-dir]   (needs about 2 GB of disk in $STALLSCOPE_BENCH_DIR)
set -euo pipefail
cd "$(dirname "$0")/.."
build=${1:-build}
work=${STALLSCOPE_BENCH_DIR:-/tmp/stallscope-bench}/memory
mkdir -p "$work"
/usr/bin/python3 - "$build/stallscope" "$work" configs/scenarios/benchmark_large.toml <<'PY'
import os, re, shutil, subprocess, sys, time
binary, work, scenario = sys.argv[1:4]
text = open(scenario).read()
# One child at a time: RUSAGE_CHILDREN's ru_maxrss is the largest child so far,
# so each command runs under its own python child, which reads its child's peak.
probe = ("import resource, subprocess, sys; subprocess.run(sys.argv[1:], check=True, "
         "stdout=subprocess.DEVNULL); print(resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss)")
def peak_kib(*command):
    start = time.monotonic()
    out = subprocess.run([sys.executable, "-c", probe, binary, *command], check=True, capture_output=True, text=True)
    return int(out.stdout.split()[-1]), time.monotonic() - start
peaks = {"synth": {}, "reduce": {}}
for frames in (1000, 10000):
    path = os.path.join(work, f"frames_{frames}.toml")
    with open(path, "w") as f:
        f.write(re.sub(r"max_frames = \d+", f"max_frames = {frames}", text))
    raw, out = os.path.join(work, f"raw_{frames}"), os.path.join(work, f"out_{frames}")
    shutil.rmtree(raw, ignore_errors=True)
    shutil.rmtree(out, ignore_errors=True)
    kib, seconds = peak_kib("synth", path, "-o", raw, "--quiet")
    peaks["synth"][frames] = kib
    stack = os.path.getsize(os.path.join(raw, "piv.h5"))
    print(f"{frames:6d} frames: synth  peak RSS {kib / 1024:7.1f} MiB, piv.h5 {stack / 2**20:8.1f} MiB, {seconds:6.1f} s")
    kib, seconds = peak_kib("reduce", os.path.join(raw, "reduce.toml"), "-o", out, "-q", "--no-report")
    peaks["reduce"][frames] = kib
    print(f"{frames:6d} frames: reduce peak RSS {kib / 1024:7.1f} MiB, {seconds:6.1f} s")
    shutil.rmtree(raw, ignore_errors=True)
    shutil.rmtree(out, ignore_errors=True)
for command, p in peaks.items():
    growth = (p[10000] - p[1000]) * 1024 / 9000
    print(f"{command}: peak RSS ratio 10,000 / 1,000 frames {p[10000] / p[1000]:.3f}, {growth:.0f} B a frame "
          f"(flat memory: about 1; a 160 x 120 frame's u, v and fields are about 0.5 MB)")
PY

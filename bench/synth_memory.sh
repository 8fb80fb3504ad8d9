#!/usr/bin/env bash
# Peak memory of `stallscope synth` against the number of PIV frames: the large
# benchmark scenario (48 taps at 2 kHz for about a minute, 160 x 120 frames)
# written with 1,000 and with 10,000 frames, the DAQ record the same in both.
# Frames are appended to the stack a frame at a time, so the peak resident set
# should not grow with the frames; the ratio is printed, nothing is asserted.
# Usage: bench/synth_memory.sh [build-dir]   (needs about 2 GB of disk in $STALLSCOPE_BENCH_DIR)
set -euo pipefail
cd "$(dirname "$0")/.."
build=${1:-build}
work=${STALLSCOPE_BENCH_DIR:-/tmp/stallscope-bench}/synth_memory
mkdir -p "$work"
/usr/bin/python3 - "$build/stallscope" "$work" configs/scenarios/benchmark_large.toml <<'PY'
import os, re, resource, shutil, subprocess, sys, time
binary, work, scenario = sys.argv[1:4]
text = open(scenario).read()
peaks = {}
for frames in (1000, 10000):
    path = os.path.join(work, f"frames_{frames}.toml")
    with open(path, "w") as f:
        f.write(re.sub(r"max_frames = \d+", f"max_frames = {frames}", text))
    out = os.path.join(work, f"run_{frames}")
    shutil.rmtree(out, ignore_errors=True)
    start = time.monotonic()
    # One child at a time: RUSAGE_CHILDREN's ru_maxrss is the largest child so far, so run each in
    # its own python child and read its own children's peak.
    probe = ("import resource, subprocess, sys; subprocess.run(sys.argv[1:], check=True, "
             "stdout=subprocess.DEVNULL); print(resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss)")
    kib = int(subprocess.run([sys.executable, "-c", probe, binary, "synth", path, "-o", out, "--quiet"],
                             check=True, capture_output=True, text=True).stdout.split()[-1])
    seconds = time.monotonic() - start
    stack = os.path.getsize(os.path.join(out, "piv.h5"))
    peaks[frames] = kib
    print(f"{frames:6d} frames: peak RSS {kib / 1024:7.1f} MiB, piv.h5 {stack / 2**20:8.1f} MiB, {seconds:6.1f} s")
    shutil.rmtree(out, ignore_errors=True)
print(f"peak RSS ratio 10,000 / 1,000 frames: {peaks[10000] / peaks[1000]:.3f} (flat memory: about 1)")
PY

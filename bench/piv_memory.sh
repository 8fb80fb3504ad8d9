#!/usr/bin/env bash
# Peak memory of `stallscope reduce` against the number of PIV frames: the large
# benchmark scenario (48 taps at 2 kHz for about a minute, 160 x 120 frames)
# made with 1,000 and with 10,000 frames, the DAQ record the same in both, and
# reduced with its own reduce.toml. The PIV stages read the stack a chunk at a
# time and keep per-frame rows only, so the peak resident set should grow by
# those rows, not by the frames' fields; the ratio is printed, nothing asserted.
# Usage: bench/piv_memory.sh [build-dir]   (needs about 2 GB of disk in $STALLSCOPE_BENCH_DIR)
set -euo pipefail
cd "$(dirname "$0")/.."
build=${1:-build}
work=${STALLSCOPE_BENCH_DIR:-/tmp/stallscope-bench}/piv_memory
mkdir -p "$work"
/usr/bin/python3 - "$build/stallscope" "$work" configs/scenarios/benchmark_large.toml <<'PY'
import os, re, shutil, subprocess, sys, time
binary, work, scenario = sys.argv[1:4]
text = open(scenario).read()
# One child at a time: RUSAGE_CHILDREN's ru_maxrss is the largest child so far,
# so each reduce runs under its own python child, which reads its child's peak.
probe = ("import resource, subprocess, sys; subprocess.run(sys.argv[1:], check=True, "
         "stdout=subprocess.DEVNULL); print(resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss)")
peaks = {}
for frames in (1000, 10000):
    path = os.path.join(work, f"frames_{frames}.toml")
    with open(path, "w") as f:
        f.write(re.sub(r"max_frames = \d+", f"max_frames = {frames}", text))
    raw, out = os.path.join(work, f"raw_{frames}"), os.path.join(work, f"out_{frames}")
    shutil.rmtree(raw, ignore_errors=True)
    shutil.rmtree(out, ignore_errors=True)
    subprocess.run([binary, "synth", path, "-o", raw, "--quiet"], check=True, stdout=subprocess.DEVNULL)
    start = time.monotonic()
    kib = int(subprocess.run([sys.executable, "-c", probe, binary, "reduce", os.path.join(raw, "reduce.toml"), "-o",
                              out, "-q", "--no-report"], check=True, capture_output=True, text=True).stdout.split()[-1])
    seconds = time.monotonic() - start
    peaks[frames] = kib
    print(f"{frames:6d} frames: reduce peak RSS {kib / 1024:7.1f} MiB, {seconds:6.1f} s")
    shutil.rmtree(raw, ignore_errors=True)
    shutil.rmtree(out, ignore_errors=True)
growth = (peaks[10000] - peaks[1000]) * 1024 / 9000
print(f"peak RSS ratio 10,000 / 1,000 frames: {peaks[10000] / peaks[1000]:.3f}; {growth:.0f} B a frame "
      f"(a 160 x 120 frame's u, v and fields are about 0.5 MB)")
PY

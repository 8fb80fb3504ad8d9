#!/bin/sh
# The test suite (all but the coverage-rate checks, see below) under
# AddressSanitizer + UndefinedBehaviorSanitizer,
# in a build folder of its own. UB is fatal (-fno-sanitize-recover), so a
# sanitizer report fails its test. Exit status: ctest's.
#
#   tests/reliability/sanitize.sh            configure, build, run every test
# With clang (the default when installed) the same folder also builds the
# libFuzzer harnesses, so `FUZZ_BUILD=build-asan tests/fuzz/run.sh` reuses it.
# Environment: ASAN_BUILD (build folder, default build-asan), CC/CXX (default
# clang/clang++ if present), BUILD_JOBS (compile jobs, default 2), TEST_JOBS
# (tests side by side, default 2).
set -eu
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
build=${ASAN_BUILD:-$root/build-asan}
fuzz=OFF
if [ -z "${CXX:-}" ] && command -v clang++ >/dev/null 2>&1; then
  export CC=clang CXX=clang++
fi
case "${CXX:-}" in *clang*) fuzz=ON ;; esac
# -O1 -g1: what ASan suggests, and far quicker to compile than -O2 -g.
flags="-O1 -g1 -fno-sanitize-recover=undefined"
cmake -S "$root" -B "$build" -DCMAKE_BUILD_TYPE=None -DSTALLSCOPE_SANITIZE=ON -DSTALLSCOPE_FUZZ=$fuzz \
  -DSTALLSCOPE_BUILD_BENCH=OFF -DSTALLSCOPE_WERROR="${STALLSCOPE_WERROR:-OFF}" \
  "-DCMAKE_C_FLAGS=$flags" "-DCMAKE_CXX_FLAGS=$flags" >/dev/null
cmake --build "$build" -j"${BUILD_JOBS:-2}"
export ASAN_OPTIONS=${ASAN_OPTIONS:-detect_leaks=1:check_initialization_order=1:strict_init_order=1}
export LSAN_OPTIONS=${LSAN_OPTIONS:-suppressions=$here/lsan.supp:print_suppressions=0}
export UBSAN_OPTIONS=${UBSAN_OPTIONS:-print_stacktrace=1:halt_on_error=1}
# The coverage-rate checks (names ending "StatedRate") repeat one reduction or
# fit hundreds of times to count how often an interval covers the truth: the
# release suite runs them; here they would add a minute and no code path.
ctest --test-dir "$build" --output-on-failure -j"${TEST_JOBS:-2}" --timeout 900 -E 'StatedRate$'

#!/bin/sh
# The whole test suite under AddressSanitizer + UndefinedBehaviorSanitizer,
# in a build folder of its own. UB is fatal (-fno-sanitize-recover), so a
# sanitizer report fails its test. Exit status: ctest's.
#
#   tests/reliability/sanitize.sh            configure, build, run every test
# Environment: ASAN_BUILD (build folder, default build-asan), BUILD_JOBS
# (compile jobs, default 2), TEST_JOBS (tests side by side, default 2).
set -eu
root=$(cd "$(dirname "$0")/../.." && pwd)
build=${ASAN_BUILD:-$root/build-asan}
# -O1 -g1: what ASan suggests, and far quicker to compile than -O2 -g.
cmake -S "$root" -B "$build" -DCMAKE_BUILD_TYPE=None -DSTALLSCOPE_SANITIZE=ON \
  -DSTALLSCOPE_BUILD_BENCH=OFF "-DCMAKE_C_FLAGS=-O1 -g1 -fno-sanitize-recover=undefined" \
  "-DCMAKE_CXX_FLAGS=-O1 -g1 -fno-sanitize-recover=undefined" >/dev/null
cmake --build "$build" -j"${BUILD_JOBS:-2}"
export ASAN_OPTIONS=${ASAN_OPTIONS:-detect_leaks=1:check_initialization_order=1:strict_init_order=1}
export UBSAN_OPTIONS=${UBSAN_OPTIONS:-print_stacktrace=1:halt_on_error=1}
ctest --test-dir "$build" --output-on-failure -j"${TEST_JOBS:-2}" --timeout 900

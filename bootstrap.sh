#!/usr/bin/env bash
# stallscope set-up in one command:
#   ./bootstrap.sh demo   install what is missing, build, reduce the demo run
#   ./bootstrap.sh test   install what is missing, build, run the whole suite
# Only Debian packages are installed, and only those missing.
set -euo pipefail
cd "$(dirname "$0")"

usage() { echo "usage: ./bootstrap.sh demo|test" >&2; exit 2; }
[ $# -eq 1 ] || usage
mode=$1
case "$mode" in demo|test) ;; *) usage ;; esac

packages=(
  cmake g++ make pkg-config git
  libeigen3-dev libfftw3-dev libhdf5-dev libtomlplusplus-dev libcli11-dev libfmt-dev
  libcairo2-dev libssl-dev libdeflate-dev libopencv-imgproc-dev libopencv-calib3d-dev
  libgtest-dev libbenchmark-dev
  libopenmpi-dev openmpi-bin
  python3 python3-numpy python3-scipy python3-h5py python3-pil
  chromium fonts-dejavu-core
  clang libclang-rt-14-dev libomp-14-dev lld
)

missing=()
for p in "${packages[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
done
if [ ${#missing[@]} -gt 0 ]; then
  echo "bootstrap: installing ${missing[*]}" >&2
  sudo_cmd=()
  [ "$(id -u)" -eq 0 ] || sudo_cmd=(sudo)
  "${sudo_cmd[@]}" apt-get update -qq
  DEBIAN_FRONTEND=noninteractive "${sudo_cmd[@]}" apt-get install -y -qq --no-install-recommends "${missing[@]}" >/dev/null
fi

jobs=$(nproc 2>/dev/null || echo 2)
werror=OFF
[ -n "${CI:-}" ] && werror=ON
# Built with MPI (Debian's OpenMPI, installed above): the same binary reduces a
# campaign locally and, started by mpirun, across ranks.
cmake -S . -B build -DCMAKE_BUILD_TYPE=Release -DSTALLSCOPE_WITH_MPI=ON -DSTALLSCOPE_WERROR="$werror" >/dev/null
cmake --build build -j"$jobs"

case "$mode" in
  demo)
    ./build/stallscope reduce configs/demo.toml -o out/demo --force
    echo
    echo "demo archive: $(pwd)/out/demo"
    ls out/demo
    echo "look inside:  ./build/stallscope inspect out/demo/*.h5"
    ;;
  test)
    ctest --test-dir build --output-on-failure -j"$jobs"
    ;;
esac

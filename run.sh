#!/usr/bin/env bash
# coilkick's one entry point: installs missing Debian packages, builds, and runs.
#   ./run.sh demo    build, then compare every clamp on the bundled demo scenario (table + chart)
#   ./run.sh test    build, then run every test through CTest
#   ./run.sh build   configure (Release, build/) and build only
#   ./run.sh bench   build with the benchmarks and run them (never part of the tests)
#   ./run.sh sanitize  C++ tests under ASan+UBSan, threaded analyses under TSan
#   ./run.sh fuzz      libFuzzer targets (scenario reader, random networks, capture reader) for a set time
#   ./run.sh package   the Debian package (build/coilkick_<version>_<arch>.deb)
set -euo pipefail
cd "$(dirname "$0")"

PYTHON=/usr/bin/python3   # Debian's interpreter: the one with numpy/scipy from apt
BUILD_DIR=${COILKICK_BUILD_DIR:-build}
JOBS=${COILKICK_JOBS:-$(nproc)}

# Debian packages the build and tests need (all from the Debian archive).
PACKAGES=(cmake g++ make libboost-dev libeigen3-dev libtomlplusplus-dev libcli11-dev nlohmann-json3-dev doctest-dev libbenchmark-dev
          python3 python3-dev pybind11-dev python3-pybind11 python3-numpy python3-scipy python3-pandas
          python3-matplotlib python3-pytest python3-nbclient python3-nbformat python3-ipykernel python3-distributed
          python3-setuptools python3-wheel python3-pip python3-build python3-venv python3-jinja2
          chromium poppler-utils fonts-dejavu-core
          clang-14 libclang-rt-14-dev)

install_missing_packages() {
  local missing=()
  for p in "${PACKAGES[@]}"; do
    dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
  done
  if [ ${#missing[@]} -gt 0 ]; then
    echo "run.sh: installing Debian packages: ${missing[*]}"
    local sudo=""
    [ "$(id -u)" -ne 0 ] && sudo="sudo"
    $sudo env DEBIAN_FRONTEND=noninteractive apt-get update -qq
    $sudo env DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends "${missing[@]}"
  fi
}

# libFuzzer targets with clang, ASan and UBSan, in build-fuzz (the library is built again there).
FUZZ_CXX=${COILKICK_FUZZ_CXX:-clang++-14}
build_fuzzers() {
  cmake -S . -B build-fuzz -DCMAKE_BUILD_TYPE=RelWithDebInfo -DCMAKE_CXX_COMPILER="$FUZZ_CXX" \
    -DCOILKICK_BUILD_PYTHON=OFF -DCOILKICK_BUILD_TESTS=OFF -DCOILKICK_BUILD_FUZZ=ON \
    -DCMAKE_CXX_FLAGS="-fsanitize=fuzzer-no-link,address,undefined -fno-sanitize-recover=undefined" >/dev/null
  cmake --build build-fuzz -j "$JOBS" --target fuzz_scenario fuzz_network fuzz_capture
}

configure_and_build() {
  local extra=("$@")
  cmake -S . -B "$BUILD_DIR" -DCMAKE_BUILD_TYPE=Release -DPython3_EXECUTABLE="$PYTHON" "${extra[@]}" >/dev/null
  cmake --build "$BUILD_DIR" -j "$JOBS"
}

cmd=${1:-}
case "$cmd" in
  build)
    install_missing_packages
    configure_and_build
    ;;
  demo)
    install_missing_packages
    configure_and_build
    mkdir -p "$BUILD_DIR/demo"
    "$BUILD_DIR/bin/coilkick" demo --csv "$BUILD_DIR/demo/compare.csv" --plot "$BUILD_DIR/demo/compare.svg"
    echo "run.sh: comparison table in $BUILD_DIR/demo/compare.csv, chart in $BUILD_DIR/demo/compare.svg"
    ;;
  test)
    install_missing_packages
    build_fuzzers
    configure_and_build -DCOILKICK_FUZZERS_DIR="$PWD/build-fuzz/bin"
    (cd "$BUILD_DIR" && ctest --output-on-failure -j "$JOBS")
    ;;
  fuzz)
    # Each target for COILKICK_FUZZ_SECONDS (default 300) from a copy of the seed corpus.
    install_missing_packages
    build_fuzzers
    for t in scenario network capture; do
      mkdir -p "build-fuzz/corpus-$t"
      cp -n fuzz/corpus/$t/* "build-fuzz/corpus-$t/" 2>/dev/null || true
      "build-fuzz/bin/fuzz_$t" -max_total_time="${COILKICK_FUZZ_SECONDS:-300}" -timeout=45 -rss_limit_mb=2048 \
        -print_final_stats=1 "build-fuzz/corpus-$t" fuzz/corpus/$t
    done
    ;;
  sanitize)
    # C++ tests under AddressSanitizer + UndefinedBehaviorSanitizer (leaks included), then the
    # threaded analyses under ThreadSanitizer. Separate build trees; the Python package is off.
    install_missing_packages
    flags="-O1 -g -fno-omit-frame-pointer"
    cmake -S . -B build-asan -DCMAKE_BUILD_TYPE=Debug -DCOILKICK_BUILD_PYTHON=OFF \
      -DCMAKE_CXX_FLAGS="$flags -fsanitize=address,undefined -fno-sanitize-recover=undefined" \
      -DCMAKE_EXE_LINKER_FLAGS="-fsanitize=address,undefined" >/dev/null
    cmake --build build-asan -j "$JOBS"
    (cd build-asan && ctest --output-on-failure -j "$JOBS" -E install_and_consume)
    cmake -S . -B build-tsan -DCMAKE_BUILD_TYPE=Debug -DCOILKICK_BUILD_PYTHON=OFF \
      -DCMAKE_CXX_FLAGS="$flags -fsanitize=thread" -DCMAKE_EXE_LINKER_FLAGS="-fsanitize=thread" >/dev/null
    cmake --build build-tsan -j "$JOBS" --target scenario_tests
    (cd build-tsan && TSAN_OPTIONS=halt_on_error=1 ctest --output-on-failure -j 1 -R "sweep|tolerance|suggest")
    ;;
  package)
    # Its own build tree: installed under /usr, naming no path of this checkout.
    install_missing_packages
    BUILD_DIR=build-package configure_and_build -DCMAKE_INSTALL_PREFIX=/usr -DCOILKICK_EMBED_SOURCE_MODELS=OFF -DCOILKICK_BUILD_TESTS=OFF
    (cd build-package && cpack -G DEB)
    ls build-package/coilkick_*.deb
    ;;
  bench)
    install_missing_packages
    configure_and_build -DCOILKICK_BUILD_BENCH=ON
    "$BUILD_DIR/bin/engine_bench" --benchmark_min_time=0.2
    "$BUILD_DIR/bin/device_bench" --benchmark_min_time=0.2
    "$BUILD_DIR/bin/hold_bench"
    "$BUILD_DIR/bin/cable_bench"
    "$BUILD_DIR/bin/fit_bench"
    PYTHONPATH="$BUILD_DIR/python" "$PYTHON" bench/throughput.py
    COILKICK_BUILD_DIR="$BUILD_DIR" PYTHONPATH="$BUILD_DIR/python" "$PYTHON" bench/reference_transient.py
    ;;
  *)
    echo "usage: ./run.sh demo|test|build|bench|sanitize|fuzz|package" >&2
    exit 2
    ;;
esac

#!/usr/bin/env bash
# The robustness checks CI runs after the Release tests: a clang-16 build with AddressSanitizer,
# UndefinedBehaviorSanitizer and float-cast-overflow (every ctest test run under them), then each
# libFuzzer harness in fuzz/ for a fixed number of runs from its seed corpus, so a parser
# regression fails CI. Needs clang-16 and libclang-rt-16-dev (scripts/install-deps.sh).
set -euo pipefail
cd "$(dirname "$0")/.."
runs="${LAMPWRIGHT_FUZZ_RUNS:-20000}"
cxx="${LAMPWRIGHT_SANITIZE_CXX:-clang++-16}"
launcher=()
if command -v ccache >/dev/null 2>&1; then launcher=(-DCMAKE_CXX_COMPILER_LAUNCHER=ccache); fi

cmake -S . -B build-asan -DCMAKE_BUILD_TYPE=RelWithDebInfo -DCMAKE_CXX_COMPILER="$cxx" \
      -DLAMPWRIGHT_SANITIZE=ON -DLAMPWRIGHT_FUZZ=ON -DLAMPWRIGHT_BUILD_BENCH=OFF "${launcher[@]}"
cmake --build build-asan -j"$(nproc)"

export ASAN_OPTIONS="abort_on_error=1:detect_stack_use_after_return=1:strict_string_checks=1"
export UBSAN_OPTIONS="print_stacktrace=1:halt_on_error=1"
(cd build-asan && ctest --output-on-failure -j"$(nproc)")

for harness in spectrum_text tm27_xml toml; do
    work="$(mktemp -d)"
    cp -r "fuzz/corpus/$harness/." "$work/"
    echo "fuzz_$harness: $runs runs"
    # -max_len bounds one input (the seeds are below 16 kB); -timeout flags a hang in one input.
    "build-asan/fuzz_$harness" -runs="$runs" -max_len=16384 -timeout=10 -rss_limit_mb=2048 \
        -artifact_prefix="build-asan/fuzz_${harness}_" "$work" 2>&1 | tail -n 3
    rm -rf "$work"
done
echo "robustness checks passed"

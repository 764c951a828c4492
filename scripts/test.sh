#!/usr/bin/env bash
# Builds lampwright (Release) in build/ and runs every test through ctest; then the robustness
# checks (scripts/check-robustness.sh: the suite under ASan+UBSan, and each fuzz harness).
# LAMPWRIGHT_QUICK=1 skips the robustness checks (for a quick local run; CI never sets it).
set -euo pipefail
cd "$(dirname "$0")/.."
if ! command -v cmake >/dev/null 2>&1 || [ ! -f /usr/include/doctest/doctest.h ] || [ ! -f /usr/include/nlopt.hpp ] || ! command -v clang++-16 >/dev/null 2>&1; then
    bash scripts/install-deps.sh
fi
cmake -S . -B build -DCMAKE_BUILD_TYPE=Release
cmake --build build -j"$(nproc)"
cd build
ctest --output-on-failure -j"$(nproc)"
cd ..
if [ "${LAMPWRIGHT_QUICK:-0}" != "1" ]; then bash scripts/check-robustness.sh; fi

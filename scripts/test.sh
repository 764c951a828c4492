#!/usr/bin/env bash
# Builds lampwright (Release) in build/ and runs every test through ctest.
set -euo pipefail
cd "$(dirname "$0")/.."
if ! command -v cmake >/dev/null 2>&1 || [ ! -f /usr/include/doctest/doctest.h ] || [ ! -f /usr/include/nlopt.hpp ]; then
    bash scripts/install-deps.sh
fi
cmake -S . -B build -DCMAKE_BUILD_TYPE=Release
cmake --build build -j"$(nproc)"
cd build
ctest --output-on-failure -j"$(nproc)"

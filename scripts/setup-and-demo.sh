#!/usr/bin/env bash
# One command on a fresh Debian 12 machine: install dependencies, build, and run the main job on
# the shipped examples (assess the CIE FL11 tri-band illuminant, blend our demo 4000 K tube).
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/install-deps.sh
cmake -S . -B build -DCMAKE_BUILD_TYPE=Release
cmake --build build -j"$(nproc)"
./build/lampwright assess examples/spectra/triband_tube_sample.csv
echo
./build/lampwright blend examples/recipes/triband_4000K.toml

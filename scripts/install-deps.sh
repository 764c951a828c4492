#!/usr/bin/env bash
# The one list of system packages lampwright needs (Debian 12). Used by README and .ci/run.
set -euo pipefail
packages=(
  # build
  build-essential cmake pkg-config git
  # libraries
  libeigen3-dev libnlopt-cxx-dev libnlopt-dev libboost-program-options-dev
  libfmt-dev libtomlplusplus-dev nlohmann-json3-dev libsqlite3-dev libpugixml-dev
  libcpp-httplib-dev
  # tests and benchmarks
  doctest-dev libbenchmark-dev
  # sanitizer build and libFuzzer harnesses (scripts/check-robustness.sh)
  clang-16 libclang-rt-16-dev
  # test-only references
  colord-data liblcms2-dev python3 python3-colorspacious python3-numpy
  # the browser test of lampwright serve's page (tests/browser)
  chromium chromium-driver python3-selenium
)
if [ "$(id -u)" -ne 0 ]; then SUDO=sudo; else SUDO=; fi
export DEBIAN_FRONTEND=noninteractive
$SUDO apt-get update
$SUDO apt-get install -y --no-install-recommends "${packages[@]}"

#!/bin/sh
# Build quantcap and run its whole test suite (unit tests, scipy
# cross-checks, command-line tests). Usage: sh scripts/test.sh [BUILDDIR]
set -eu
cd "$(dirname "$0")/.."
sh scripts/deps.sh
build="${1:-build}"
[ -f "$build/build.ninja" ] || meson setup "$build" --buildtype=debugoptimized
ninja -C "$build"
meson test -C "$build" --print-errorlogs --num-processes "$(nproc)"

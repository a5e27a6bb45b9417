#!/bin/sh
# Build quantcap and run the designer demo end to end: an invented coherent
# receiver, PAM-2/4/8 over SNR -5..35 dB with uniform ADCs of 1 to 8 bits.
# Usage: sh scripts/demo.sh [SCENARIO]   (default scenarios/designer.ini)
set -eu
cd "$(dirname "$0")/.."
sh scripts/deps.sh
[ -f build/build.ninja ] || meson setup build --buildtype=debugoptimized
ninja -C build quantcap
scenario="${1:-scenarios/designer.ini}"
name="$(basename "$scenario" .ini)"
out="out/$name"
./build/quantcap sweep "$scenario" --output-dir "$out"
echo
echo "table:  $out/results.csv (one row per point; also $out/results.json)"
echo "plots:  $(ls "$out"/*.svg "$out"/*.png "$out"/*.pdf 2>/dev/null | tr '\n' ' ')"

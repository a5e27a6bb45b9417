#!/bin/sh
# Build quantcap and run the bundled demo design (an invented coherent
# receiver: PAM-4 levels, 3-bit ADC). Usage: sh scripts/demo.sh
set -eu
cd "$(dirname "$0")/.."
sh scripts/deps.sh
[ -f build/build.ninja ] || meson setup build --buildtype=debugoptimized
ninja -C build quantcap
./build/quantcap design --model gauss --snr-db 14 --levels -3,-1,1,3 --bits 3 \
    --objective capacity

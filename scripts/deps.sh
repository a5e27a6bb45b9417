#!/bin/sh
# Install what quantcap needs to build and test on Debian 12, skipping
# packages that are already present. Run as root.
set -eu
packages="build-essential meson ninja-build pkg-config libgsl-dev libfftw3-dev \
libjansson-dev libcmocka-dev libinih-dev libplplot-dev plplot-driver-cairo \
python3-scipy python3-numpy valgrind openmpi-bin libopenmpi-dev"
if [ "${QC_WITH_CHECKS:-0}" = 1 ]; then   # the libFuzzer targets
    packages="$packages clang libclang-rt-14-dev"
fi
missing=""
for p in $packages; do
    dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" ||
        missing="$missing $p"
done
if [ -n "$missing" ]; then
    echo "quantcap: installing:$missing" >&2
    apt-get update -q
    DEBIAN_FRONTEND=noninteractive apt-get install -y -q --no-install-recommends $missing
fi

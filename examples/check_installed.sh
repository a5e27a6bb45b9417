#!/bin/sh
# Stage an install of this build (meson install --destdir), then compile
# and run examples/embed_design.c against it with nothing but pkg-config,
# as a program embedding quantcap would. Usage: check_installed.sh BUILDDIR
set -eu
build="$1"
src="$(cd "$(dirname "$0")" && pwd)"
stage="$(mktemp -d)"
trap 'rm -rf "$stage"' EXIT
meson install -C "$build" --destdir "$stage" --no-rebuild --quiet >/dev/null
pc="$(find "$stage" -name quantcap.pc | head -n 1)"
[ -n "$pc" ] || { echo "check_installed: no quantcap.pc in the staged install" >&2; exit 1; }
# point the staged .pc file at the stage (its prefix names the real one)
prefix="$(sed -n 's/^prefix=//p' "$pc")"
mkdir -p "$stage/pc"
sed "s|^prefix=.*|prefix=$stage$prefix|" "$pc" > "$stage/pc/quantcap.pc"
export PKG_CONFIG_PATH="$stage/pc"
cflags="$(pkg-config --cflags quantcap)"
libs="$(pkg-config --libs quantcap)"
# a sanitized build's library needs the program built with the same runtime
san="$(meson introspect "$build" --buildoptions |
       /usr/bin/python3 -c 'import json,sys; print(next(o["value"] for o in json.load(sys.stdin) if o["name"] == "b_sanitize"))')"
sanflags=""
[ "$san" = none ] || sanflags="-fsanitize=$san"
${CC:-cc} $sanflags -std=c17 -Wall -Wextra -Werror "$src/embed_design.c" $cflags $libs -o "$stage/embed_design"
libdir="$(pkg-config --variable=libdir quantcap)"
LD_LIBRARY_PATH="$libdir" "$stage/embed_design" > "$stage/out.txt"
cat "$stage/out.txt"
grep -q '^rate .* bit/symbol' "$stage/out.txt"
# only the public interface is exported: every dynamic symbol is qc_*
bad="$(nm -D --defined-only "$libdir"/libquantcap.so | awk '{print $3}' | grep -v -e '^qc_' -e '^\.gomp' -e '^__odr_asan' -e '^__asan' -e '^__ubsan' || true)"
if [ -n "$bad" ]; then
    echo "check_installed: symbols exported outside the qc_ prefix:" >&2
    echo "$bad" >&2
    exit 1
fi
# model instances are opaque: no installed header defines their layout
incdir="$(pkg-config --variable=includedir quantcap)"
[ -f "$incdir/quantcap/model.h" ] || { echo "check_installed: no quantcap/model.h under $incdir" >&2; exit 1; }
if grep -rEq 'struct[[:space:]]+qc_model[[:space:]]*\{' "$incdir/quantcap.h" "$incdir/quantcap"; then
    echo "check_installed: an installed header defines struct qc_model" >&2
    exit 1
fi
echo "check_installed: the example builds and runs against the staged install"

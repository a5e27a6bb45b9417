#!/bin/sh
# run.sh — build (if needed) and run one libFuzzer target for a bounded time
# under AddressSanitizer + UndefinedBehaviorSanitizer (leak checks on).
#
#   tests/fuzz/run.sh TARGET SECONDS      e.g.  tests/fuzz/run.sh table 60
#
# TARGET is a name from fuzz_targets in tests/fuzz/meson.build (matrix,
# numbers, table, ...). The seed corpus tests/fuzz/corpus/TARGET is copied
# to a scratch folder, so the committed seeds never change; new inputs are
# kept only when QC_FUZZ_CORPUS names a folder to grow (a long local run).
# Environment:
#   QC_FUZZ_BUILD   build folder (default: build-fuzz in the source tree),
#                   configured with CC=clang and -Dfuzz=true when missing
#   QC_FUZZ_CORPUS  persistent corpus folder (optional)
#   QC_FUZZ_ARGS    extra libFuzzer flags (e.g. "-jobs=2 -workers=2")
# Exit status: 0 when the time ran out with no finding; non-zero on a
# crash, leak, sanitizer report, timeout or out-of-memory (the input that
# caused it is saved as crash-*/leak-*/timeout-*/oom-* in the current
# folder and named on the output), and 2 for a usage or build error.
# The last line is "fuzz TARGET: N executions in S s, 0 crashes" (or
# "... FAILED (status C)").
set -u

if [ $# -ne 2 ]; then
    echo "usage: $0 TARGET SECONDS" >&2
    exit 2
fi
target=$1
seconds=$2
case $seconds in
    '' | *[!0-9]*) echo "$0: SECONDS must be a whole number (got '$seconds')" >&2; exit 2 ;;
esac

here=$(cd "$(dirname "$0")" && pwd)
src=$(cd "$here/../.." && pwd)
build=${QC_FUZZ_BUILD:-$src/build-fuzz}
seeds=$here/corpus/$target

if [ ! -f "$here/fuzz_$target.c" ]; then
    echo "$0: unknown target '$target' (no $here/fuzz_$target.c)" >&2
    exit 2
fi

if [ ! -f "$build/build.ninja" ]; then
    setup_log=$(mktemp "${TMPDIR:-/tmp}/qc-fuzz-setup.XXXXXX") || exit 2
    CC=clang meson setup "$build" "$src" -Dfuzz=true >"$setup_log" 2>&1 || {
        cat "$setup_log" >&2
        rm -f "$setup_log"
        echo "$0: cannot configure $build (needs clang and libclang-rt)" >&2
        exit 2
    }
    rm -f "$setup_log"
fi
ninja -C "$build" "tests/fuzz/fuzz_$target" >/dev/null || {
    ninja -C "$build" "tests/fuzz/fuzz_$target" >&2
    echo "$0: cannot build fuzz_$target" >&2
    exit 2
}

work=$(mktemp -d "${TMPDIR:-/tmp}/qc-fuzz-$target.XXXXXX") || exit 2
trap 'rm -rf "$work"' EXIT INT TERM
mkdir "$work/corpus"
if [ -d "$seeds" ]; then
    cp "$seeds"/* "$work/corpus/" 2>/dev/null
fi
corpora="$work/corpus"
if [ -n "${QC_FUZZ_CORPUS:-}" ]; then
    mkdir -p "$QC_FUZZ_CORPUS" || exit 2
    QC_FUZZ_CORPUS=$(cd "$QC_FUZZ_CORPUS" && pwd)
    corpora="$QC_FUZZ_CORPUS $work/corpus"
fi

log=$work/log
artifacts=$(pwd)/
cd "$work" || exit 2
# GSL, FFTW and jansson are not instrumented; symbolize reports fully.
ASAN_OPTIONS=${ASAN_OPTIONS:-detect_leaks=1:abort_on_error=0:symbolize=1}
UBSAN_OPTIONS=${UBSAN_OPTIONS:-print_stacktrace=1:halt_on_error=1}
export ASAN_OPTIONS UBSAN_OPTIONS
# shellcheck disable=SC2086
"$build/tests/fuzz/fuzz_$target" -max_total_time="$seconds" -timeout=25 \
    -rss_limit_mb=2048 -print_final_stats=1 -artifact_prefix="$artifacts" \
    ${QC_FUZZ_ARGS:-} \
    $corpora >"$log" 2>&1
status=$?

execs=$(grep -h 'stat::number_of_executed_units' "$log" "$work"/fuzz-*.log 2>/dev/null |
    awk '{ s += $2 } END { print s + 0 }')
# With -jobs, each job writes its own fuzz-N.log: look for findings in all.
found=$(grep -l -e '^==[0-9]*==ERROR' -e 'runtime error:' -e '^SUMMARY: ' \
    -e 'ERROR: libFuzzer' "$log" "$work"/fuzz-*.log 2>/dev/null)
if [ $status -ne 0 ] || [ -n "$found" ]; then
    for f in ${found:-$log}; do
        tail -n 60 "$f"
    done
    echo "fuzz $target: $execs executions in $seconds s, FAILED (status $status)"
    [ $status -ne 0 ] || status=1
    exit $status
fi
grep -h '^#[0-9]*.*DONE' "$log" | tail -n 1
echo "fuzz $target: $execs executions in $seconds s, 0 crashes"
exit 0

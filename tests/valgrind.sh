#!/bin/sh
# valgrind.sh — run the command line under valgrind memcheck: one `design`
# (every threshold strategy side by side, JSON to a file), one converter
# design (FFTW added noise, DNL draws, AGC gain), one `require`
# (a root search with the FEC table and the design at the root), one APD design
# (FFTW) and one `sweep` (tests/valgrind_sweep.ini: 8 points on two threads,
# with a plot); fails on any memory error or leak.
#
#   tests/valgrind.sh [PATH/TO/quantcap]     (default: build/quantcap)
#
# Use a normal (not sanitizer) build: valgrind and AddressSanitizer do not
# mix. Exit status 0 when every run is clean, 1 on an error or a leak,
# 2 when valgrind or the program is missing. The last line is
# "valgrind: N passed, N failed".
set -u

here=$(cd "$(dirname "$0")" && pwd)
qc=${1:-$here/../build/quantcap}
if ! command -v valgrind >/dev/null 2>&1; then
    echo "valgrind.sh: valgrind is not installed (apt-get install valgrind)" >&2
    exit 2
fi
if [ ! -x "$qc" ]; then
    echo "valgrind.sh: no program at $qc (build first)" >&2
    exit 2
fi

work=$(mktemp -d "${TMPDIR:-/tmp}/qc-valgrind.XXXXXX") || exit 2
trap 'rm -rf "$work"' EXIT INT TERM
passed=0
failed=0

# --errors-for-leak-kinds=definite,indirect,possible: a leak of any kind
# that memcheck can prove fails the run; "still reachable" blocks are
# libraries' one-time allocations (GSL, FFTW wisdom, the C runtime), and
# tests/valgrind.supp names the only suppressed report (libgomp's pool).
memcheck() {
    name=$1
    shift
    log=$work/$name.log
    valgrind --tool=memcheck --error-exitcode=99 --leak-check=full \
        --show-leak-kinds=definite,indirect,possible \
        --errors-for-leak-kinds=definite,indirect,possible \
        --suppressions="$here/valgrind.supp" \
        --track-origins=yes --log-file="$log" "$qc" "$@" >"$work/$name.out" 2>&1
    status=$?
    summary=$(grep -h 'ERROR SUMMARY' "$log" | tail -n 1 | sed 's/^==[0-9]*== //')
    leaks=$(grep -h -e 'definitely lost:' -e 'indirectly lost:' -e 'possibly lost:' "$log" |
        sed 's/^==[0-9]*== *//' | tr '\n' ' ')
    if [ $status -eq 0 ]; then
        passed=$((passed + 1))
        echo "ok   $name: $summary ${leaks:-(no leaks: all heap blocks freed)}"
    else
        failed=$((failed + 1))
        echo "FAIL $name (status $status): $summary $leaks"
        cat "$work/$name.out"
        cat "$log"
    fi
}

memcheck design design --model gauss --snr-db 12 --alphabet pam:4 --bits 3 \
    --compare --json --output "$work/design.json"
memcheck require require --model gauss --snr-db 12 --alphabet pam:4 --bits 2 \
    --symbol-rate 32e9 --target fec=kp4 --solve-for snr-db --json --output "$work/require.json"
memcheck design-apd design --model apd --signal 50 --apd-gain 10 --apd-k 0.02 \
    --sigma-th 30 --levels 0,1 --bits 2 --json --output "$work/apd.json"
memcheck design-converter design --model preamp --modes 2 --levels 0,10 --bits 3 \
    --full-scale -2,30 --enob 2.5 --dnl-lsb 0.3 --draws 2 --converter-gain agc:2 \
    --json --output "$work/converter.json"
memcheck sweep sweep "$here/valgrind_sweep.ini" --output-dir "$work/sweep" --jobs 2 --quiet

echo "valgrind: $passed passed, $failed failed"
[ $failed -eq 0 ]

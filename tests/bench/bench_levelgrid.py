"""bench_levelgrid.py — the level-grid capacity design as a user runs it:
`quantcap design --model gauss --level-grid -1,1,N --objective capacity
--power-limit 0.5 --bits 2` at N = 1024 and 4096, with --sigma 0.5 and
with --snr-db 10, each at most LIMIT seconds, after the engine benchmark
(bench_levelgrid). Targets: 1024 candidates under 2 s, 4096 under 10 s;
exits 1 and says MISSED while they are not met."""
import subprocess
import sys
import time

LIMIT = 120.0
TARGET = {1024: 2.0, 4096: 10.0}

def main():
    quantcap, engine = sys.argv[1], sys.argv[2]
    rc = subprocess.run([engine]).returncode
    missed = rc != 0
    for noise in (["--sigma", "0.5"], ["--snr-db", "10"]):
        for n in (1024, 4096):
            args = [quantcap, "design", "--model", "gauss", *noise,
                    "--level-grid", "-1,1,%d" % n, "--objective", "capacity",
                    "--power-limit", "0.5", "--bits", "2", "--quiet"]
            t0 = time.monotonic()
            try:
                out = subprocess.run(args, capture_output=True, text=True, timeout=LIMIT)
                dt = time.monotonic() - t0
                rate = next((l for l in out.stdout.splitlines() if l.startswith("rate")), "no rate")
                status = "ok" if dt <= TARGET[n] else "MISSED (target %.0f s)" % TARGET[n]
                print("design %-12s %4d candidates %7.2f s  %s  %s" % (" ".join(noise), n, dt, status, rate.strip()))
            except subprocess.TimeoutExpired:
                dt = LIMIT
                status = "MISSED (not done in %.0f s)" % LIMIT
                print("design %-12s %4d candidates  >%.0f s  %s" % (" ".join(noise), n, LIMIT, status))
            missed = missed or dt > TARGET[n]
    return 1 if missed else 0

if __name__ == "__main__":
    sys.exit(main())

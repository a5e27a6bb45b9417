#!/usr/bin/python3
"""Benchmark: the designer scenario (3 alphabets x 41 SNR points x 1..8 bits)
with --jobs 1 and --jobs 2; prints wall times and the speed-up T1/T2
(target >= 1.7 on 2 cores), and checks that both runs wrote the same bytes.

Usage: bench_sweep.py PATH/TO/quantcap PATH/TO/designer.ini"""
import os
import subprocess
import sys
import tempfile
import time

qc, scenario = sys.argv[1], sys.argv[2]
tmp = tempfile.mkdtemp(prefix="qc-bench-")
times = {}
for jobs in (1, 2):
    out = os.path.join(tmp, f"jobs{jobs}")
    t0 = time.perf_counter()
    p = subprocess.run([qc, "sweep", scenario, "--out", out, "--jobs", str(jobs), "--no-plots"],
                       capture_output=True, text=True)
    times[jobs] = time.perf_counter() - t0
    if p.returncode != 0:
        print(p.stderr)
        sys.exit(1)
    print(p.stdout.splitlines()[0])
same = all(open(os.path.join(tmp, "jobs1", f), "rb").read() ==
           open(os.path.join(tmp, "jobs2", f), "rb").read()
           for f in ("results.csv", "results.json"))
speedup = times[1] / times[2]
print(f"designer sweep: --jobs 1 {times[1]:.2f} s, --jobs 2 {times[2]:.2f} s, "
      f"speed-up {speedup:.2f} (target >= 1.7), outputs identical: {same}")
sys.exit(0 if same else 1)

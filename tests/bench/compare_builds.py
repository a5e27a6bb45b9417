#!/usr/bin/python3
"""Benchmark: the same sweep run by two builds of quantcap (an earlier
commit and this one), alternately, several times, so that both see the
same load on the machine. Prints points per second of wall time and per
CPU second (user + system: less sensitive to other processes sharing the
cores) of each build, the median ratio new/old, and checks that both
builds wrote byte-identical results.csv and results.json.

Usage: compare_builds.py OLD/quantcap NEW/quantcap SCENARIO [RUNS [JOBS]]"""
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time

old, new, scenario = sys.argv[1], sys.argv[2], sys.argv[3]
runs = int(sys.argv[4]) if len(sys.argv) > 4 else 3
jobs = sys.argv[5] if len(sys.argv) > 5 else "2"
tmp = tempfile.mkdtemp(prefix="qc-compare-")
rate = {"old": {"wall": [], "cpu": []}, "new": {"wall": [], "cpu": []}}
points = 0


def sweep(build, qc, run):
    global points
    out = os.path.join(tmp, f"{build}{run}")
    r0 = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    p = subprocess.run([qc, "sweep", scenario, "--output-dir", out, "--jobs", jobs,
                        "--no-plots"], capture_output=True, text=True)
    wall = time.perf_counter() - t0
    r1 = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (r1.ru_utime - r0.ru_utime) + (r1.ru_stime - r0.ru_stime)
    if p.returncode != 0:
        sys.exit(f"{qc}: exit {p.returncode}: {p.stderr}")
    points = int(p.stdout.split()[1])  # "sweep: N points (...)"
    rate[build]["wall"].append(points / wall)
    rate[build]["cpu"].append(points / cpu)
    return out


print(f"load average before: {os.getloadavg()[0]:.2f}")
for run in range(runs):
    dirs = {b: sweep(b, qc, run) for b, qc in (("old", old), ("new", new))}
same = all(open(os.path.join(dirs["old"], f), "rb").read() ==
           open(os.path.join(dirs["new"], f), "rb").read()
           for f in ("results.csv", "results.json"))
print(f"load average after: {os.getloadavg()[0]:.2f}")
for b in ("old", "new"):
    print(f"{b}: {points} points, {statistics.median(rate[b]['wall']):.3g} points/s wall, "
          f"{statistics.median(rate[b]['cpu']):.3g} points per CPU second "
          f"(median of {runs}, --jobs {jobs})")
ratio_wall = statistics.median(n / o for n, o in zip(rate["new"]["wall"], rate["old"]["wall"]))
ratio_cpu = statistics.median(n / o for n, o in zip(rate["new"]["cpu"], rate["old"]["cpu"]))
print(f"{os.path.basename(scenario)}: new/old points per second {ratio_wall:.2f} (wall), "
      f"{ratio_cpu:.2f} (CPU); results identical: {same}")
sys.exit(0 if same else 1)

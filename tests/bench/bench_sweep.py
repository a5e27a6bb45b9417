#!/usr/bin/python3
"""Benchmark: a sweep (the designer scenario: 3 alphabets x 41 SNR points x
1..8 bits; or tests/bench/apd_sweep.ini) with --jobs 1 and --jobs 2;
prints wall times and the speed-up T1/T2
(target >= 1.7 on 2 cores), the CPU time each run used and the load of
the machine (other processes competing for the cores lower the speed-up),
and checks that both runs wrote the same bytes.

Usage: bench_sweep.py PATH/TO/quantcap PATH/TO/SCENARIO.ini"""
import os
import resource
import subprocess
import sys
import tempfile
import time

qc, scenario = sys.argv[1], sys.argv[2]
tmp = tempfile.mkdtemp(prefix="qc-bench-")
wall, cpu, per_thread = {}, {}, {}
tick = os.sysconf("SC_CLK_TCK")


def thread_cpu(pid):
    """CPU seconds (user + system) of each thread of a running process."""
    out = {}
    try:
        for tid in os.listdir(f"/proc/{pid}/task"):
            with open(f"/proc/{pid}/task/{tid}/stat") as f:
                fields = f.read().rsplit(")", 1)[1].split()
            out[tid] = (int(fields[11]) + int(fields[12])) / tick
    except (FileNotFoundError, ProcessLookupError, IndexError):
        pass
    return out


print(f"load average before: {os.getloadavg()[0]:.2f}")
for jobs in (1, 2):
    out = os.path.join(tmp, f"jobs{jobs}")
    r0 = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    proc = subprocess.Popen([qc, "sweep", scenario, "--output-dir", out, "--jobs", str(jobs),
                             "--no-plots"], stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                            text=True)
    threads = {}
    while proc.poll() is None:  # CPU seconds of each thread, sampled until exit
        threads.update(thread_cpu(proc.pid))
        time.sleep(0.02)
    stdout, stderr = proc.communicate()
    p = subprocess.CompletedProcess(proc.args, proc.returncode, stdout, stderr)
    wall[jobs] = time.perf_counter() - t0
    per_thread[jobs] = sorted(threads.values(), reverse=True)
    r1 = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu[jobs] = (r1.ru_utime - r0.ru_utime) + (r1.ru_stime - r0.ru_stime)
    if p.returncode != 0:
        print(p.stderr)
        sys.exit(1)
    print(p.stdout.splitlines()[0])
    print(f"  --jobs {jobs}: {wall[jobs]:.2f} s wall, {cpu[jobs]:.2f} s CPU, "
          f"{cpu[jobs] / wall[jobs]:.2f} cores busy on average")
same = all(open(os.path.join(tmp, "jobs1", f), "rb").read() ==
           open(os.path.join(tmp, "jobs2", f), "rb").read()
           for f in ("results.csv", "results.json"))
print(f"load average after: {os.getloadavg()[0]:.2f}")
# Work balance of the --jobs 2 run: the speed-up two free cores would give
# is the total CPU time over the busiest thread's (the main thread also
# carries the serial parts: checks, tables).
busy = [t for t in per_thread[2] if t > 0.05]
if len(busy) >= 2:
    print(f"--jobs 2 threads: {', '.join(f'{t:.2f} s' for t in busy)} CPU; "
          f"speed-up on two free cores {sum(busy) / busy[0]:.2f}")
print(f"{os.path.basename(scenario)}: --jobs 1 {wall[1]:.2f} s, --jobs 2 {wall[2]:.2f} s, "
      f"speed-up {wall[1] / wall[2]:.2f} (target >= 1.7), outputs identical: {same}")
sys.exit(0 if same else 1)

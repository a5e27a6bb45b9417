#!/usr/bin/python3
"""Benchmark: sweeps under mpirun with 1, 2 and 4 ranks of one thread each
(--jobs 1) on this machine, for each scenario given: prints the wall and
CPU times, the speed-ups T1/T2 and T1/T4 measured in this one run, the
CPU time against one rank's (the cost of spreading the points), the load
of the machine (other processes competing for the cores lower the
speed-ups), and checks that every run wrote the same bytes. On a machine
with C free cores the ideal speed-up is min(ranks, C): rank 0 serves the
requests from a thread that sleeps between them and computes with its
own. The designer study (984 points of about a millisecond) shows what
starting the ranks costs; the short-reach ISI study (12 points of 0.5 to
2.3 s) is the kind of study MPI is for, slow points of uneven cost.

Usage: bench_sweep_mpi.py PATH/TO/quantcap PATH/TO/mpirun SCENARIO.ini..."""
import os
import resource
import subprocess
import sys
import tempfile
import time

qc, mpirun, scenarios = sys.argv[1], sys.argv[2], sys.argv[3:]
tmp = tempfile.mkdtemp(prefix="qc-bench-mpi-")
env = dict(os.environ, OMPI_ALLOW_RUN_AS_ROOT="1", OMPI_ALLOW_RUN_AS_ROOT_CONFIRM="1")
all_same = True
for scenario in scenarios:
    name = os.path.basename(scenario)
    wall, cpu = {}, {}
    print(f"{name}: cores: {os.cpu_count()}, load average before: {os.getloadavg()[0]:.2f}")
    for ranks in (1, 2, 4):
        out = os.path.join(tmp, f"{name}-ranks{ranks}")
        r0 = resource.getrusage(resource.RUSAGE_CHILDREN)
        t0 = time.perf_counter()
        p = subprocess.run([mpirun, "--oversubscribe", "-n", str(ranks), qc, "sweep", scenario,
                            "--output-dir", out, "--jobs", "1", "--no-plots"],
                           capture_output=True, text=True, env=env)
        wall[ranks] = time.perf_counter() - t0
        r1 = resource.getrusage(resource.RUSAGE_CHILDREN)  # the ranks, waited for by mpirun
        cpu[ranks] = (r1.ru_utime - r0.ru_utime) + (r1.ru_stime - r0.ru_stime)
        if p.returncode != 0:
            print(p.stdout, p.stderr)
            sys.exit(1)
        print(f"  {ranks} rank{'s' if ranks > 1 else ''}: {wall[ranks]:.2f} s wall, "
              f"{cpu[ranks]:.2f} s CPU ({p.stdout.splitlines()[0]})")
    same = all(open(os.path.join(tmp, f"{name}-ranks1", f), "rb").read() ==
               open(os.path.join(tmp, f"{name}-ranks{r}", f), "rb").read()
               for r in (2, 4) for f in ("results.csv", "results.json", "checkpoint.jsonl"))
    all_same = all_same and same
    print(f"  load average after: {os.getloadavg()[0]:.2f}")
    print(f"{name} under MPI: 1 rank {wall[1]:.2f} s, 2 ranks {wall[2]:.2f} s "
          f"(speed-up {wall[1] / wall[2]:.2f}), 4 ranks {wall[4]:.2f} s "
          f"(speed-up {wall[1] / wall[4]:.2f}; {os.cpu_count()} cores), outputs identical: {same}")
    # CPU time over that of one rank: what spreading the points costs (start-up
    # of the ranks, messages, polling), whatever the other jobs on the machine
    print(f"  CPU time against 1 rank: 2 ranks {cpu[2] / cpu[1]:.2f}, "
          f"4 ranks {cpu[4] / cpu[1]:.2f}")
sys.exit(0 if all_same else 1)

#!/usr/bin/python3
"""`quantcap sweep` under MPI: a 3-rank sweep on one machine writes the same
bytes (checkpoint, tables, plots, manifest) as one process with --jobs 1;
a rank killed partway loses only its unfinished points, and --resume
continues with another number of ranks to the same bytes; errors are
printed once, not once per rank.

Usage: check_sweep_mpi.py PATH/TO/quantcap PATH/TO/mpirun
The scenarios below are invented for the test."""
import json
import os
import signal
import subprocess
import sys
import tempfile
import time

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from checklib import Tally  # noqa: E402

QC, MPIRUN = sys.argv[1], sys.argv[2]
tally = Tally()
check = tally.check
tmp = tempfile.mkdtemp(prefix="qc-sweep-mpi-")
MARK = f"qc-sweep-mpi-{os.getpid()}"  # finds this test's own ranks in /proc
env = dict(os.environ, OMPI_ALLOW_RUN_AS_ROOT="1", OMPI_ALLOW_RUN_AS_ROOT_CONFIRM="1",
           OMPI_MCA_rmaps_base_oversubscribe="1", QC_TEST_MARK=MARK)


# Under AddressSanitizer the ranks skip the leak check only: Open MPI
# keeps allocations of its plug-ins until exit and unloads them in
# MPI_Finalize, so LeakSanitizer cannot tell them from ours by library
# name. The points' own code is leak-checked by the one-process runs here
# and by tests/study/test_sweep.c (the executor and the point worker).
mpi_env = dict(env)
if "ASAN_OPTIONS" in mpi_env:
    mpi_env["ASAN_OPTIONS"] += ":detect_leaks=0"


def mpi(n, *args):
    return [MPIRUN, "--oversubscribe", "-n", str(n), "-x", "QC_TEST_MARK", QC, *args]


def run(cmd, timeout=600):
    p = subprocess.run(cmd, capture_output=True, text=True, timeout=timeout,
                       env=mpi_env if cmd[0] == MPIRUN else env)
    return p.returncode, p.stdout, p.stderr


def write(name, text):
    path = os.path.join(tmp, name)
    with open(path, "w") as f:
        f.write(text)
    return path


def read_bytes(path):
    with open(path, "rb") as f:
        return f.read()


def same_files(a, b, what):
    names = sorted(os.listdir(a))
    check(names == sorted(os.listdir(b)), f"{what}: the same files ({names} / {os.listdir(b)})")
    for name in names:
        check(read_bytes(os.path.join(a, name)) == read_bytes(os.path.join(b, name)),
              f"{what}: {name} identical byte for byte")


SCENARIO = """# invented test scenario
[scenario]
title = cluster sweep test

[receiver]
model = gauss

[design]
objective = mi
quantizer = optimal

[alphabet pam2]
levels = -1,1

[alphabet pam4]
levels = -3,-1,1,3

[sweep]
snr-db = 0 to 20 step 2
bits = 1 to 4 step 1

[plots]
rate-vs-bits = 0, 10

[density]
alphabet = pam4
snr-db = 10
bits = 2
"""
sc = write("cluster.ini", SCENARIO)
npoints = 2 * 11 * 4

# --- 3 ranks against one process ------------------------------------------
one = os.path.join(tmp, "one")
rc, out, err = run([QC, "sweep", sc, "--output-dir", one, "--jobs", "1"])
check(rc == 0, f"one process: exit {rc}: {err}")
three = os.path.join(tmp, "three")
rc, out, err = run(mpi(3, "sweep", sc, "--output-dir", three, "--jobs", "1"))
check(rc == 0, f"3 ranks: exit {rc}: {err}")
check(f"sweep: {npoints} points (0 resumed, {npoints} computed, 0 failed)" in out,
      f"3 ranks: one summary line ({out.splitlines()[:1]})")
check(out.count("sweep:") == 1, "3 ranks: the summary is printed once")
check(err == "", f"3 ranks: nothing on stderr ({err!r})")
same_files(one, three, "3 ranks --jobs 1 vs one process --jobs 1")
# several threads per rank
three2 = os.path.join(tmp, "three2")
rc, out, err = run(mpi(3, "sweep", sc, "--output-dir", three2, "--jobs", "2"))
check(rc == 0, f"3 ranks x 2 threads: exit {rc}: {err}")
same_files(one, three2, "3 ranks --jobs 2 vs one process --jobs 1")

# --- errors are told once -------------------------------------------------
rc, out, err = run(mpi(3, "sweep", os.path.join(tmp, "missing.ini"), "--output-dir",
                       os.path.join(tmp, "none")))
check(rc == 2, f"missing scenario under MPI: exit 2 ({rc})")
check(err.count("quantcap: error:") == 1 and "missing.ini" in err,
      f"missing scenario: one message naming the file ({err!r})")
rc, out, err = run(mpi(3, "sweep", sc, "--jobz", "1"))
check(rc == 2 and err.count("quantcap: error:") == 1 and "--jobz" in err,
      f"bad option under MPI: one message ({rc} {err!r})")
check(not os.path.exists(os.path.join(tmp, "none")), "no output folder after an error")

# --- a rank dies; resume with other rank counts --------------------------
BIG = SCENARIO.replace("snr-db = 0 to 20 step 2", "snr-db = 0 to 30 step 2")
big = write("big.ini", BIG)
nbig = 2 * 16 * 4
full = os.path.join(tmp, "full")
rc, out, err = run([QC, "sweep", big, "--output-dir", full, "--jobs", "1", "--no-plots"])
check(rc == 0, f"uninterrupted big sweep: {err}")


def rank_pid(rank):
    """The pid of this test's rank `rank`, from the processes' environment."""
    for pid in os.listdir("/proc"):
        if not pid.isdigit():
            continue
        try:
            with open(f"/proc/{pid}/environ", "rb") as f:
                e = f.read().split(b"\0")
        except OSError:
            continue
        if f"QC_TEST_MARK={MARK}".encode() in e and \
                f"OMPI_COMM_WORLD_RANK={rank}".encode() in e:
            return int(pid)
    return None


killed = os.path.join(tmp, "killed")
cp = os.path.join(killed, "checkpoint.jsonl")
victim = None
for attempt in range(3):
    proc = subprocess.Popen(mpi(3, "sweep", big, "--output-dir", killed, "--jobs", "1",
                                "--no-plots"),
                            stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, env=mpi_env)
    want = 10 + 20 * attempt
    deadline = time.time() + 120
    while time.time() < deadline and proc.poll() is None:
        try:
            if read_bytes(cp).count(b"\n") > want:
                break
        except FileNotFoundError:
            pass
        time.sleep(0.002)
    if proc.poll() is None:
        victim = rank_pid(2)
        if victim:
            os.kill(victim, signal.SIGKILL)  # a computing rank dies
        proc.wait(timeout=120)
        if victim:
            break
check(victim is not None, "a computing rank was killed before the sweep finished")
check(proc.returncode != 0, f"the job stops when a rank dies (exit {proc.returncode})")
text = read_bytes(cp)
lines = text.split(b"\n")
kept = [json.loads(line) for line in lines[1:] if line.strip()]
check(text.endswith(b"\n"), "the checkpoint holds whole lines only")
check(0 < len(kept) < nbig, f"killed partway ({len(kept)} of {nbig} points)")
check(len({r["point"] for r in kept}) == len(kept), "no point recorded twice")
check(not os.path.exists(os.path.join(killed, "results.csv")), "no table from a killed sweep")

rc, out, err = run(mpi(2, "sweep", big, "--output-dir", killed, "--jobs", "1", "--no-plots",
                       "--resume"))
check(rc == 0, f"resumed with 2 ranks: {err}")
check(f"({len(kept)} resumed, {nbig - len(kept)} computed, 0 failed)" in out,
      f"resume skips every point finished before the kill ({out.strip()})")
same_files(full, killed, "killed with 3 ranks, resumed with 2, vs one process")
rc, out, err = run(mpi(4, "sweep", big, "--output-dir", killed, "--jobs", "1", "--no-plots",
                       "--resume"))
check(rc == 0 and f"({nbig} resumed, 0 computed, 0 failed)" in out,
      f"a finished sweep resumed with 4 ranks computes nothing ({rc} {out.strip()} {err})")
same_files(full, killed, "finished sweep resumed with 4 ranks")
# a checkpoint of one process continued by ranks: half of the points by hand
part = os.path.join(tmp, "part")
os.makedirs(part)
full_lines = read_bytes(os.path.join(full, "checkpoint.jsonl")).split(b"\n")
with open(os.path.join(part, "checkpoint.jsonl"), "wb") as f:
    f.write(b"\n".join(full_lines[:1 + nbig // 2]) + b"\n")
rc, out, err = run(mpi(3, "sweep", big, "--output-dir", part, "--jobs", "1", "--no-plots",
                       "--resume"))
check(rc == 0 and f"({nbig // 2} resumed, {nbig - nbig // 2} computed" in out,
      f"one process's checkpoint resumed with 3 ranks ({rc} {out.strip()} {err})")
same_files(full, part, "one process's half checkpoint finished by 3 ranks")

print(f"{tally.count} checks, {len(tally.failures)} failed")
sys.exit(1 if tally.failures else 0)

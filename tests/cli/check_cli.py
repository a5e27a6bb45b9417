#!/usr/bin/python3
"""Command-line contract of quantcap: JSON keys, exit codes, messages that
name the culprit, and no partial output files.

Usage: check_cli.py PATH/TO/quantcap
Reference values: closed forms from Cover & Thomas, Elements of Information
Theory (2nd ed.), ch. 7, and scipy.stats.norm (Debian python3-scipy)."""
import collections
import json
import math
import os
import sys
import tempfile

from scipy.stats import norm

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from checklib import Tally, qc_runner, file_writer  # noqa: E402

QC = sys.argv[1]
tally = Tally()
check = tally.check


run = qc_runner(QC)


def h2(p):
    return 0.0 if p in (0.0, 1.0) else -p * math.log2(p) - (1 - p) * math.log2(1 - p)


def expect_error(args, code, needle, what):
    rc, out, err = run(*args)
    check(rc == code, f"{what}: exit {rc}, expected {code} (stderr: {err.strip()})")
    check(err.startswith("quantcap: error: "), f"{what}: stderr starts with 'quantcap: error: ' ({err.strip()})")
    check(needle in err, f"{what}: message names '{needle}' ({err.strip()})")
    check(out == "", f"{what}: nothing on stdout")


def parse(text, what):
    """JSON of a command's output; a failure is recorded, not raised."""
    try:
        return json.loads(text)
    except ValueError:
        check(False, f"{what}: output is JSON")
        return collections.defaultdict(lambda: math.nan)


tmp = tempfile.mkdtemp(prefix="qc-cli-")


write = file_writer(tmp)


# --- capacity ------------------------------------------------------------
bsc = write("bsc.txt", "# BSC\n0.89 0.11\n0.11, 0.89\n")
# --output naming the file read as input is refused and the input kept
with open(bsc) as f:
    before = f.read()
expect_error(["capacity", bsc, "--output", bsc], 2, "is the file read as input",
             "capacity --output onto its own input")
expect_error(["design", "--model", "table", "--table", bsc, "--bits", "2", "--output", bsc], 2,
             "is the file read as --table", "design --output onto its --table")
with open(bsc) as f:
    check(f.read() == before, "the input file is unchanged after --output named it")
rc, out, err = run("capacity", bsc, "--json")
check(rc == 0, f"capacity BSC exit {rc}: {err}")
j = parse(out, "json 2")
for key in ("capacity_bits", "upper_bound_bits", "input_distribution", "iterations"):
    check(key in j, f"capacity JSON has key {key}")
# BSC: C = 1 - h2(p) (Cover & Thomas, eq. 7.11)
check(abs(j["capacity_bits"] - (1 - h2(0.11))) < 1e-9, "capacity BSC = 1 - h2(0.11)")
check(j["upper_bound_bits"] - j["capacity_bits"] <= 1e-9 + 1e-15, "certified gap <= 1e-9")
check(j["upper_bound_bits"] >= j["capacity_bits"], "upper bound >= capacity")

rc, out, _ = run("capacity", bsc)
check(rc == 0 and "bit/symbol" in out and "upper bound" in out, "capacity human output states certificate")

rc, out_plain, _ = run("capacity", bsc, "--json", "--plain")
check(rc == 0 and abs(parse(out_plain, "json 3")["capacity_bits"] - (1 - h2(0.11))) < 1e-9,
      "capacity --plain")

# Binary erasure channel, C = 1 - e (Cover & Thomas, eq. 7.16), with a cost
# making the budget inactive (multiplier 0).
bec = write("bec.txt", "0.75 0.25 0\n0 0.25 0.75\n")
rc, out, err = run("capacity", bec, "--json", "--costs", "0,1", "--budget", "0.9")
check(rc == 0, f"capacity with costs: {err}")
j = parse(out, "json 4")
check(abs(j["capacity_bits"] - 0.75) < 1e-9, "BEC capacity 1 - e")
for key in ("cost", "multiplier"):
    check(key in j, f"capacity-cost JSON has key {key}")
check(abs(j["multiplier"]) < 1e-12, "inactive budget: multiplier 0")

# Active budget: average cost meets the budget within 1e-9 relative.
rc, out, err = run("capacity", bec, "--json", "--costs", "0,1", "--budget", "0.2")
check(rc == 0, f"active budget: {err}")
j = parse(out, "json 5")
check(abs(j["cost"] - 0.2) <= 1e-9 * 0.2, f"active budget met: cost {j['cost']}")
check(j["multiplier"] > 0, "active budget: multiplier > 0")
# BEC with P(x=1) = 0.2: I = (1 - e) h2(0.2) (Cover & Thomas, sec. 7.1.5)
check(abs(j["capacity_bits"] - 0.75 * h2(0.2)) < 1e-8, "BEC capacity at input cost 0.2")

# --- capacity: bad input -----------------------------------------------
expect_error(["capacity", os.path.join(tmp, "missing.txt")], 2, "missing.txt: cannot open", "missing file")
expect_error(["capacity", tmp], 2, "is a directory", "directory as file")
expect_error(["capacity", write("ragged.txt", "0.5 0.5\n1\n")], 2, "ragged.txt:2:", "ragged rows")
expect_error(["capacity", write("nan.txt", "nan 1\n")], 2, "nan.txt:1:", "NaN entry")
expect_error(["capacity", write("word.txt", "0.5 half\n")], 2, "'half' is not a number", "non-number")
expect_error(["capacity", write("empty.txt", "")], 2, "empty.txt: no matrix rows", "empty file")
expect_error(["capacity", write("sum.txt", "1 0\n0.3 0.6\n")], 2, "row 2 sums to", "row sum")
expect_error(["capacity", write("neg.txt", "1.2 -0.2\n")], 2, "negative probability", "negative entry")
expect_error(["capacity", bsc, "--costs", "0,1,2", "--budget", "1"], 2, "--costs: 3 values", "costs length")
expect_error(["capacity", bsc, "--costs", "1,2", "--budget", "0.5"], 2, "budget", "infeasible budget")
expect_error(["capacity", bsc, "--costs", "0,1"], 2, "--costs and --budget go together", "costs without budget")
expect_error(["capacity", bsc, "--tol", "-1"], 2, "--tol", "negative tolerance")
expect_error(["capacity", bsc, "--tol", "abc"], 2, "--tol: 'abc' is not a decimal number", "tolerance not a number")
expect_error(["capacity", bsc, "--tl", "1e-9"], 2, "did you mean '--tol'", "misspelt option")
expect_error(["capacity"], 2, "expected one matrix FILE", "no file")
zch = write("z.txt", "1 0\n0.5 0.5\n")
expect_error(["capacity", zch, "--max-iterations", "2", "--plain"], 1, "iteration", "iteration limit is exit 1")
expect_error(["nosuchcommand"], 2, "unknown command", "unknown command")

# --- output files: complete or absent ------------------------------------
outp = os.path.join(tmp, "cap.json")
rc, _, _ = run("capacity", bsc, "--json", "--output", outp)
check(rc == 0 and json.load(open(outp))["capacity_bits"] > 0.49, "--output writes the file")
bad_out = os.path.join(tmp, "bad.json")
rc, _, _ = run("capacity", write("bad.txt", "0.5 0.4\n"), "--json", "--output", bad_out)
check(rc == 2 and not os.path.exists(bad_out), "no output file on failure")
check(not [f for f in os.listdir(tmp) if ".tmp." in f], "no temporary files left behind")

# --- channel -------------------------------------------------------------
rc, out, err = run("channel", "--model", "gauss", "--sigma", "0.5", "--levels", "-1,1",
                   "--thresholds", "-0.5,0,0.5", "--json")
check(rc == 0, f"channel exit {rc}: {err}")
m = parse(out, "json 6").get("matrix", [[math.nan] * 4] * 2)
edges = [-math.inf, -0.5, 0.0, 0.5, math.inf]
for i, x in enumerate((-1.0, 1.0)):
    for c in range(4):
        # cell probability from scipy.stats.norm (independent reference)
        ref = norm.cdf(edges[c + 1], loc=x, scale=0.5) - norm.cdf(edges[c], loc=x, scale=0.5)
        check(abs(m[i][c] - ref) < 1e-12, f"channel cell ({i},{c}) vs scipy.stats.norm")

rc, out, _ = run("channel", "--model", "gauss", "--sigma", "1", "--levels", "0,1",
                 "--thresholds", "0.5", "--csv")
lines = out.strip().split("\n")
check(rc == 0 and lines[0] == "level,cell1,cell2" and len(lines) == 3, "channel CSV header and rows")

expect_error(["channel", "--model", "gauss", "--sigma", "-1", "--levels", "0,1", "--thresholds", "0"],
             2, "'sigma' must be > 0", "sigma <= 0")
expect_error(["channel", "--model", "gauss", "--sigma", "1", "--levels", "0,1", "--thresholds", "1,0"],
             2, "strictly increasing", "unsorted thresholds")
expect_error(["channel", "--model", "gauss", "--sigma", "1", "--levels", "0,1", "--thresholds", "0,0"],
             2, "strictly increasing", "duplicate thresholds")
expect_error(["channel", "--model", "nosuch", "--levels", "0,1", "--thresholds", "0"],
             2, "unknown model 'nosuch'", "unknown model")
expect_error(["channel", "--model", "gauss", "--levels", "0,1", "--thresholds", "0"],
             2, "'sigma' is required", "missing model parameter")
expect_error(["channel", "--model", "gauss", "--sigma", "1", "--levels", "0,,1", "--thresholds", "0"],
             2, "--levels: value 2 is empty", "empty list value")
expect_error(["channel", "--model", "gauss", "--sigma", "1", "--levels", "0,1", "--thresholds", "0",
              "--json", "--csv"], 2, "exclude each other", "json and csv")

# --- design --------------------------------------------------------------
rc, out, err = run("design", "--model", "gauss", "--sigma", "1", "--levels", "-1,1", "--bits", "1",
                   "--thresholds", "0", "--json")
check(rc == 0, f"design fixed exit {rc}: {err}")
j = parse(out, "json 7")
for key in ("rate_bits", "unquantized_bits", "thresholds", "levels", "input_distribution"):
    check(key in j, f"design JSON has key {key}")
# hard-decision BPSK: a binary symmetric channel with crossover Q(sqrt(snr)) = P(N(A, s^2) < 0),
# C = 1 - h2(p) (C. E. Shannon, "A mathematical theory of communication", Bell Syst. Tech. J.
# 27, 1948); Q from scipy.stats.norm.sf
check(abs(j["rate_bits"] - (1 - h2(norm.sf(1.0)))) < 1e-9, "1-bit BPSK rate")

rc, out, err = run("design", "--model", "gauss", "--snr-db", "10", "--levels", "-3,-1,1,3", "--bits", "3",
                   "--objective", "capacity", "--json")
check(rc == 0, f"design capacity exit {rc}: {err}")
j = parse(out, "json 8")
check("upper_bound_bits" in j, "capacity design reports upper_bound_bits")
check(j["upper_bound_bits"] >= j["rate_bits"] - 1e-12, "upper bound >= rate")
check(abs(j.get("parameters", {}).get("sigma", math.nan) - math.sqrt(5.0 / 10.0)) < 1e-12, "--snr-db sets sigma from E[x^2] = 5")

rc, out, _ = run("design", "--model", "gauss", "--snr-db", "10", "--levels", "-1,1", "--bits", "2")
check(rc == 0 and "bit/symbol" in out and "unquantized" in out, "design human output")

# thresholds in text at 1e-4 of the noise standard deviation: rounding noise of a
# symmetric design prints as 0, not 1e-16 (JSON keeps every digit)
rc, out, err = run("design", "--model", "gauss", "--snr-db", "30", "--alphabet", "pam:2", "--bits", "3",
                   "--quantizer", "lloyd-max")
tl = [line for line in out.splitlines() if line.startswith("thresholds")]
check(rc == 0 and tl and tl[0].startswith("thresholds (level units)"), "thresholds carry their unit")
check(rc == 0 and len(tl) == 1 and tl[0].split()[3:] == ["-1.031041,", "-1,", "-0.968959,", "0,",
                                                         "0.968959,", "1,", "1.031041"],
      f"threshold listing at the noise resolution ({tl})")

# long listings: the first and last 8 of 255 uniform thresholds, how many there are, and
# the uniform step on the quantizer line (the JSON's spacing)
args = ["design", "--model", "gauss", "--snr-db", "30", "--alphabet", "pam:64", "--bits", "8",
        "--quantizer", "uniform"]
rc, out, err = run(*args)
rcj, outj, _ = run(*args, "--json")
j = parse(outj, "json uniform 8 bits")
lines = out.splitlines()
tl = [k for k, line in enumerate(lines) if line.startswith("thresholds")]
ql = [line for line in lines if line.startswith("quantizer")]
if rc == 0 and rcj == 0 and tl and ql:
    listed = lines[tl[0]].split("  ", 1)[1].split(", ")
    t = j["thresholds"]
    check(len(t) == 255 and len(listed) == 17 and listed[8] == "..."
          and abs(float(listed[0]) - t[0]) < 1e-3 and abs(float(listed[-1]) - t[-1]) < 1e-3,
          f"255 thresholds listed by their first and last 8 ({listed[:3]} ... {listed[-3:]})")
    check("255 thresholds" in lines[tl[0] + 1] and "--json" in lines[tl[0] + 1],
          f"the cut listing says how many and where all are ({lines[tl[0] + 1]})")
    step = float(ql[0].split("step ")[1].split()[0])
    check(abs(step - (t[-1] - t[0]) / 254) < 1e-5 * step, f"uniform step on the quantizer line ({ql[0]})")
    # the 64 levels, each a mass point: the first and last 8, then how many
    head = [k for k, line in enumerate(lines) if line.strip().startswith("level ")]
    rows = lines[head[0] + 1:] if head else []
    check(len(rows) == 18 and rows[8].strip() == "..." and rows[0].split()[0] == "-63"
          and rows[16].split()[0] == "63" and "64 mass points" in rows[17],
          f"64 levels listed by their first and last 8 ({rows[:2]} ... {rows[-2:]})")
else:
    check(False, f"uniform 8-bit design ran ({err})")

# photon counting with more cells than counts that carry probability: capped, and said so
# (P(Y >= 19 | lambda = 1) = 3.2e-18, scipy.stats.poisson.sf(18, 1))
rc, out, err = run("design", "--model", "poisson", "--signal", "1", "--alphabet", "upam:2", "--bits", "16",
                   "--json")
j = parse(out, "json poisson cap")
check(rc == 0 and j["cells"] == 65536 and j["cells_used"] == 19 and j["thresholds"] == list(range(1, 19)),
      f"poisson 16 bits capped at 19 cells (cells_used {j['cells_used']})")
rc, out, err = run("design", "--model", "poisson", "--signal", "1", "--alphabet", "upam:2", "--bits", "16")
check(rc == 0 and "capped at 19 of the 65536 cells" in out and len(out) < 4000,
      "poisson cap said in text output")

expect_error(["design", "--model", "gauss", "--sigma", "1", "--levels", "-1,1", "--bits", "0"], 2,
             "--bits: '0' is not a whole number from 1 to 16", "bits 0")
expect_error(["design", "--model", "gauss", "--sigma", "1", "--levels", "-1,1", "--bits", "64"], 2,
             "--bits", "bits 64")
expect_error(["design", "--model", "gauss", "--sigma", "1", "--snr-db", "3", "--levels", "-1,1",
              "--bits", "2"], 2, "not both", "sigma and snr")
expect_error(["design", "--model", "gauss", "--sigma", "1", "--levels", "-1,1"], 2,
             "give 'bits' or 'cells' (or 'thresholds'", "no resolution")
expect_error(["design", "--model", "gauss", "--sigma", "1", "--levels", "-1,1", "--bits", "2",
              "--objective", "speed"], 2, "unknown value 'speed'", "bad objective")
expect_error(["design", "--model", "gauss", "--sigma", "1", "--levels", "-1,1", "--bits", "2",
              "--thresholds", "0"], 2, "1 thresholds make 2 cells", "threshold count")
expect_error(["design", "--model", "gauss", "--sigma", "1", "--levels", "-1,inf", "--bits", "2"], 2,
             "--levels: value 2: 'inf' is not a decimal number", "infinite level")

# --- noise models and the physical front end ------------------------------
rc, out, _ = run("models")
for name in ("gauss", "gauss-sd", "poisson", "apd", "apd-gauss", "preamp", "table"):
    check(rc == 0 and any(line.split()[0] == name for line in out.splitlines() if line.strip()),
          f"models lists {name}")
rc, out, _ = run("models", "apd")
check(rc == 0 and "--apd-gain" in out and "--sigma-th" in out and "electrons" in out,
      "models NAME lists parameters with units")

# models NAME lists the keys besides the parameters that apply to it
rc, out, _ = run("models", "poisson")
keys_part = out.split("other keys that apply")[-1]
check(rc == 0 and "--responsivity" in keys_part and "--wavelength-nm" in keys_part
      and "--thermal-density" not in keys_part and "--bandwidth" not in keys_part,
      "models poisson lists the front-end keys it takes, and only those")
rc, out, _ = run("models", "apd-gauss", "--json")
j = parse(out, "models apd-gauss --json")
check(rc == 0 and j and "bandwidth" not in j[0].get("keys", ["bandwidth"])
      and "slot-time" in j[0].get("keys", []),
      "models --json lists the keys that apply")

# `help COMMAND` is `COMMAND --help`, for every command
for command in ("capacity", "channel", "design", "models", "sweep"):
    rc, out, err = run("help", command)
    rc2, out2, _ = run(command, "--help")
    check(rc == 0 and out == out2 and out.startswith(f"usage: quantcap {command}"),
          f"help {command} prints the {command} help ({err.strip()})")

# a table model takes no SNR, received power or OSNR
table = write("tbl.txt", "levels 0 1\n0 1 1\n1 1 1\n")
for flag, value in (("--snr-db", "10"), ("--received-dbm", "-10"), ("--osnr-db", "3")):
    expect_error(["design", "--model", "table", "--table", table, "--bits", "1", flag, value],
                 2, f"'{flag[2:]}' does not apply to model 'table'", f"table with {flag}")

# on-off keying with ideal photon counting and no background is a Z channel
# with p = exp(-n_s): the Poisson law gives no count for 'on' with probability
# exp(-n_s), and 'off' never gives a count (definition of the model)
rc, out, err = run("channel", "--model", "poisson", "--signal", "2", "--levels", "0,1",
                   "--thresholds", "1", "--json")
m = parse(out, "poisson channel").get("matrix", [[math.nan] * 2] * 2)
check(rc == 0 and m[0] == [1.0, 0.0] and abs(m[1][0] - math.exp(-2.0)) < 1e-15,
      f"poisson OOK channel is a Z channel ({err.strip()})")
expect_error(["channel", "--model", "poisson", "--signal", "2", "--levels", "0,1",
              "--thresholds", "1.5"], 2, "whole photon count", "fractional count threshold")
expect_error(["channel", "--model", "poisson", "--signal", "2", "--levels", "-1,1",
              "--thresholds", "1"], 2, "level 1", "negative intensity level")
expect_error(["channel", "--model", "apd", "--signal", "100", "--apd-gain", "0.5", "--sigma-th", "10",
              "--levels", "0,1", "--thresholds", "100"], 2, "'apd-gain' must be >= 1", "APD gain < 1")
expect_error(["channel", "--model", "apd", "--signal", "100", "--apd-gain", "10", "--apd-k", "1.5",
              "--sigma-th", "10", "--levels", "0,1", "--thresholds", "100"], 2, "'apd-k' must be < 1",
             "APD k > 1")
expect_error(["channel", "--model", "gauss", "--signal", "3", "--sigma", "1", "--levels", "0,1",
              "--thresholds", "0"], 2, "--signal is not a parameter of model 'gauss'",
             "parameter of another model")
expect_error(["channel", "--model", "table", "--thresholds", "1"], 2, "needs --table",
             "table model without file")
badtab = write("badtable.txt", "levels 0 1\n0 1 1\n1 0.5\n")
expect_error(["channel", "--model", "table", "--table", badtab, "--thresholds", "0.5"], 2,
             "badtable.txt:3:", "malformed table names file:line")

# physical receiver routes (units in docs/models.md)
pin = ["design", "--model", "gauss-sd", "--alphabet", "upam:4", "--received-dbm", "-12",
       "--extinction-db", "10", "--responsivity", "0.8", "--bandwidth", "20e9",
       "--thermal-density", "15", "--bits", "3", "--json"]
rc, out, err = run(*pin)
j = parse(out, "PIN front end")
# mean photocurrent of the top level: R * P1 with P1 = 2 Pavg r/(r+1), r = 10 dB
p_avg = 1e-3 * 10 ** (-12 / 10)
p1 = 2 * p_avg * 10 / 11
check(rc == 0 and abs(j.get("levels", [0] * 4)[-1] - 0.8 * p1) < 1e-12 * 0.8 * p1,
      f"PIN front end: top level is R*P1 ({err.strip()})")
rc, out, err = run("design", "--model", "poisson", "--alphabet", "upam:2", "--received-dbm", "-70",
                   "--slot-time", "1e-9", "--wavelength-nm", "1550", "--efficiency", "0.8",
                   "--bits", "2", "--json")
j = parse(out, "photon front end")
# n = eta P T / (h c / lambda): the energy received in a slot over the photon energy
# h c / lambda (Planck-Einstein relation), with the peak power P = 2 Pavg for equiprobable
# on-off keying with a dark 'off' level (definition of the average)
h, c = 6.62607015e-34, 299792458.0  # SI 2019 exact constants
n_ref = 0.8 * 2 * 1e-3 * 10 ** (-7) * 1e-9 / (h * c / 1550e-9)
check(rc == 0 and abs(j.get("parameters", {}).get("signal", 0) / n_ref - 1) < 1e-5,
      f"photons per slot from the front end ({err.strip()})")
rc, out, err = run("design", "--model", "gauss", "--osnr-db", "20", "--symbol-rate", "25e9",
                   "--polarizations", "1", "--alphabet", "pam:2", "--bits", "1", "--json")
j = parse(out, "OSNR route")
# SNR = OSNR * 2 B_ref / (p R_s) (Essiambre et al. 2010): 100 * 2 * 12.5/25 = 100
check(rc == 0 and abs(j.get("parameters", {}).get("sigma", 0) - 0.1) < 1e-12,
      f"OSNR route: sigma = sqrt(1/100) ({err.strip()})")
expect_error(["design", "--model", "gauss-sd", "--alphabet", "pam:4", "--received-dbm", "-12",
              "--responsivity", "0.8", "--bandwidth", "1e9", "--thermal-density", "10", "--bits", "2"],
             2, "needs an intensity alphabet", "front end with bipolar alphabet")
expect_error(["design", "--model", "gauss-sd", "--alphabet", "upam:4", "--received-dbm", "-12",
              "--bandwidth", "1e9", "--thermal-density", "10", "--bits", "2"],
             2, "'responsivity' (A/W) is required", "front end without responsivity")
expect_error(["design", "--model", "gauss-sd", "--alphabet", "upam:4", "--received-dbm", "-12",
              "--responsivity", "-0.8", "--bits", "2"], 2, "--responsivity: must be > 0",
             "negative responsivity")
expect_error(["design", "--model", "apd", "--alphabet", "upam:2", "--received-dbm", "-30",
              "--responsivity", "0.8", "--thermal-density", "10", "--apd-gain", "10",
              "--apd-k", "2", "--slot-time", "1e-10", "--bits", "2"], 2, "--apd-k: must be <= 1",
             "APD k out of range")
expect_error(["design", "--model", "gauss-sd", "--alphabet", "upam:4", "--received-dbm", "-12",
              "--responsivity", "0.8", "--bandwidth", "1e9", "--thermal-density", "10",
              "--sigma0", "1", "--bits", "2"], 2, "not both", "front end and model parameters")

# Saturated rate (8-PAM at 30 dB, 3-bit uniform quantizer): no SNR
# penalty, with the reason, in the text and in JSON (null beside a note).
sat = ["design", "--model", "gauss", "--snr-db", "30", "--alphabet", "pam:8", "--bits", "3",
       "--quantizer", "uniform"]
rc, out, err = run(*sat)
check(rc == 0, f"saturated design: exit {rc} ({err.strip()})")
check("penalty undefined: rate saturated" in out and "0.4133" not in out,
      "saturated design: text says why the penalty is undefined")
rc, out, err = run(*sat, "--json")
j = parse(out, "saturated design --json")
check(j["snr_penalty_db"] is None and "saturated" in (j["snr_penalty_note"] or ""),
      f"saturated design: JSON penalty null with its note ({j['snr_penalty_note']})")
check(j["loss_bits"] >= 0.0 and j["rate_bits"] <= 3.0, "saturated design: rate <= log2 8, loss >= 0")
# Nearly noiseless receiver: the noiseless limit, said so.
rc, out, err = run("design", "--model", "gauss", "--sigma", "1e-300", "--alphabet", "pam:4",
                   "--bits", "2")
check(rc == 0 and "noiseless limit" in out, f"noiseless design: exit {rc}, says so ({err.strip()})")
rc, out, err = run("design", "--model", "gauss", "--sigma", "1e-300", "--alphabet", "pam:4",
                   "--bits", "2", "--json")
j = parse(out, "noiseless design --json")
check(j["noiseless_limit"] is True and j["unquantized_bits"] == 2.0 and j["rate_bits"] == 2.0,
      "noiseless design: JSON flags the limit, 2 bit")

for cmd in ("capacity", "channel", "design", "models"):
    rc, out, _ = run(cmd, "--help")
    check(rc == 0 and "usage: quantcap " + cmd in out, f"{cmd} --help")

print(f"{tally.count - len(tally.failures)} passed, {len(tally.failures)} failed")
sys.exit(1 if tally.failures else 0)

#!/usr/bin/python3
"""Text output of quantcap: a unit beside every number, plurals, the SNR
definition named, file content shown escaped in messages, and the
parameter ranges `quantcap models` lists equal to the ones it checks.

Usage: check_text.py PATH/TO/quantcap"""
import json
import math
import os
import re
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from checklib import Tally  # noqa: E402

QC = sys.argv[1]
tally = Tally()
check = tally.check
TMP = tempfile.mkdtemp(prefix="qc-text-")
SNR_TOL_DB = 1e-9  # dB; the SNR is a closed form of the parameters


def run(*args):
    p = subprocess.run([QC, *args], capture_output=True)
    return p.returncode, p.stdout.decode("utf-8"), p.stderr


def write(name, data):
    path = os.path.join(TMP, name)
    with open(path, "wb") as f:
        f.write(data if isinstance(data, bytes) else data.encode())
    return path


def line(text, head):
    """The first line of text starting with head ('' if none)."""
    return next((ln for ln in text.splitlines() if ln.startswith(head)), "")


# ---- units and plurals: capacity --------------------------------------
one = write("one.txt", "1\n")
rc, out, _ = run("capacity", one)
check(rc == 0, "capacity of a 1 x 1 matrix runs")
check("(1 input x 1 output)" in out, f"plural: 1 input x 1 output ({line(out, 'channel')})")
check(re.search(r"\b1 iteration\b", out) is not None, f"plural: 1 iteration ({line(out, 'method')})")
bsc = write("bsc.txt", "0.9 0.1\n0.2 0.8\n")
rc, out, _ = run("capacity", bsc, "--costs", "0,1", "--budget", "0.2")
check(rc == 0, "capacity with costs runs")
check("bit/use" not in out, "capacity: one rate unit (no bit/use)")
check(line(out, "capacity").endswith("bit/symbol"), f"capacity in bit/symbol ({line(out, 'capacity')})")
check(re.search(r"gap \S+ bit/symbol \(tolerance \S+ bit/symbol\)", line(out, "certified")),
      f"gap and tolerance with units ({line(out, 'certified')})")
cost = line(out, "cost")
check("cost units" in cost and "bit/symbol per cost unit" in cost,
      f"cost and multiplier with units ({cost})")
# the multiplier is the slope of C(budget) in bits: compare with a finite
# difference of the certified capacities (tolerance of the slope estimate)
m = float(re.search(r"multiplier (\S+)", cost).group(1))
caps = []
for b in (0.19, 0.21):
    rc, o, _ = run("capacity", bsc, "--costs", "0,1", "--budget", str(b), "--json")
    caps.append(json.loads(o)["capacity_bits"])
slope = (caps[1] - caps[0]) / 0.02
check(abs(m - slope) < 1e-3 * abs(slope), f"multiplier {m} bit/symbol per cost unit = dC/dB {slope}")

# ---- design: units of levels, thresholds, rates -----------------------
DESIGNS = {
    "photocurrent (A)": (["--model", "gauss-sd", "--alphabet", "upam:2", "--received-dbm", "-12",
                          "--responsivity", "0.8", "--thermal-density", "10", "--bandwidth", "5e9",
                          "--extinction-db", "10", "--bits", "2"], "A", "A"),
    "apd (electrons)": (["--model", "apd-gauss", "--signal", "100", "--apd-gain", "10", "--sigma-th", "20",
                         "--alphabet", "upam:2", "--bits", "2"], "relative intensity", "electrons"),
    "poisson (photons)": (["--model", "poisson", "--signal", "5", "--alphabet", "upam:2", "--bits", "1"],
                          "relative intensity", "photons"),
    "gauss (level units)": (["--model", "gauss", "--sigma", "0.5", "--levels", "-1,1", "--bits", "1"],
                            "level units", "level units"),
}
for what, (args, lu, ou) in DESIGNS.items():
    rc, out, err = run("design", *args)
    check(rc == 0, f"design {what} runs ({err.decode(errors='replace').strip()})")
    check(line(out, "thresholds").startswith(f"thresholds ({ou})"), f"{what}: thresholds in {ou}")
    check(f"(levels in {lu})" in out, f"{what}: levels in {lu}")
    check("bit/use" not in out and "bit/symbol" in out, f"{what}: rates in bit/symbol only")
    for head in ("rate", "unquantized", "loss"):
        check("bit/symbol" in line(out, head), f"{what}: '{head}' line has its unit")
    rc, js, _ = run("design", *args, "--json")
    j = json.loads(js)
    check(j.get("level_unit") == lu and j.get("output_unit") == ou, f"{what}: JSON units {lu}, {ou}")
rc, out, _ = run("design", "--model", "gauss", "--snr-db", "10", "--alphabet", "qam:16", "--bits", "2")
check(rc == 0 and "bit/complex symbol" in out and "bit/symbol" not in out and "bit/use" not in out,
      "QAM: rates in bit/complex symbol only")
rc, out, _ = run("design", "--model", "gauss", "--sigma", "0.5", "--levels", "-1,1", "--bits", "1")
check("(1 bit)" in out and "(1 bits)" not in out, "plural: 1 bit")
rc, out, _ = run("design", "--model", "table", "--table",
                 os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "data",
                              "table_demo.txt"), "--bits", "1")
check(re.match(r"model\s+table: densities from \S*table_demo\.txt", line(out, "model")),
      f"model table names its file ({line(out, 'model')})")
rc, out, _ = run("design", "--model", "gauss", "--sigma", "0.5", "--levels", "-1,1", "--bits", "1",
                 "--compare")
check(rc == 0 and "bit/use" not in out and "in bit/symbol" in out, "--compare names the rate unit")
rc, out, _ = run("channel", "--model", "apd", "--signal", "100", "--apd-gain", "10", "--sigma-th", "20",
                 "--levels", "0,1", "--thresholds", "500")
check("signal = 100 electrons" in out and "in relative intensity" in out and "in electrons" in out,
      "channel: parameters, levels and cells with units")

# ---- the SNR definition -----------------------------------------------
# OOK on gauss-sd with equal noise on both levels: Var[x]/sigma^2 = Q^2,
# Q = (x1 - x0)/(sigma1 + sigma0) (Personick, Bell Syst. Tech. J. 52(6),
# 1973; from memory): levels 0, 2 and sigma 0.5 give Q = 2, 6.0206 dB.
rc, js, _ = run("design", "--model", "gauss-sd", "--sigma0", "0.5", "--levels", "0,2", "--bits", "1",
                "--json")
j = json.loads(js)
q = (2.0 - 0.0) / (0.5 + 0.5)
check(abs(j["operating_snr_db"] - 10 * math.log10(q * q)) < SNR_TOL_DB, f"gauss-sd OOK SNR = Q^2 ({j['operating_snr_db']} dB)")
check("Var[x]" in (j.get("snr_definition") or ""), "gauss-sd JSON names the SNR definition")
rc, out, _ = run("design", "--model", "gauss-sd", "--sigma0", "0.5", "--levels", "0,2", "--bits", "1")
check("Var[x]/E[sigma^2(x)]" in line(out, "SNR means"), "gauss-sd text names the SNR definition")
rc, js, _ = run("design", "--model", "gauss", "--sigma", "0.5", "--levels", "0,2", "--bits", "1", "--json")
j = json.loads(js)
check(j.get("snr_definition", "").startswith("E[x^2]/sigma^2")
      and abs(j["operating_snr_db"] - 10 * math.log10(2.0 / 0.25)) < SNR_TOL_DB, "gauss keeps E[x^2]/sigma^2")
rc, js, _ = run("design", "--model", "gauss", "--snr-db", "10", "--alphabet", "qam:16", "--bits", "2",
                "--json")
check(json.loads(js).get("snr_definition", "").startswith("Es/N0"), "QAM SNR named Es/N0")
rc, js, _ = run("design", "--model", "poisson", "--signal", "5", "--alphabet", "upam:2", "--bits", "1",
                "--json")
check("snr_definition" in json.loads(js) and json.loads(js)["snr_definition"] is None,
      "a model without SNR: snr_definition null")

# ---- file content in messages -----------------------------------------
def escaped_message(args, what, needle):
    rc, out, err = run(*args)
    check(rc == 2, f"{what}: exit 2 (got {rc})")
    try:
        text = err.decode("utf-8")
    except UnicodeDecodeError:
        check(False, f"{what}: stderr is not valid UTF-8: {err!r}")
        return
    check(text.count("\n") == 1 and text.startswith("quantcap: error: "), f"{what}: one line")
    check(needle in text, f"{what}: message shows '{needle}' ({text.strip()})")
    check(all(c == "\n" or c.isprintable() for c in text), f"{what}: printable message")


binary = write("binary.bin", b"\x7fELF\x02\x01\x01\x00\x00\x00\x03\x00>\x00\n")
escaped_message(["capacity", binary], "binary matrix file", "'\\x7FELF\\x02\\x01\\x01\\x00")
table = write("binary_table.txt", b"levels 0 1\n0 1 \x01\xff\xfeabc\n1 1 1\n")
escaped_message(["channel", "--model", "table", "--table", table, "--thresholds", "0.5"],
                "binary table field", "'\\x01\\xFF\\xFEabc'")
long_field = write("long.txt", b"0.5 0.5" + b"z" * 60 + b"\n")
escaped_message(["capacity", long_field], "long field", "'0.5" + "z" * 37 + "...'")
escaped_message(["design", "--model", "gauss", "--sigma", "\x01\x02", "--levels", "0,1", "--bits", "1"],
                "control bytes in an argument", "'\\x01\\x02'")
utf8 = write("utf8.txt", "0.5 µ\n".encode())
escaped_message(["capacity", utf8], "UTF-8 kept", "'µ'")

# ---- models: listed ranges are the checked ones -----------------------
rc, js, _ = run("models", "--json")
models = json.loads(js)
REQUIRED = {"sigma": 1.0, "sigma0": 1.0, "signal": 10.0, "apd-gain": 2.0, "sigma-th": 10.0, "modes": 2.0}


def refused(model, name, value):
    """1 when the value of parameter name is refused as out of range."""
    args = ["channel", "--model", model, "--levels", "0,1", "--thresholds", "1"]
    for p in model_params[model]:
        if p["name"] != name and p["name"] in REQUIRED and not math.isfinite(p["default"] or math.nan):
            args += [f"--{p['name']}", repr(REQUIRED[p["name"]])]
    args += [f"--{name}", repr(value)]
    rc, _, err = run(*args)
    msg = err.decode(errors="replace")
    return rc == 2 and f"parameter '{name}' must be" in msg


model_params = {m["name"]: m["parameters"] for m in models}
for m in models:
    rc, text, _ = run("models", m["name"])
    for p in m["parameters"]:
        lo_op = ">" if p.get("min_exclusive", False) else ">="
        listed = re.search(rf"--{re.escape(p['name'])}\s.*?; ([^;]*);", text)
        shown = listed.group(1) if listed else ""
        check(shown.startswith(f"{lo_op} "), f"{m['name']} {p['name']}: listing '{shown}' says {lo_op}")
        check(refused(m["name"], p["name"], p["min"]) == bool(p.get("min_exclusive", False)),
              f"{m['name']} {p['name']} = min {p['min']}: refused iff listed as exclusive")
        below = math.nextafter(p["min"], -math.inf)
        check(refused(m["name"], p["name"], below), f"{m['name']} {p['name']} below min refused")
        if p["max"] is not None and math.isfinite(p["max"]):
            hi_op = "<" if p.get("max_exclusive", False) else "<="
            check(f", {hi_op} " in shown, f"{m['name']} {p['name']}: listing '{shown}' says {hi_op}")
            if m["name"] == "apd" and p["name"] == "apd-gain":
                continue  # gain 1e6 builds a gain law too long for a quick check
            check(refused(m["name"], p["name"], p["max"]) == bool(p.get("max_exclusive", False)),
                  f"{m['name']} {p['name']} = max {p['max']}: refused iff listed as exclusive")
            check(refused(m["name"], p["name"], math.nextafter(p["max"], math.inf)),
                  f"{m['name']} {p['name']} above max refused")

print(f"{tally.count - len(tally.failures)} passed, {len(tally.failures)} failed")
sys.exit(1 if tally.failures else 0)

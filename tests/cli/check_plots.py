#!/usr/bin/python3
"""The figures of `quantcap sweep`: which files each demo study writes
(small multiples: a handful per study, names without double hyphens),
what their text says (the scenario's title, axis labels with units that
fit the model, operating points in words, QAM rates per complex symbol),
that a figure whose points all failed is left out and said so, and that
a rerun removes the stale files of an earlier one (listed in
manifest.txt) and nothing else.

Usage: check_plots.py PATH/TO/quantcap
The demo studies run with a narrowed x axis to keep the test short; the
other scenarios below are invented for the test."""
import os
import re
import sys
import tempfile

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, ".."))
from checklib import Tally, qc_runner, file_writer, svg_text  # noqa: E402

QC = sys.argv[1]
SCENARIOS = os.path.join(HERE, "..", "..", "scenarios")
tally = Tally()
check = tally.check
tmp = tempfile.mkdtemp(prefix="qc-plots-")


run = qc_runner(QC)


write = file_writer(tmp)


def manifest(folder):
    path = os.path.join(folder, "manifest.txt")
    if not os.path.exists(path):
        return None
    with open(path) as f:
        return [ln.strip() for ln in f if ln.strip() and not ln.startswith("#")]


def figures(folder):
    return sorted(f for f in os.listdir(folder) if f.endswith(".svg"))


# probe: a build without PLplot draws nothing and says so
probe = os.path.join(tmp, "probe")
rc, out, err = run("sweep", os.path.join(SCENARIOS, "designer.ini"), "--output-dir", probe,
                   "--set", "snr-db=0,10,15,20,30", "--set", "bits=1,2,3")
check(rc == 0, f"designer study runs ({rc}: {err})")
if "plots skipped" in out:
    print("this build has no PLplot: nothing to check")
    print(f"{tally.count - len(tally.failures)} passed, {len(tally.failures)} failed")
    sys.exit(0)

# --- the three demo studies -----------------------------------------------
STUDIES = {
    "designer": (["snr-db=0,10,15,20,30", "bits=1,2,3"],
                 ["density_pam4_snr-db-15_bits-3.svg", "rate-vs-bits.svg",
                  "rate-vs-snr-db.svg"]),
    "researcher": (["signal=1,10,20,100"],
                   ["density_pam4_quantizer-optimal_background-0.1_signal-20_bits-2.svg",
                    "rate-vs-bits_quantizer-optimal.svg", "rate-vs-bits_quantizer-uniform.svg",
                    "rate-vs-signal_ook.svg", "rate-vs-signal_pam4.svg"]),
    "planner": (["received-dbm=-30,-24,-18"],
                ["density_pam4_apd-gain-10_received-dbm-minus24_bits-3.svg", "rate-vs-bits.svg",
                 "rate-vs-received-dbm_ook.svg", "rate-vs-received-dbm_pam4.svg",
                 "rate-vs-received-dbm_pam8.svg"]),
}
TITLES = {
    "designer": "ADC bits vs rate (invented)",
    "researcher": "Photon counting with background (invented)",
    "planner": "Short-reach link, PIN vs APD (invented)",
}
texts = {}
for study, (sets, expected) in STUDIES.items():
    folder = probe if study == "designer" else os.path.join(tmp, study)
    if study != "designer":
        args = ["sweep", os.path.join(SCENARIOS, f"{study}.ini"), "--output-dir", folder]
        for s in sets:
            args += ["--set", s]
        rc, out, err = run(*args)
        check(rc == 0, f"{study} study runs ({rc}: {err})")
    got = figures(folder)
    check(got == expected, f"{study}: writes {len(expected)} figures {expected} (got {got})")
    for name in got:
        check("--" not in name, f"{study}/{name}: no double hyphen in the name")
        t = svg_text(os.path.join(folder, name))
        texts[(study, name)] = t
        check(TITLES[study] in t, f"{study}/{name}: carries the scenario's title")
        check(not any(re.search(r"[a-z]-[a-z]+ = ", s) for s in t),
              f"{study}/{name}: no 'key = value' in titles")


def has(study, name, needle):
    t = texts.get((study, name), [])
    return any(needle in s for s in t)


# axis labels with units that fit the model
check(has("designer", "rate-vs-snr-db.svg", "SNR (dB)"), "designer: x axis SNR (dB)")
check(has("designer", "rate-vs-snr-db.svg", "information rate (bit/symbol)"),
      "designer: rate axis with its unit")
check(has("designer", "rate-vs-bits.svg", "ADC resolution (bits)"),
      "designer (uniform quantizer of a continuous output): ADC resolution")
for panel in ("SNR 0 dB", "SNR 10 dB", "SNR 20 dB", "SNR 30 dB"):
    check(has("designer", "rate-vs-bits.svg", panel), f"designer: a panel titled '{panel}'")
check(has("designer", "density_pam4_snr-db-15_bits-3.svg", "receiver output y (normalized units)"),
      "designer density: output in normalized units")
check(has("planner", "density_pam4_apd-gain-10_received-dbm-minus24_bits-3.svg",
          "receiver output y (electrons)"), "planner density: output in electrons")
check(has("planner", "density_pam4_apd-gain-10_received-dbm-minus24_bits-3.svg",
          "density p(y | x) (10\u22124 per electron)"),
      "planner density: density per electron, in units of 10^-4 (short tick numbers)")
check(has("planner", "density_pam4_apd-gain-10_received-dbm-minus24_bits-3.svg",
          "received power \u221224 dBm"), "planner density: operating point in words")
check(has("planner", "rate-vs-bits.svg", "received power \u221224 dBm"),
      "planner: panels titled by received power in words")
check(has("planner", "rate-vs-bits.svg", "APD gain 10"),
      "planner: APD gain told apart by line style, in the legend")
check(has("planner", "rate-vs-received-dbm_ook.svg", "received power (dBm)"),
      "planner: x axis received power (dBm)")
for name in STUDIES["researcher"][1]:
    check(not has("researcher", name, "ADC"), f"researcher/{name}: no ADC for a photon counter")
check(has("researcher", "rate-vs-bits_quantizer-optimal.svg", "count quantizer (bits"),
      "researcher: the bits axis names the count quantizer")
check(has("researcher", "density_pam4_quantizer-optimal_background-0.1_signal-20_bits-2.svg",
          "photon count y (photons per slot)"), "researcher density: counts in photons")
check(has("researcher", "rate-vs-bits_quantizer-optimal.svg", "signal 1 photon"),
      "researcher: one photon, not '1 photons'")
check(has("researcher", "rate-vs-signal_ook.svg", "background 0.1 photons"),
      "researcher: a panel per background, in words")
check(has("researcher", "rate-vs-signal_ook.svg", "optimal quantizer"),
      "researcher: quantizers told apart by line style, in the legend")
# a loss of 0 on the log scale is marked as below the axis, not drawn as a value
check(has("planner", "rate-vs-bits.svg", " or 0"),
      "planner: losses below the log axis (OOK's zero loss) marked and named in the legend")

# markers are shapes centred on their points, not font glyphs (which sit
# off their reference point): the circle glyph appears in the legend only
check(sum(1 for s in texts.get(("designer", "rate-vs-snr-db.svg"), []) if s == "\u25cb") == 1,
      "designer: the circle marker is a glyph only in the legend")
# the log loss axis spans six decades below the largest loss (0.95 bit), not
# a decade above it, and is numbered every second decade
decades = [s for s in texts.get(("researcher", "rate-vs-bits_quantizer-optimal.svg"), [])
           if re.fullmatch(r"10[-\u2212]?\d+", s)]
check(decades == ["10-6", "10-4", "10-2", "100"] * 3,
      f"researcher: log loss axis of six decades, numbered every second one ({decades})")

# --- QAM: rates per complex symbol, the density shows one quadrature ------
QAM = """# invented test scenario
[scenario]
title = qam plot test

[receiver]
model = gauss

[design]
objective = mi

[alphabet qam16]
label = QAM-16
alphabet = qam:16

[sweep]
snr-db = 5, 10, 15
bits = 1, 2

[plots]
rate-vs-bits = 10

[density]
alphabet = qam16
snr-db = 10
bits = 2
"""
qdir = os.path.join(tmp, "qam")
rc, out, err = run("sweep", write("qam.ini", QAM), "--output-dir", qdir)
check(rc == 0, f"QAM sweep runs ({rc}: {err})")
qnames = figures(qdir)
check(qnames == ["density_qam16_snr-db-10_bits-2.svg", "rate-vs-bits_snr-db-10.svg",
                 "rate-vs-snr-db_qam16.svg"], f"QAM figures ({qnames})")
for name in qnames:
    t = svg_text(os.path.join(qdir, name))
    if name.startswith("rate"):
        check(any("bit/complex symbol" in s for s in t), f"{name}: rate per complex symbol")
        check(not any("bit/use" in s for s in t), f"{name}: no bit/use for QAM")
    else:
        check(any("one quadrature" in s for s in t), f"{name}: says it shows one quadrature")

# --- a figure whose every point failed is left out, and said so -----------
FAIL = """# invented test scenario: the 'bad' alphabet's mean budget is below
# its smallest level, so every one of its points is infeasible
[scenario]
title = failing points

[receiver]
model = gauss

[design]
objective = mi

[alphabet good]
levels = 1, 3

[alphabet bad]
levels = 1, 3
mean-limit = 0.5

[sweep]
quantizer = uniform, optimal
snr-db = 0, 10
bits = 1, 2

[plots]
rate-vs-bits = 10

[density]
alphabet = bad
snr-db = 10
bits = 1
"""
fdir = os.path.join(tmp, "fail")
rc, out, err = run("sweep", write("fail.ini", FAIL), "--output-dir", fdir)
check(rc == 0, f"sweep with failing points exits 0 ({rc}: {err})")
fnames = figures(fdir)
check(fnames == ["rate-vs-bits_snr-db-10.svg", "rate-vs-snr-db_good.svg"],
      f"only the figures with results are drawn ({fnames})")
check("plot skipped rate-vs-snr-db_bad.svg: every point in it failed" in out,
      f"the left-out figure is named ({out!r})")
check("plot skipped the density plot" in out and "failed" in out,
      "the left-out density plot is named")
if "rate-vs-bits_snr-db-10.svg" in fnames:
    t = svg_text(os.path.join(fdir, "rate-vs-bits_snr-db-10.svg"))
    check("bad (every point failed)" in t, "a curve with no result says why in the legend")

# --- a rerun removes its own stale files, nothing else --------------------
mdir = os.path.join(tmp, "rerun")
scen = os.path.join(SCENARIOS, "researcher.ini")
narrow = ["--set", "signal=1,10,20,100"]
rc, out, err = run("sweep", scen, "--output-dir", mdir, *narrow)
check(rc == 0, f"first run ({rc}: {err})")
listed = manifest(mdir) or []
check(sorted(listed) == sorted(STUDIES["researcher"][1] + ["results.csv", "results.json"]),
      f"manifest.txt lists what the sweep wrote ({listed})")
mine = ["rate-vs-signal_ook_quantizer-optimal.svg", "notes.txt"]
for name in mine:  # files the sweep did not write: never touched
    write(os.path.join("rerun", name), "mine\n")
rc, out, err = run("sweep", scen, "--output-dir", mdir, *narrow, "--set", "quantizer=optimal")
check(rc == 0, f"rerun with one quantizer ({rc}: {err})")
now = figures(mdir)
expected = ["density_pam4_background-0.1_signal-20_bits-2.svg",
            "rate-vs-bits.svg", "rate-vs-signal_ook.svg", "rate-vs-signal_pam4.svg"]
check(sorted(set(now) - {mine[0]}) == expected, f"rerun: only its own figures remain ({now})")
for stale in ("rate-vs-bits_quantizer-optimal.svg", "rate-vs-bits_quantizer-uniform.svg"):
    check(f"removed {os.path.join(mdir, stale)}" in out, f"the removal of {stale} is reported")
for name in mine:
    check(os.path.exists(os.path.join(mdir, name)), f"{name} (not the sweep's) is kept")
listed = manifest(mdir) or []
check(sorted(listed) == sorted(expected + ["results.csv", "results.json"]),
      f"manifest.txt lists the rerun's files ({listed})")

# a sweep that draws no plots leaves the earlier figures alone
rc, out, err = run("sweep", scen, "--output-dir", mdir, *narrow, "--set", "quantizer=optimal",
                   "--no-plots")
check(rc == 0 and "removed" not in out, f"--no-plots removes nothing ({rc}: {out!r})")
check(sorted(set(figures(mdir)) - {mine[0]}) == expected, "--no-plots keeps the figures")
check(sorted(manifest(mdir) or []) == sorted(expected + ["results.csv", "results.json"]),
      "--no-plots keeps the figures listed")

# --- photon efficiency of pulse-position modulation ----------------------
pdir = os.path.join(tmp, "photon-efficiency")
rc, out, err = run("sweep", os.path.join(SCENARIOS, "photon-efficiency.ini"), "--output-dir",
                   pdir, "--set", "signal=0.251,1,3.98,15.8")
check(rc == 0, f"photon-efficiency study runs ({rc}: {err})")
check(figures(pdir) == ["photon-efficiency.svg"], f"photon-efficiency: one figure ({figures(pdir)})")
if figures(pdir) == ["photon-efficiency.svg"]:
    t = svg_text(os.path.join(pdir, "photon-efficiency.svg"))
    for needle in ("Photon efficiency of pulse-position modulation (invented)",
                   "detected signal photons per pulse", "bit per detected photon",
                   "rate per slot (bit/slot)", "4-PPM", "1024-PPM", "soft: quantized counts",
                   "hard: one threshold per slot", "soft: unquantized counts",
                   "1-bit quantizer", "3-bit quantizer"):
        check(any(needle in x for x in t), f"photon-efficiency: '{needle}' in the figure")
# M as a sweep axis: one curve per value, named as the trade does
PPM_AXIS = """# invented test scenario
[scenario]
title = ppm axis test

[receiver]
model = poisson
background = 0.1

[sweep]
alphabet = ppm:4, ppm:32
signal = 0.5, 2, 8
bits = 2

[plots]
rate-vs-x = false
photon-efficiency = true
"""
adir = os.path.join(tmp, "ppm-axis")
rc, out, err = run("sweep", write("ppm_axis.ini", PPM_AXIS), "--output-dir", adir)
check(rc == 0 and figures(adir) == ["photon-efficiency.svg"],
      f"PPM over an alphabet axis: one figure ({rc}: {err} {figures(adir)})")
if figures(adir) == ["photon-efficiency.svg"]:
    t = svg_text(os.path.join(adir, "photon-efficiency.svg"))
    check("4-PPM" in t and "32-PPM" in t, f"the alphabet axis names the curves ({t})")
# not pulse position: the figure is left out and said so
rc, out, err = run("sweep", write("ppm_none.ini", PPM_AXIS.replace("ppm:4, ppm:32",
                                                                   "upam:2, upam:4")),
                   "--output-dir", os.path.join(tmp, "ppm-none"))
check(rc == 0 and "skipped photon-efficiency.svg: no point in it is pulse-position" in out,
      f"no PPM point: the figure is skipped with a note ({rc}: {out} {err})")

# --- the legend names the unquantized curve only when one is drawn --------
# (with a phase error a 2-D receiver has no unquantized reference; without
# one, at 0 degrees alone, there is no segment to draw either)
IQ_PN = """# invented test scenario
[scenario]
title = legend test
[receiver]
model = gauss
[design]
objective = gmi
quantizer = uniform
bits = 2
alphabet = qam:16
iq-quantizer = product
[sweep]
snr-db = 14
phase-noise-deg = 2, 4
[plots]
x = phase-noise-deg
"""
ldir = os.path.join(tmp, "legend")
rc, out, err = run("sweep", write("iq_pn.ini", IQ_PN), "--output-dir", ldir)
check(rc == 0, f"2-D sweep over the phase error ({rc}: {err})")
pn_figures = [n for n in figures(ldir) if n.startswith("rate-vs-phase-noise-deg")]
check(pn_figures, f"the 2-D sweep draws its rate against the phase error ({figures(ldir)})")
for name in pn_figures:
    t = svg_text(os.path.join(ldir, name))
    check("unquantized" not in t, f"{name}: no unquantized curve, none in the legend")
rc, out, err = run("sweep", write("iq_pn0.ini", IQ_PN.replace("phase-noise-deg = 2, 4",
                                                             "phase-noise-deg = 0, 0.5")
                                                    .replace("objective = gmi",
                                                             "objective = mi")),
                   "--output-dir", ldir + "0")
names = [n for n in figures(ldir + "0") if n.startswith("rate-vs-phase-noise-deg")]
check(rc == 0 and names, f"2-D sweep from 0 degrees ({rc}: {err})")

# A channel with memory and no alphabet sections: the BER figure gives the
# simulated BCJR BER with its 95 % intervals as bars, and names the alphabet
# by its key, not the internal name of the one implicit alphabet
MEM = """[receiver]
model = gauss
snr-db = 22
[design]
alphabet = upam:4
quantizer = uniform
symbols = 4000
seed = 3
fec = kp4
taps = 1, 0.3
[sweep]
bits = 3, 4
[plots]
format = svg
x = bits
ber-vs-x = true
"""
mdir2 = os.path.join(tmp, "memory")
rc, out, err = run("sweep", write("mem.ini", MEM), "--output-dir", mdir2)
check(rc == 0, f"memory sweep ({rc}: {err})")
bers = [n for n in figures(mdir2) if n.startswith("ber-vs-bits")] if rc == 0 else []
check(len(bers) == 1, f"memory sweep: one BER figure ({bers})")
for name in bers:
    t = svg_text(os.path.join(mdir2, name))
    check(any("bars: 95 % interval" in s for s in t), f"{name}: the y label names the bars")
    check(any(s.startswith("upam:4: ") for s in t) and not any("default" in s for s in t),
          f"{name}: the alphabet is named upam:4, never 'default' ({t[:4]})")

# the gmi objective: the rate drawn is the BICM GMI, and the figure says so
GMI = """[receiver]
model = gauss
[design]
alphabet = pam:4
objective = gmi
[sweep]
snr-db = 5, 10
bits = 2
[plots]
format = svg
x = snr-db
"""
gdir = os.path.join(tmp, "gmi")
rc, out, err = run("sweep", write("gmi.ini", GMI), "--output-dir", gdir)
names = [n for n in figures(gdir) if n.startswith("rate-vs-snr-db")] if rc == 0 else []
check(len(names) == 1, f"gmi sweep draws its rate ({rc}: {err})")
for name in names:
    t = svg_text(os.path.join(gdir, name))
    check("GMI (bit/symbol)" in t and not any("information rate" in s for s in t),
          f"{name}: the y axis says GMI ({t[:3]})")

print(f"{tally.count - len(tally.failures)} passed, {len(tally.failures)} failed")
sys.exit(1 if tally.failures else 0)

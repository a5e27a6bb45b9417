#!/usr/bin/python3
"""Two-dimensional constellations and coherent receivers through
`quantcap iq` (the bad-input paths are cases in tests/bad_inputs/cases.tsv).

Usage: check_iq_cli.py PATH/TO/quantcap
References, named beside each check: square QAM through `quantcap design`
(two independent PAMs, docs/alphabets.md); scipy.integrate (Debian
python3-scipy) for two-dimensional integrals of the Gaussian density over
rectangles and polar cells; scipy.stats.rice for the amplitude (Rice,
Bell Syst. Tech. J. 1944); seeded numpy Monte-Carlo with binomial
confidence intervals."""
import json
import math
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy import integrate
from scipy.stats import norm, rice, vonmises

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from checklib import Tally  # noqa: E402

QC = sys.argv[1]
tally = Tally()
check = tally.check

TOL_EXACT = 1e-12      # same channel computed two ways in double precision (bits)
TOL_CELL = 1e-8        # a cell probability against scipy's 2-D quadrature (epsabs 1e-11)
TOL_MI_QUAD = 1e-8     # an MI from scipy-integrated cells (bits)
TOL_UNQ = 1e-8         # unquantized MI: Gauss-Hermite against design's quadrature (bits)
MC_SAMPLES = 2_000_000 # Monte-Carlo draws per point
MC_Z = 5.0             # half-width of each cell's interval in binomial standard
                       # deviations: two-sided miss probability 5.7e-7 per cell
MC_SEED = 20260102


def iq(*args):
    p = subprocess.run([QC, "iq", *args, "--json"], capture_output=True, text=True)
    check(p.returncode == 0, f"iq {' '.join(args)}: exit {p.returncode} ({p.stderr.strip()})")
    try:
        return json.loads(p.stdout)
    except ValueError:
        check(False, f"iq {' '.join(args)}: output is JSON")
        return {"receivers": [{}]}


def mi_bits(P, law):
    """I(X;Y) in bits of a transition matrix P under the law."""
    P = np.asarray(P)
    q = law @ P
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.where(P > 0, P * np.log2(P / q), 0.0)
    return float(law @ t.sum(axis=1))


def points_of(spec_rings):
    """APSK points from [(radius, count, offset_deg)], as quantcap builds them."""
    pts = []
    for r, n, off in spec_rings:
        for j in range(n):
            ph = math.radians(off) + 2 * math.pi * j / n
            pts.append((r * math.cos(ph), r * math.sin(ph)))
    return np.array(pts)


# ---- 1. square QAM as points reproduces the product of two PAMs exactly ----
# Reference: quantcap design on qam:16 (one quadrature, doubled; exact
# chain rule for MI and Gray-labelled GMI, docs/alphabets.md).
for snr, thr in ((12, "-2,0,2"), (6, "-2.5,-1,0,1.3,2.5")):
    d = subprocess.run([QC, "design", "--model", "gauss", "--snr-db", str(snr), "--alphabet",
                        "qam:16", "--quantizer", "fixed", "--thresholds", thr, "--objective",
                        "gmi", "--json"], capture_output=True, text=True)
    dj = json.loads(d.stdout)
    dm = json.loads(subprocess.run([QC, "design", "--model", "gauss", "--snr-db", str(snr),
                                    "--alphabet", "qam:16", "--quantizer", "fixed",
                                    "--thresholds", thr, "--json"],
                                   capture_output=True, text=True).stdout)
    r = iq("--alphabet", "qam:16", "--snr-db", str(snr), "--thresholds", thr)
    rx = r["receivers"][0]
    tally.near(f"qam:16 {snr} dB thresholds {thr}: MI against design", rx["mi_bits"],
               dj["mi_bits"], TOL_EXACT)
    tally.near(f"qam:16 {snr} dB thresholds {thr}: GMI against design", rx["gmi_bits"],
               dj["gmi_bits"], TOL_EXACT)
    tally.near(f"qam:16 {snr} dB: unquantized MI against design's quadrature",
               r["unquantized_mi_bits"], dm["unquantized_bits"], TOL_UNQ)
    # the same points from a file, shuffled, with their Gray labels written out
    h = 4
    rows = []
    for i in range(h):
        for q in range(h):
            g = lambda k: k ^ (k >> 1)  # noqa: E731
            rows.append(f"{2 * i - h + 1} {2 * q - h + 1} - {g(i):02b}{g(q):02b}")
    rows = rows[5:] + rows[:5]
    with tempfile.NamedTemporaryFile("w", suffix=".txt", delete=False) as f:
        f.write("# 16-QAM, Gray labels, uniform law\n" + "\n".join(rows) + "\n")
        path = f.name
    rf = iq("--constellation", path, "--snr-db", str(snr), "--thresholds", thr)
    os.unlink(path)
    tally.near(f"qam:16 as a file {snr} dB: MI against design", rf["receivers"][0]["mi_bits"],
               dj["mi_bits"], TOL_EXACT)
    tally.near(f"qam:16 as a file {snr} dB: GMI against design", rf["receivers"][0]["gmi_bits"],
               dj["gmi_bits"], TOL_EXACT)
    check(rf["labelling"] == "given", "a file's labels are used as given")

# ---- 2. APSK through an I/Q pair against scipy 2-D integration ------------
# Reference: scipy.integrate.dblquad of the circular Gaussian density over
# each rectangle (an independent two-dimensional integration, not the
# product of CDFs).
rings = [(1.0, 4, 45.0), (2.6, 12, 15.0)]
spec = "apsk:1/4/45,2.6/12/15"
thr_i = [-1.8, -0.5, 0.5, 1.8]
thr_q = [-1.2, 0.0, 1.2]
r = iq("--alphabet", spec, "--sigma", "0.45", "--thresholds", ",".join(map(str, thr_i)),
       "--thresholds-q", ",".join(map(str, thr_q)), "--matrix")
rx = r["receivers"][0]
pts = points_of(rings)
sig = 0.45
ei = [-np.inf] + thr_i + [np.inf]
eq = [-np.inf] + thr_q + [np.inf]
P = np.zeros((len(pts), (len(ei) - 1) * (len(eq) - 1)))
worst = 0.0
for k, (x, y) in enumerate(pts):
    for a in range(len(ei) - 1):
        for b in range(len(eq) - 1):
            lo_x, hi_x = max(ei[a], x - 12 * sig), min(ei[a + 1], x + 12 * sig)
            lo_y, hi_y = max(eq[b], y - 12 * sig), min(eq[b + 1], y + 12 * sig)
            if lo_x >= hi_x or lo_y >= hi_y:
                continue
            v, _ = integrate.dblquad(
                lambda v_, u_: math.exp(-((u_ - x) ** 2 + (v_ - y) ** 2) / (2 * sig * sig))
                / (2 * math.pi * sig * sig), lo_x, hi_x, lo_y, hi_y, epsabs=1e-11, epsrel=1e-10)
            P[k, a * (len(eq) - 1) + b] = v
    worst = max(worst, float(np.max(np.abs(P[k] - np.array(rx["channel"][k])))))
check(worst <= TOL_CELL, f"APSK I/Q cells against scipy dblquad: largest |diff| {worst:.2e}")
law = np.full(len(pts), 1.0 / len(pts))
tally.near("APSK 4+12 through a 5 x 4 I/Q pair: MI against scipy dblquad cells",
           rx["mi_bits"], mi_bits(P, law), TOL_MI_QUAD)
check(rx["gmi_bits"] <= rx["mi_bits"] + 1e-12, "GMI <= MI (Caire et al. 1998)")
check(r["labelling"] == "searched", "APSK 4+12 has no Gray labels: they are searched")

# ---- 3. polar cells: scipy polar integration, Rice, Monte-Carlo ----------
radii = [0.7, 1.3]
phases_deg = [-30.0, 40.0, 150.0, 260.0]
r = iq("--alphabet", "psk:8", "--sigma", "0.3", "--iq-quantizer", "polar",
       "--amplitude-thresholds", ",".join(map(str, radii)), "--phase-thresholds-deg",
       ",".join(map(str, phases_deg)), "--matrix")
rx = r["receivers"][0]
M = np.array(rx["channel"])
pts = points_of([(1.0, 8, 0.0)])
sig = 0.3
redges = [0.0] + radii + [np.inf]
ph = [math.radians(d) for d in phases_deg]
sectors = [(ph[p], ph[p + 1] if p + 1 < len(ph) else ph[0] + 2 * math.pi) for p in range(len(ph))]
worst = 0.0
for k in (0, 3):  # two points: one inside a wide sector, one near a boundary
    x, y = pts[k]
    for a in range(3):
        for p, (t0, t1) in enumerate(sectors):
            r1 = min(redges[a + 1], math.hypot(x, y) + 12 * sig)
            # Reference: scipy dblquad of r·f(r cos t, r sin t) over the polar cell
            v, _ = integrate.dblquad(
                lambda rr, t: rr * math.exp(-((rr * math.cos(t) - x) ** 2 +
                                               (rr * math.sin(t) - y) ** 2) / (2 * sig * sig))
                / (2 * math.pi * sig * sig), t0, t1, redges[a], r1, epsabs=1e-11, epsrel=1e-10)
            worst = max(worst, abs(v - M[k, a * len(sectors) + p]))
check(worst <= TOL_CELL, f"polar cells against scipy dblquad: largest |diff| {worst:.2e}")
# Reference: with one sector the rings are amplitude intervals: the Rice law
# (scipy.stats.rice, shape |x|/sigma), i.e. Marcum Q differences.
r1 = iq("--alphabet", "apsk:1/4,2.5/8", "--sigma", "0.6", "--iq-quantizer", "polar",
        "--amplitude-thresholds", "0.8,1.7,2.9", "--phase-thresholds-deg", "0", "--matrix")
M1 = np.array(r1["receivers"][0]["channel"])
edges = [0.0, 0.8, 1.7, 2.9, np.inf]
worst = 0.0
for k, s in enumerate([1.0] * 4 + [2.5] * 8):
    for a in range(4):
        want = rice.sf(edges[a] / 0.6, s / 0.6) - rice.sf(edges[a + 1] / 0.6, s / 0.6)
        worst = max(worst, abs(want - M1[k, a]))
check(worst <= 1e-11, f"amplitude rings against scipy.stats.rice: largest |diff| {worst:.2e}")

rng = np.random.default_rng(MC_SEED)


def mc_cells(x, y, sig, n, pn_sd=0.0, law="gauss", cells=None):
    """Seeded Monte-Carlo of y = (x + n)·e^{jφ}; returns cell counts."""
    z = (x + rng.normal(0, sig, n)) + 1j * (y + rng.normal(0, sig, n))
    if pn_sd > 0:
        phi = rng.normal(0, pn_sd, n) if law == "gauss" else rng.vonmises(0, 1 / pn_sd ** 2, n)
        z = z * np.exp(1j * phi)
    return cells(z)


def polar_index(z, redges, ph):
    a = np.searchsorted(np.array(redges[1:-1]), np.abs(z), side="right")
    ang = np.mod(np.angle(z) - ph[0], 2 * np.pi)
    p = np.searchsorted(np.array(ph) - ph[0], ang, side="right") - 1
    return a * len(ph) + p


def mc_check(what, probs, counts, n):
    """Every cell within MC_Z binomial standard deviations (plus one count)."""
    phat = counts / n
    half = MC_Z * np.sqrt(np.asarray(probs) * (1 - np.asarray(probs)) / n) + 1.0 / n
    bad = np.abs(phat - probs) > half
    check(not bad.any(), f"{what}: Monte-Carlo ({n} draws, seed {MC_SEED}, each cell within "
          f"{MC_Z} binomial sd): {int(bad.sum())} cells outside")


K = 3 * len(sectors)
for k in (0, 3):
    idx = mc_cells(*pts[k], sig, MC_SAMPLES, cells=lambda z: polar_index(z, redges, ph))
    mc_check(f"polar cells of 8-PSK point {k + 1}", M[k], np.bincount(idx, minlength=K), MC_SAMPLES)

# ---- 4. phase noise: Monte-Carlo for both laws and both receivers -------
Mp_law = {}
for law in ("gauss", "tikhonov"):
    sd = 12.0
    r = iq("--alphabet", "psk:8", "--sigma", "0.2", "--iq-quantizer", "polar",
           "--amplitude-thresholds", ",".join(map(str, radii)), "--phase-thresholds-deg",
           ",".join(map(str, phases_deg)), "--phase-noise-deg", str(sd), "--phase-noise-law",
           law, "--matrix")
    Mp = np.array(r["receivers"][0]["channel"])
    idx = mc_cells(*pts[1], 0.2, MC_SAMPLES, math.radians(sd), law,
                   cells=lambda z: polar_index(z, redges, ph))
    mc_check(f"polar cells, {law} phase error {sd} deg", Mp[1], np.bincount(idx, minlength=K),
             MC_SAMPLES)
    Mp_law[law] = Mp
    r = iq("--alphabet", "qam:16", "--sigma", "0.4", "--thresholds", "-2,0,2",
           "--phase-noise-deg", str(sd), "--phase-noise-law", law, "--matrix")
    Mq = np.array(r["receivers"][0]["channel"])
    if law == "gauss":
        Mq_gauss = Mq
    t = np.array([-2.0, 0.0, 2.0])
    x0, y0 = 3.0, 1.0  # point (i, q) = (3, 2): index 14
    idx = mc_cells(x0, y0, 0.4, MC_SAMPLES, math.radians(sd), law,
                   cells=lambda z: np.searchsorted(t, z.real) * 4 + np.searchsorted(t, z.imag))
    mc_check(f"I/Q cells, {law} phase error {sd} deg", Mq[14], np.bincount(idx, minlength=16),
             MC_SAMPLES)


def arc_probability(lo, hi, sd, law):
    """P(phi mod 2pi in [lo, hi)), hi - lo <= 2pi: the Gaussian summed over
    the turns it reaches (norm.cdf), or scipy.stats.vonmises' CDF on
    [-pi, pi] (kappa = 1/sd^2, Mardia and Jupp 2000, 3.5)."""
    if law == "gauss":
        turns = int(math.ceil(12 * sd / (2 * math.pi))) + 1
        return sum(norm.cdf((hi + 2 * math.pi * k) / sd) - norm.cdf((lo + 2 * math.pi * k) / sd)
                   for k in range(-turns, turns + 1))
    F = lambda v: vonmises.cdf(v, 1.0 / sd ** 2)
    lo0 = lo - 2 * math.pi * math.floor((lo + math.pi) / (2 * math.pi))
    hi0 = lo0 + (hi - lo)
    if hi0 <= math.pi:
        return F(hi0) - F(lo0)
    return F(math.pi) - F(lo0) + F(hi0 - 2 * math.pi) - F(-math.pi)


# Reference for polar cells with a phase error: a cell's probability is
# the integral over the angle t of x + n (relative to the point's angle
# th) of the ring's radial integral (scipy quad of r times the 2-D Gaussian
# density) times the probability that the phase error turns th + t into
# the sector (arc_probability); nested scipy quad, not the Fourier series.
sd = math.radians(12.0)
x, y = pts[1]
th, s0 = math.atan2(y, x), math.hypot(x, y)
for law in ("gauss", "tikhonov"):
    worst = 0.0
    for a in range(3):
        r0, r1 = redges[a], min(redges[a + 1], s0 + 12 * 0.2)

        def ring(t):
            return integrate.quad(
                lambda rr: rr * math.exp(-((rr * math.cos(th + t) - x) ** 2 +
                                           (rr * math.sin(th + t) - y) ** 2) / (2 * 0.04))
                / (2 * math.pi * 0.04), r0, r1, epsabs=1e-14, epsrel=1e-12)[0]
        for p, (t0, t1) in enumerate(sectors):
            v, _ = integrate.quad(lambda t: ring(t) * arc_probability(t0 - th - t, t1 - th - t,
                                                                      sd, law),
                                  -math.pi, math.pi, points=[0.0], epsabs=1e-13, epsrel=1e-11,
                                  limit=400)
            worst = max(worst, abs(v - Mp_law[law][1][a * len(sectors) + p]))
    check(worst <= 1e-12, f"polar cells, {law} phase error 12 deg, against nested scipy quad: "
          f"largest |diff| {worst:.2e}")

# Reference: scipy.integrate.quad over the phase error of the rotated
# point's product-cell probability (norm.cdf differences): the Gaussian
# error at 12 deg (quantcap: Gauss-Hermite rules, the error's spread 1.7
# angular widths of the noise) and at 60 deg (8.3 widths: the trapezoidal
# rule on the circle); the Tikhonov error (scipy.stats.vonmises.pdf,
# kappa = 1/sd^2, over [-pi, pi]) at 12 deg (kappa 22.8: Gauss-Hermite
# rules reweighted by its density ratio to the Gaussian), at 20 deg
# (kappa 8.2: the trapezoidal rule), and at 3 deg with sigma 0.0354 (36 dB: a rule of
# 1024 nodes, whose outer weights underflow where the ratio overflows).
for law, sd_deg, sig_q in (("gauss", 12.0, 0.4), ("gauss", 60.0, 0.4),
                           ("tikhonov", 12.0, 0.4), ("tikhonov", 20.0, 0.4),
                           ("tikhonov", 3.0, 0.0354)):
    sd = math.radians(sd_deg)
    if (law, sd_deg) == ("gauss", 12.0):
        Mq_ref = Mq_gauss
    else:
        r = iq("--alphabet", "qam:16", "--sigma", str(sig_q), "--thresholds", "-2,0,2",
               "--phase-noise-deg", str(sd_deg), "--phase-noise-law", law, "--matrix")
        Mq_ref = np.array(r["receivers"][0]["channel"])
    if law == "gauss":
        density, lo, hi = (lambda phi: norm.pdf(phi / sd) / sd), -12 * sd, 12 * sd
    else:
        density, lo, hi = (lambda phi: vonmises.pdf(phi, 1.0 / sd ** 2)), -math.pi, math.pi
    worst = 0.0
    for c in range(16):
        a, b = divmod(c, 4)
        e = [-np.inf, -2.0, 0.0, 2.0, np.inf]

        def cell(phi):
            u = x0 * math.cos(phi) - y0 * math.sin(phi)
            v = x0 * math.sin(phi) + y0 * math.cos(phi)
            return ((norm.cdf((e[a + 1] - u) / sig_q) - norm.cdf((e[a] - u) / sig_q)) *
                    (norm.cdf((e[b + 1] - v) / sig_q) - norm.cdf((e[b] - v) / sig_q)) *
                    density(phi))
        v, _ = integrate.quad(cell, lo, hi, epsabs=1e-13, epsrel=1e-11, limit=1000,
                              points=[0.0] if law == "tikhonov" else None)
        worst = max(worst, abs(v - Mq_ref[14][c]))
    check(worst <= 1e-10, f"I/Q cells with a {sd_deg:g} deg {law} phase error (sigma {sig_q}) "
          f"against scipy quad: largest |diff| {worst:.2e}")

# A phase error of 0.01 deg: the Tikhonov law (kappa = 3.3e7) is then the
# Gaussian one (von Mises tends to the normal law as kappa grows, Mardia and
# Jupp 2000, 3.5), and both barely move the rate of no phase error.
for rx_args in (("--cells", "4"), ("--iq-quantizer", "polar", "--amplitude-cells", "3",
                                   "--phase-cells", "12")):
    mi = {}
    for law in ("gauss", "tikhonov", None):
        pn_args = ("--phase-noise-deg", "0.01", "--phase-noise-law", law) if law else ()
        r = iq("--alphabet", "qam:16", "--snr-db", "20", *rx_args, *pn_args, "--uniform")
        mi[law] = r["receivers"][0]["mi_bits"] if r else float("nan")
    check(abs(mi["tikhonov"] - mi["gauss"]) <= 1e-9 and abs(mi["gauss"] - mi[None]) <= 1e-6,
          f"{rx_args[-1]} cells, 0.01 deg phase error: Tikhonov {mi['tikhonov']:.12f}, "
          f"Gaussian {mi['gauss']:.12f}, none {mi[None]:.12f} bit")

# ---- 5. which receiver keeps more rate -----------------------------------
# Strong phase noise on 8-PSK: the polar quantizer (phase sectors) wins
# over an I/Q pair with as many cells (16); without phase noise, 16-QAM is
# served better by the 4 x 4 I/Q pair than by 2 x 8 polar cells.
r = iq("--alphabet", "psk:8", "--snr-db", "14", "--compare", "--cells", "4",
       "--amplitude-cells", "2", "--phase-cells", "8", "--phase-noise-deg", "10", "--uniform")
check(r.get("better_receiver") == "polar",
      f"8-PSK, 10 deg phase error: polar keeps more ({r.get('better_receiver')}, "
      f"by {r.get('better_by_bits')})")
r = iq("--alphabet", "qam:16", "--snr-db", "14", "--compare", "--cells", "4",
       "--amplitude-cells", "2", "--phase-cells", "8", "--uniform")
check(r.get("better_receiver") == "product",
      f"16-QAM, no phase error: the I/Q pair keeps more ({r.get('better_receiver')}, "
      f"by {r.get('better_by_bits')})")

# ---- 6. design and labels -------------------------------------------------
r = iq("--alphabet", "apsk:1/4,2.7/12", "--snr-db", "12", "--cells", "6", "--capacity")
rx = r["receivers"][0]
check(rx["mi_bits"] >= rx["start_bits"] - 1e-12,
      f"designed I/Q thresholds keep at least the uniform start's MI ({rx['mi_bits']} vs "
      f"{rx['start_bits']})")
check(rx["upper_bound_bits"] >= rx["capacity_bits"] >= rx["mi_bits"] - 1e-9,
      "certified capacity bounds bracket the capacity, which is at least the MI")
check(rx["mi_bits"] <= r["unquantized_mi_bits"] + 1e-9,
      "quantized MI at most the unquantized MI (data processing)")
r = iq("--alphabet", "psk:8", "--snr-db", "10", "--iq-quantizer", "polar",
       "--amplitude-cells", "2", "--phase-cells", "8", "--objective", "gmi")
rx = r["receivers"][0]
check(rx["gmi_bits"] >= rx["start_bits"] - 1e-12, "designed polar cells keep at least the "
      "uniform start's GMI")
check(rx.get("converged") is True and rx["evaluations"] < 4000,
      f"that design settles before its cap ({rx['evaluations']} evaluations)")
# Without a phase error the cells are searched by BFGS on the exact
# gradient. Each design below settles well inside the cap above the rate
# at which the Nelder-Mead simplex of the same design stopped at its
# 4000-evaluation cap (measured with that search): 64-QAM through 4 x 32
# polar cells at 12 dB, and through a 16 x 16 I/Q pair, thresholds apart,
# at 18 dB (designed axis by axis now, section 7; BFGS reached 5.3420162
# bit there).
for what, simplex_bits, search, args in (
        ("qam:64, 4 x 32 polar cells at 12 dB", 3.580133, "bfgs",
         ("--snr-db", "12", "--iq-quantizer", "polar", "--amplitude-cells", "4",
          "--phase-cells", "32")),
        ("qam:64, 16 x 16 I/Q pair apart at 18 dB", 5.3410209, "per-axis",
         ("--snr-db", "18", "--bits", "4", "--separate-thresholds"))):
    rx = iq("--alphabet", "qam:64", *args)["receivers"][0]
    check(rx.get("search") == search and rx.get("converged") is True
          and rx["evaluations"] < 2000 and rx["mi_bits"] > simplex_bits,
          f"{what}: {search} settles ({rx.get('search')}, {rx.get('converged')}, "
          f"{rx['evaluations']} evaluations) above the simplex's {simplex_bits} bit "
          f"({rx['mi_bits']})")
# Under a phase error the gradient is the same boundary integral of the
# density convolved with the error's law; the Nelder-Mead simplex used
# there before stopped at its cap of 4000 matrices on both cases below,
# at the rates given, while BFGS settles above them.
for what, simplex_bits, args in (
        ("APSK 4+12, 4 x 16 polar cells at 15 dB, 6 deg Gaussian", 3.5992761983,
         ("--alphabet", "apsk:1/4,2.7/12", "--snr-db", "15", "--iq-quantizer", "polar",
          "--amplitude-cells", "4", "--phase-cells", "16", "--phase-noise-deg", "6")),
        ("16-QAM, 8 x 8 I/Q pair apart at 15 dB, 3 deg Gaussian", 3.8650226564,
         ("--alphabet", "qam:16", "--snr-db", "15", "--bits", "3", "--separate-thresholds",
          "--phase-noise-deg", "3")),
        ("16-QAM, 8 x 8 I/Q pair at 15 dB, 5 deg Tikhonov", None,
         ("--alphabet", "qam:16", "--snr-db", "15", "--bits", "3", "--phase-noise-deg", "5",
          "--phase-noise-law", "tikhonov"))):
    rx = iq(*args)["receivers"][0]
    check(rx.get("search") == "bfgs" and rx.get("converged") is True
          and rx["evaluations"] < 1000 and rx["mi_bits"] > rx["start_bits"]
          and (simplex_bits is None or rx["mi_bits"] > simplex_bits),
          f"{what}: BFGS settles ({rx.get('search')}, {rx.get('converged')}, "
          f"{rx['evaluations']} evaluations) above the uniform start and the simplex's "
          f"{simplex_bits} bit ({rx['mi_bits']})")
# the same design stopped by a cap of 5 evaluations says so, and keeps to
# it even inside a line search (5 and the uniform start)
r = iq("--alphabet", "psk:8", "--snr-db", "10", "--iq-quantizer", "polar",
       "--amplitude-cells", "2", "--phase-cells", "8", "--objective", "gmi",
       "--max-evaluations", "5")
rx = r["receivers"][0]
check(rx.get("converged") is False and rx["evaluations"] == 6,
      f"a design stopped by --max-evaluations 5 reports converged false ({rx.get('converged')}, "
      f"{rx['evaluations']} evaluations)")
# Both objectives are at most H(X) (the GMI is H(X) less the bits'
# conditional entropies), so a search that comes within 1e-10 bit of it
# stops there: at 35 dB 16-QAM's uniform polar cells already are (no
# search), at 28 dB the search gets there in about 100 matrices; at 15 dB
# it does not.
for snr, objective, searched in ((35, "mi", False), (28, "mi", True), (28, "gmi", True),
                                 (15, "mi", None)):
    r = iq("--alphabet", "qam:16", "--snr-db", str(snr), "--iq-quantizer", "polar",
           "--amplitude-cells", "4", "--phase-cells", "16", "--objective", objective,
           "--max-evaluations", "300")
    rx = r["receivers"][0]
    value = rx.get(f"{objective}_bits", -1.0)
    what = f"qam:16 at {snr} dB, 4 x 16 polar cells for {objective}"
    if searched is None:
        check(rx.get("at_ceiling") is False and value < 4.0 - 1e-10,
              f"{what}: below the ceiling ({value}), at_ceiling false ({rx.get('at_ceiling')})")
        continue
    check(rx.get("at_ceiling") is True and rx.get("converged") is True
          and rx.get("design") == "designed" and 4.0 - 1e-10 <= value <= 4.0 + 1e-12,
          f"{what}: within 1e-10 bit of H(X) = 4 ({value}), at_ceiling and converged true, "
          f"design 'designed' ({rx.get('at_ceiling')}, {rx.get('converged')}, "
          f"{rx.get('design')})")
    check((rx.get("evaluations") == 1) == (not searched) and rx.get("evaluations", 301) < 300,
          f"{what}: {'a search' if searched else 'no search'}, stopped well before its cap "
          f"({rx.get('evaluations')} evaluations)")
p = subprocess.run([QC, "iq", "--alphabet", "qam:16", "--snr-db", "35", "--iq-quantizer",
                    "polar", "--amplitude-cells", "4", "--phase-cells", "16"],
                   capture_output=True, text=True)
check("uniform cells are within 1e-10 bit of H(X), which no cells can pass (no search)"
      in p.stdout, f"the text says why the saturated design did not search ({p.stdout[:300]})")
# --uniform asks for no design: at 35 dB its cells are as near H(X), but
# the receiver is reported as uniform, not as a design that stopped there.
r = iq("--alphabet", "qam:16", "--snr-db", "35", "--iq-quantizer", "polar",
       "--amplitude-cells", "4", "--phase-cells", "16", "--uniform")
rx = r["receivers"][0]
check(rx.get("design") == "uniform" and rx.get("at_ceiling") is False,
      f"--uniform at 35 dB: design 'uniform', at_ceiling false ({rx.get('design')}, "
      f"{rx.get('at_ceiling')})")
g = iq("--alphabet", "qam:16", "--snr-db", "8", "--cells", "4", "--uniform")
s = iq("--alphabet", "qam:16", "--snr-db", "8", "--cells", "4", "--uniform", "--search-labels")
# Binary switching from the Gray labels (Schreckenbach et al. 2003) never
# raises the cost; the Gray labelling is a local optimum of that cost.
check(s["label_cost"] <= g["label_cost"] + 1e-12,
      f"searched labels cost no more than Gray ({s['label_cost']} vs {g['label_cost']})")
h = iq("--alphabet", "hex:16", "--snr-db", "12", "--cells", "6", "--uniform")
check(h["labelling"] == "searched" and h["label_bits"] == 4, "hex:16 gets 4-bit searched labels")
hx = h["receivers"][0]
check(0.8 * hx["mi_bits"] <= hx["gmi_bits"] <= hx["mi_bits"] + 1e-12,
      f"hex:16 searched labels keep most of the MI as GMI ({hx['gmi_bits']} of {hx['mi_bits']})")

# ---- 7. the I/Q pair axis by axis -----------------------------------------
# Square QAM with a law that is the product of its marginals, through
# independent Gaussian noise per quadrature, is two independent PAM
# channels: the MI of an I/Q pair is the sum of the two axes' MI
# (independent inputs through independent channels, by the chain rule of
# mutual information: Cover & Thomas, Elements of Information Theory, 2nd
# ed., 2006, §2.5 (from memory)), so the 1-D MI-optimal design of each
# axis is the 2-D design. Reference: quantcap design on the same levels, law and sigma
# (one quadrature, the report doubled for QAM), which must give the same
# thresholds and MI.


def design_json(*args):
    p = subprocess.run([QC, "design", "--model", "gauss", *args, "--json"],
                       capture_output=True, text=True)
    check(p.returncode == 0, f"design {' '.join(args)}: exit {p.returncode} ({p.stderr.strip()})")
    return json.loads(p.stdout) if p.returncode == 0 else {}


def write_points(rows, title):
    with tempfile.NamedTemporaryFile("w", suffix=".txt", delete=False) as f:
        f.write(f"# {title}\n" + "\n".join(rows) + "\n")
        return f.name


for snr, bits, apart in ((18, 4, False), (18, 5, False), (12, 3, True), (24, 6, False)):
    extra = ("--separate-thresholds",) if apart else ()
    rx = iq("--alphabet", "qam:64", "--snr-db", str(snr), "--bits", str(bits), *extra)
    rx = rx["receivers"][0]
    dj = design_json("--alphabet", "qam:64", "--snr-db", str(snr), "--bits", str(bits))
    what = f"qam:64 at {snr} dB, {bits} bits{' apart' if apart else ''}"
    check(rx.get("search") == "per-axis" and rx.get("evaluations") == 2,
          f"{what}: designed axis by axis ({rx.get('search')}, {rx.get('evaluations')})")
    tally.near(f"{what}: MI against the 1-D design doubled", rx.get("mi_bits", 0.0),
               dj.get("rate_bits", 1.0), TOL_EXACT)
    check(rx.get("thresholds") == dj.get("thresholds") == rx.get("thresholds_q"),
          f"{what}: both axes take the 1-D design's thresholds")

# A shaped 16-QAM (p ∝ exp(−0.1|x|²), a product law) from a file: axis by
# axis, against the 1-D design of the marginal law.
lv = [-3, -1, 1, 3]
w = [math.exp(-0.1 * v * v) for v in lv]
pm = [x / sum(w) for x in w]
rows = [f"{a} {b} {pm[i] * pm[j]!r}" for i, a in enumerate(lv) for j, b in enumerate(lv)]
path = write_points(rows, "shaped 16-QAM, product law")
rx = iq("--constellation", path, "--sigma", "0.5", "--bits", "3")["receivers"][0]
dj = design_json("--levels", "-3,-1,1,3", "--probabilities", ",".join(repr(x) for x in pm),
                 "--sigma", "0.5", "--bits", "3")
check(rx.get("search") == "per-axis", f"shaped 16-QAM: designed axis by axis ({rx.get('search')})")
tally.near("shaped 16-QAM: MI against twice the 1-D design", rx.get("mi_bits", 0.0),
           2.0 * dj.get("rate_bits", 1.0), TOL_EXACT)
# the marginal law is summed from the points' law, so equal to rounding
check(len(rx.get("thresholds", [])) == 7 and rx.get("thresholds") == rx.get("thresholds_q")
      and all(abs(a - b) <= 1e-12 for a, b in zip(rx["thresholds"], dj.get("thresholds", []))),
      f"shaped 16-QAM: the 1-D design's thresholds ({rx.get('thresholds')})")
os.unlink(path)

# What does not factor, or another objective, or a phase error, is left to
# BFGS: a law that is not a product, a missing corner, marginals that
# differ between the axes with shared thresholds (apart: axis by axis),
# the GMI objective and a phase error.
law = [pm[i] * pm[j] for i in range(4) for j in range(4)]
law[0] *= 1.5
law = [x / sum(law) for x in law]
for what, rows, extra, search in (
        ("a law that is not a product",
         [f"{a} {b} {law[4 * i + j]!r}" for i, a in enumerate(lv) for j, b in enumerate(lv)],
         (), "bfgs"),
        ("15 points (a corner missing)",
         [f"{a} {b}" for i, a in enumerate(lv) for j, b in enumerate(lv)][1:], (), "bfgs"),
        ("shaped in-phase, uniform quadrature, shared thresholds",
         [f"{a} {b} {pm[i] * 0.25!r}" for i, a in enumerate(lv) for b in lv], (), "bfgs"),
        ("shaped in-phase, uniform quadrature, thresholds apart",
         [f"{a} {b} {pm[i] * 0.25!r}" for i, a in enumerate(lv) for b in lv],
         ("--separate-thresholds",), "per-axis")):
    path = write_points(rows, what)
    rx = iq("--constellation", path, "--sigma", "0.5", "--bits", "3", *extra)["receivers"][0]
    os.unlink(path)
    check(rx.get("search") == search, f"{what}: {search} ({rx.get('search')})")
for what, extra in (("the GMI objective", ("--objective", "gmi")),
                    ("a 2 deg phase error", ("--phase-noise-deg", "2"))):
    rx = iq("--alphabet", "qam:16", "--snr-db", "12", "--bits", "3", *extra)["receivers"][0]
    check(rx.get("search") == "bfgs", f"qam:16 with {what}: bfgs ({rx.get('search')})")
# For the GMI, BFGS rates square QAM's I/Q pair axis by axis (Gray labels
# are a product of two Gray codes); the search is the former one, so it
# ends where the search on the 2-D matrix ended (measured with that
# search: 5.341602603531 bit for 64-QAM at 18 dB, 16 x 16 cells). QPSK has
# one bit per axis, whose GMI is the axis's MI: designed axis by axis, at
# a GMI equal to its MI and never below the former search (1.999997632098
# bit at 14 dB, 32 x 32 cells).
rx = iq("--alphabet", "qam:64", "--snr-db", "18", "--bits", "4", "--objective", "gmi")
rx = rx["receivers"][0]
check(rx.get("search") == "bfgs" and rx.get("converged") is True,
      f"64-QAM for the GMI: BFGS settles ({rx.get('search')}, {rx.get('converged')})")
tally.near("64-QAM at 18 dB, 16 x 16 cells for the GMI: against the search on the 2-D matrix",
           rx.get("gmi_bits", 0.0), 5.341602603531, 1e-9)
rx = iq("--alphabet", "qam:4", "--snr-db", "14", "--bits", "5", "--objective", "gmi")
rx = rx["receivers"][0]
check(rx.get("search") == "per-axis" and rx.get("gmi_bits", 0.0) > 1.999997632098,
      f"QPSK for the GMI: axis by axis, above the former search's 1.999997632098 bit "
      f"({rx.get('search')}, {rx.get('gmi_bits')})")
tally.near("QPSK at 14 dB for the GMI: GMI equals MI", rx.get("gmi_bits", 0.0),
           rx.get("mi_bits", 1.0), TOL_EXACT)

# Axis by axis is never below BFGS (measured with the former search on
# 101 square-QAM designs, 4- to 256-QAM, 1 to 5 bits: equal to 1e-13 bit
# or above, up to 3.3e-5 bit at 64-QAM, 18 dB, 5 bits): here BFGS from the
# uniform cells of the same 64-QAM stopped at 5.4255060 bit.
rx = iq("--alphabet", "qam:64", "--snr-db", "18", "--bits", "5")["receivers"][0]
check(rx.get("mi_bits", 0.0) > 5.42553,
      f"qam:64 at 18 dB, 5 bits: above the former BFGS design's 5.4255060 bit "
      f"({rx.get('mi_bits')})")

# The unquantized MI of such a constellation is the sum of its axes' (by
# the 1-D adaptive quadrature); any other takes the 2-D Gauss-Hermite rule.
# Circular Gaussian noise does not change under a rotation, nor does the MI
# of the points through it, so 16-QAM turned by 30 degrees (no longer a
# product of axes) must give by the 2-D rule what the square one gives by
# its axes: two independent computations of one number.
# The same for 4 x 2 points with a shaped in-phase law (two different axes).
a = math.radians(30.0)
for what, pts in (("16-QAM", [(x, y, 1.0 / 16) for x in lv for y in lv]),
                  ("4 x 2 points, shaped in-phase",
                   [(x, y, pm[i] / 2) for i, x in enumerate(lv) for y in (-1, 1)])):
    for snr in (6, 14):
        tag = f"{what} at {snr} dB"
        square = write_points([f"{x} {y} {p!r}" for x, y, p in pts], what)
        turned = write_points([f"{x * math.cos(a) - y * math.sin(a)!r} "
                               f"{x * math.sin(a) + y * math.cos(a)!r} {p!r}" for x, y, p in pts],
                              f"{what} turned by 30 degrees")
        sq = iq("--constellation", square, "--snr-db", str(snr), "--cells", "4", "--uniform")
        rot = iq("--constellation", turned, "--snr-db", str(snr), "--cells", "4", "--uniform")
        os.unlink(square)
        os.unlink(turned)
        check(sq.get("unquantized_method") == "per-axis" and sq.get("unquantized_nodes") is None
              and rot.get("unquantized_method") == "gauss-hermite"
              and rot.get("unquantized_nodes"),
              f"{tag}: per axis, turned by the 2-D rule "
              f"({sq.get('unquantized_method')}, {rot.get('unquantized_method')})")
        tally.near(f"{tag}: unquantized MI turned by 30 deg (Gauss-Hermite) against per axis",
                   rot.get("unquantized_mi_bits", 0.0), sq.get("unquantized_mi_bits", 1.0),
                   TOL_UNQ)
        check(sq.get("unquantized_err_bits", 1.0) < 1e-10,
              f"{tag}: per-axis error estimate below 1e-10 bit ({sq.get('unquantized_err_bits')})")

# Where square QAM is searched by BFGS (the GMI beyond QPSK, a phase
# error), a second search starts from the axis-by-axis MI design after the
# searches from the uniform cells, and its cells are kept only where they
# end higher. Former values (the searches from the uniform cells alone,
# measured with the build before the second start): 64-QAM at 18 dB with
# 32 x 32 cells for the GMI 5.425463451168 bit; 64-QAM at 16 dB, 16 x 16
# cells, 1 degree: MI 4.808208026068 bit; 16-QAM at 18 dB, 16 x 16 cells,
# 3 degrees: MI 3.991488685698 bit, where the one-dimensional design's
# uneven cells lead lower (3.991432) and the uniform search is kept.
for args, key, former, verdict in (
        (("--alphabet", "qam:64", "--snr-db", "18", "--bits", "5", "--objective", "gmi"),
         "gmi_bits", 5.425463451168, "kept"),
        (("--alphabet", "qam:64", "--snr-db", "16", "--bits", "4", "--phase-noise-deg", "1"),
         "mi_bits", 4.808208026068, "kept"),
        (("--alphabet", "qam:16", "--snr-db", "18", "--bits", "4", "--phase-noise-deg", "3"),
         "mi_bits", 3.991488685698, "not higher")):
    tag = " ".join(args)
    rx = iq(*args)["receivers"][0]
    got, start = rx.get(key, 0.0), rx.get("axis_start_bits")
    check(rx.get("search") == "bfgs" and rx.get("axis_start") == verdict
          and isinstance(start, float) and start <= got,
          f"{tag}: second start from the axis-by-axis design {verdict} "
          f"({rx.get('axis_start')}, start {start}, end {got})")
    if verdict == "kept":
        check(got > former + 1e-6, f"{tag}: above the uniform search's {former} ({got})")
    else:
        check(abs(got - former) < 1e-11,
              f"{tag}: the uniform search's cells kept ({got} against {former})")
# No second start where the points do not factor (8-PSK), or where the
# pair is designed axis by axis (QPSK for the GMI, any square QAM for the
# MI without a phase error).
for args in (("--alphabet", "psk:8", "--snr-db", "12", "--bits", "3", "--phase-noise-deg", "2"),
             ("--alphabet", "qam:4", "--snr-db", "8", "--bits", "3", "--objective", "gmi"),
             ("--alphabet", "qam:16", "--snr-db", "14", "--bits", "3")):
    rx = iq(*args)["receivers"][0]
    check(rx.get("axis_start") is None and rx.get("axis_start_bits") is None,
          f"{' '.join(args)}: no second start ({rx.get('axis_start')})")
# The text report says so, in `design` as in `iq`.
p = subprocess.run([QC, "design", "--model", "gauss", "--snr-db", "18", "--alphabet", "qam:64",
                    "--iq-quantizer", "product", "--bits", "5", "--objective", "gmi"],
                   capture_output=True, text=True)
check(p.returncode == 0 and "also from the axis-by-axis design, 5.42549" in p.stdout
      and "ended higher, kept" in p.stdout,
      f"design's text names the second start ({p.returncode}: "
      f"{[ln for ln in p.stdout.splitlines() if ln.startswith('receiver')]})")

# A searched pair on a constellation that mirrors across both axes ends
# with thresholds that mirror to the search's rounding; they are reported
# exactly symmetric, the middle one 0 (it was 7.9e-13), at the same rate to
# rounding (the former 5.4254915687564065 bit). An asymmetric local optimum
# (16-QAM for the GMI with 3 degrees, 8 x 8 cells) keeps its thresholds.
rx = iq("--alphabet", "qam:64", "--snr-db", "18", "--bits", "5", "--objective", "gmi")
rx = rx["receivers"][0]
for axis in ("thresholds", "thresholds_q"):
    t = rx.get(axis, [])
    check(len(t) == 31 and t[15] == 0.0 and all(t[k] == -t[30 - k] for k in range(31)),
          f"64-QAM GMI design: {axis} exactly symmetric (middle {t[15] if t else None})")
check(abs(rx.get("gmi_bits", 0.0) - 5.4254915687564065) < 1e-14,
      f"64-QAM GMI design: the rate of the symmetric thresholds ({rx.get('gmi_bits')})")
rx = iq("--alphabet", "qam:16", "--snr-db", "16", "--bits", "3", "--phase-noise-deg", "3",
        "--objective", "gmi")["receivers"][0]
t = rx.get("thresholds", [])
check(len(t) == 7 and abs(t[0] - -2.14974) < 1e-5 and abs(t[3] - 0.153446) < 1e-5,
      f"16-QAM GMI design with 3 deg: its asymmetric thresholds kept ({t})")

print(f"iq-cli: {tally.count} checks, {len(tally.failures)} failed")
sys.exit(1 if tally.failures else 0)

#!/usr/bin/python3
"""Polar cells (amplitude rings x phase sectors) at high SNR, where each
point's law is narrow against the cells (s/sigma of tens to several
hundred).

Usage: check_polar_high_snr.py PATH/TO/quantcap
References: scipy.integrate.dblquad (Debian python3-scipy) of the 2-D
Gaussian density r.f(r cos t, r sin t) over each polar cell, in polar
coordinates about the origin, restricted to the +-14 sigma window around
the point (the mass outside is below e^-98); hex:16 rebuilt from its
definition in docs/alphabets.md (its mean power checked against quantcap's);
`quantcap require` solving for the SNR over its default +-30 dB range."""
import json
import math
import os
import subprocess
import sys

import numpy as np
from scipy import integrate

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from checklib import Tally  # noqa: E402

QC = sys.argv[1]
tally = Tally(verbose="-v" in sys.argv)
check = tally.check

TOL_CELL = 1e-12  # a cell against scipy dblquad (epsabs 1e-14 on the window)
TOL_SUM = 1e-12   # a point's cells sum to 1
WINDOW = 14.0     # reference integrates over |z - x| <= 14 sigma (polar box)


def run(*args):
    p = subprocess.run([QC, *args, "--json"], capture_output=True, text=True)
    check(p.returncode == 0, f"{' '.join(args)}: exit {p.returncode} ({p.stderr.strip()})")
    try:
        return json.loads(p.stdout)
    except ValueError:
        check(False, f"{' '.join(args)}: output is JSON")
        return None


def qam16():
    return np.array([(i, q) for i in (-3, -1, 1, 3) for q in (-3, -1, 1, 3)], float)


def hex16():
    """The 16 hexagonal-lattice points (unit spacing) nearest the origin,
    ties broken by the angle from the positive real axis, zero mean."""
    w = complex(0.5, math.sqrt(3) / 2)
    cand = [a + b * w for a in range(-4, 5) for b in range(-4, 5)]
    key = [(round(abs(z), 12), math.atan2(z.imag, z.real) % (2 * math.pi)) for z in cand]
    pts = [z for _, z in sorted(zip(key, cand), key=lambda kz: kz[0])][:16]
    pts = np.array(pts) - np.mean(pts)
    return np.column_stack([pts.real, pts.imag])


def cells_near(pts, sigma):
    """Thresholds that pass within a sigma or so of some points, so that
    their mass is split between neighbouring cells."""
    amp = np.hypot(pts[:, 0], pts[:, 1])
    ang = np.degrees(np.arctan2(pts[:, 1], pts[:, 0]))
    radii = sorted(set(np.round(amp, 9)))
    r = [radii[1] + 0.5 * sigma, radii[-1] - 0.8 * sigma]
    k1, k2 = int(np.argmax(amp)), int(np.argmin(np.where(ang > 100, ang, 1e9)))
    ph = [ang[k1] + math.degrees(0.4 * sigma / amp[k1]),
          ang[k2] - math.degrees(0.9 * sigma / amp[k2]), -150.0, -60.0]
    ph = sorted(((p + 180.0) % 360.0) - 180.0 for p in ph)
    return r, ph


def reference(x, y, sigma, redges, sectors):
    """Cell probabilities of the point by dblquad over the +-WINDOW sigma box."""
    s, th = math.hypot(x, y), math.atan2(y, x)
    half = math.asin(min(1.0, WINDOW * sigma / s))
    rlo, rhi = s - WINDOW * sigma, s + WINDOW * sigma
    out = np.zeros((len(redges) - 1) * len(sectors))
    for a in range(len(redges) - 1):
        r0, r1 = max(redges[a], rlo), min(redges[a + 1], rhi)
        if r0 >= r1:
            continue
        for p, (t0, t1) in enumerate(sectors):
            lo = (t0 - th + math.pi) % (2 * math.pi) - math.pi  # sector from the point
            for shift in (0.0, 2 * math.pi, -2 * math.pi):
                u0, u1 = max(lo + shift, -half), min(lo + shift + (t1 - t0), half)
                if u0 >= u1:
                    continue
                v, _ = integrate.dblquad(
                    lambda rr, t: rr * math.exp(-((rr * math.cos(t) - s) ** 2 +
                                                  (rr * math.sin(t)) ** 2) / (2 * sigma ** 2))
                    / (2 * math.pi * sigma ** 2), u0, u1, r0, r1, epsabs=1e-14, epsrel=1e-13)
                out[a * len(sectors) + p] += v
    return out


# ---- 1. cells of qam:16 and hex:16 at 30 to 60 dB against dblquad --------
# (30 and 35 dB: points from 20 to 107 sigma out, on both sides of s/sigma
# = 32.6, where the cells' computation turns from the series to quadrature)
for name, pts in (("qam:16", qam16()), ("hex:16", hex16())):
    power = float(np.mean(np.sum(pts ** 2, axis=1)))
    for snr in (30, 35, 40, 50, 60):
        sigma = math.sqrt(power / (2 * 10 ** (snr / 10)))
        radii, ph = cells_near(pts, sigma)
        r = run("iq", "--alphabet", name, "--snr-db", str(snr), "--iq-quantizer", "polar",
                "--amplitude-thresholds", ",".join(f"{v:.17g}" for v in radii),
                "--phase-thresholds-deg", ",".join(f"{v:.17g}" for v in ph), "--matrix")
        if r is None:
            continue
        check(abs(r["average_power"] - power) <= 1e-12 * power,
              f"{name}: the points rebuilt have quantcap's mean power ({power} against "
              f"{r['average_power']})")
        check(abs(r["sigma"] - sigma) <= 1e-12 * sigma, f"{name} {snr} dB: same sigma")
        M = np.array(r["receivers"][0]["channel"])
        check(M.shape == (16, 3 * len(ph)), f"{name} {snr} dB: 16 x {3 * len(ph)} matrix")
        check(float(np.max(np.abs(M.sum(axis=1) - 1.0))) <= TOL_SUM,
              f"{name} {snr} dB: every point's cells sum to 1")
        redges = [0.0] + radii + [math.inf]
        t = [math.radians(v) for v in ph]
        sectors = [(t[p], t[p + 1] if p + 1 < len(t) else t[0] + 2 * math.pi)
                   for p in range(len(t))]
        worst, split = 0.0, 0
        for k in range(16):
            ref = reference(pts[k, 0], pts[k, 1], sigma, redges, sectors)
            worst = max(worst, float(np.max(np.abs(ref - M[k]))))
            split += int(np.sum(ref > 1e-6) > 1)
        check(split >= 3, f"{name} {snr} dB: the thresholds split {split} points' mass")
        check(worst <= TOL_CELL, f"{name} {snr} dB: polar cells against scipy dblquad: "
              f"largest |diff| {worst:.2e} (tol {TOL_CELL:g})")

# ---- 2. the uniform polar receiver at 45 dB ------------------------------
r = run("iq", "--alphabet", "qam:16", "--snr-db", "45", "--iq-quantizer", "polar",
        "--amplitude-cells", "3", "--phase-cells", "16", "--uniform")
if r is not None:
    rx = r["receivers"][0]
    check(abs(rx["mi_bits"] - 4.0) <= 1e-9 and rx["quadrature_error"] <= 1e-13,
          f"qam:16 at 45 dB, 3 x 16 uniform polar cells: MI 4 bit ({rx['mi_bits']}), "
          f"quadrature error {rx['quadrature_error']:.2e} <= 1e-13")

# hex:16 at 38 dB through 8 x 32 uniform cells: some far cells hold
# subnormal probabilities whose every share of the output law underflows
# to 0; the MI is still that of a nearly noiseless channel, 4 bit.
r = run("iq", "--alphabet", "hex:16", "--snr-db", "38", "--iq-quantizer", "polar",
        "--amplitude-cells", "8", "--phase-cells", "32", "--uniform")
if r is not None:
    mi = r["receivers"][0]["mi_bits"]
    check(isinstance(mi, float) and abs(mi - 4.0) <= 1e-9,
          f"hex:16 at 38 dB, 8 x 32 uniform polar cells: MI 4 bit ({mi})")

# ---- 3. require over the default range (up to 44 dB) ---------------------
# Reference: the design at the required SNR meets the target NGMI.
r = run("require", "--model", "gauss", "--snr-db", "14", "--alphabet", "hex:16",
        "--iq-quantizer", "polar", "--amplitude-cells", "3", "--phase-cells", "12",
        "--objective", "gmi", "--quantizer", "uniform", "--target", "ngmi=0.8",
        "--solve-for", "snr-db")
if r is not None:
    req = r.get("required")
    check(isinstance(req, (int, float)) and 0.0 < req < 44.0,
          f"require hex:16 polar 3 x 12, NGMI 0.8: a required SNR in range ({req})")
    if isinstance(req, (int, float)):
        d = run("iq", "--alphabet", "hex:16", "--snr-db", f"{req:.17g}", "--iq-quantizer",
                "polar", "--amplitude-cells", "3", "--phase-cells", "12", "--uniform")
        if d is not None:
            ngmi = d["receivers"][0]["ngmi"]
            check(abs(ngmi - 0.8) <= 1e-5, f"NGMI at the required SNR is 0.8 ({ngmi})")

print(f"{tally.count} checks, {len(tally.failures)} failures")
sys.exit(1 if tally.failures else 0)

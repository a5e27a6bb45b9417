#!/usr/bin/python3
"""Cross-check of quantcap's alphabet module against scipy/numpy.

Runs the dump program given as argv[1] (tests/alphabet/alphabet_dump.c), then
recomputes independently:

* unquantized 4-PAM MI and Gray-labelled BICM GMI (Caire, Taricco, Biglieri,
  IEEE Trans. IT 44(3), 1998: GMI = sum_b I(B_b; Y)) by scipy.integrate.quad;
* the unquantized Gray GMI of 8-PAM under a shaped law, H(X) - sum_b H(B_b|Y)
  (Boecherer, arXiv 1410.8075, 2014), by scipy.integrate.quad, within
  quantcap's own error estimate;
* 16-QAM unquantized MI and GMI directly in two dimensions by a product
  Gauss-Hermite rule (numpy.polynomial.hermite.hermgauss), with the 4-bit
  labels gray(i)||gray(q), against quantcap's per-symbol values (twice the
  quadrature's);
* 16-QAM through the 8-bit quantizers quantcap designed (the same thresholds
  on both quadratures): the 16 x 65536 two-dimensional channel built from
  scipy.stats.norm.cdf/sf cell probabilities, its MI, GMI and the variance
  of the information density (dispersion; Polyanskiy, Poor, Verdu, IEEE
  Trans. IT 56(5), 2010), the normal approximation
  R - sqrt(V/n) Q^-1(eps) + log2(n)/(2n) with scipy.stats.norm.isf, and the
  gap to 1/2 log2(1 + snr) per dimension (Shannon 1948).

Exits non-zero on any mismatch and prints every comparison.
"""
import json
import os
import math
import subprocess
import sys

import numpy as np
from scipy import integrate, stats

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from checklib import Tally  # noqa: E402

TOL_QUAD = 1e-9     # bits: adaptive quadrature against adaptive quadrature
TOL_GH = 1e-6       # bits: 2-D Gauss-Hermite against quantcap's quadrature
TOL_SUM = 1e-9      # bits: finite sums over the same channel
TOL_V = 1e-8        # bits^2: dispersion
TOL_DB = 1e-9       # dB
tally = Tally()
check = tally.near


def gray(i):
    return i ^ (i >> 1)


LEVELS = np.array([-3.0, -1.0, 1.0, 3.0])
LAB = [gray(i) for i in range(4)]  # by rank; levels are ascending


def pam_unquantized(sigma):
    """MI and GMI (bits) of uniform 4-PAM with the Gaussian density."""
    def f(y, x):
        return stats.norm.pdf(y, x, sigma)

    def mix(y):
        return sum(0.25 * f(y, x) for x in LEVELS)

    lo, hi = LEVELS[0] - 40 * sigma, LEVELS[-1] + 40 * sigma
    opts = dict(epsabs=1e-14, epsrel=1e-12, limit=800, points=list(LEVELS))
    mi = 0.0
    for x in LEVELS:
        def g(y, x=x):
            a = f(y, x)
            return 0.0 if a <= 0 else a * math.log(a / mix(y))
        mi += 0.25 * integrate.quad(g, lo, hi, **opts)[0]
    gmi = 0.0
    for b in range(2):
        for v in range(2):
            members = [x for x, l in zip(LEVELS, LAB) if (l >> b) & 1 == v]

            def g(y, members=members):
                fv = sum(f(y, x) for x in members) / len(members)
                m = mix(y)
                return 0.0 if fv <= 0 or m <= 0 else fv * math.log(fv / m)
            gmi += 0.5 * integrate.quad(g, lo, hi, **opts)[0]
    return mi / math.log(2), gmi / math.log(2)


def qam_points():
    pts, labels = [], []
    for i in range(4):
        for q in range(4):
            pts.append((LEVELS[i], LEVELS[q]))
            labels.append(LAB[i] << 2 | LAB[q])
    return np.array(pts), labels


def qam_unquantized_gh(sigma, nodes=120):
    """16-QAM MI and GMI (bits per symbol) by a 2-D Gauss-Hermite rule."""
    t, w = np.polynomial.hermite.hermgauss(nodes)
    z = math.sqrt(2.0) * sigma * t
    wz = w / math.sqrt(math.pi)
    zi, zq = np.meshgrid(z, z, indexing="ij")
    ww = np.outer(wz, wz)
    pts, labels = qam_points()
    mi = gmi = 0.0
    for k, (xi, xq) in enumerate(pts):
        yi, yq = xi + zi, xq + zq
        # log of the unnormalized likelihoods of all points at y
        ll = np.array([-((yi - a) ** 2 + (yq - c) ** 2) / (2 * sigma**2) for a, c in pts])
        lmax = ll.max(axis=0)
        lse = lmax + np.log(np.exp(ll - lmax).sum(axis=0))
        own = ll[k]
        mi += np.sum(ww * (own - (lse - math.log(16)))) / 16
        bitsum = 0.0
        for b in range(4):
            v = (labels[k] >> b) & 1
            same = np.array([(l >> b) & 1 == v for l in labels])
            ls = ll[same]
            m2 = ls.max(axis=0)
            lse_v = m2 + np.log(np.exp(ls - m2).sum(axis=0))
            # log P(b_v | y) = lse_v - lse (uniform law, P(b) = 1/2)
            bitsum = bitsum + (lse_v - lse + math.log(2))
        gmi += np.sum(ww * bitsum) / 16
    return mi / math.log(2), gmi / math.log(2)


def cells(sigma, t):
    """P(cell | level) for one quadrature, tail-accurate."""
    t = np.asarray(t)
    rows = []
    for x in LEVELS:
        cdf = stats.norm.cdf(t, x, sigma)
        sf = stats.norm.sf(t, x, sigma)
        edges_lo = np.concatenate(([0.0], cdf))
        edges_hi = np.concatenate((cdf, [1.0]))
        p = edges_hi - edges_lo
        # upper cells from the survival function where it does not cancel
        sf_lo = np.concatenate(([1.0], sf))
        sf_hi = np.concatenate((sf, [0.0]))
        upper = np.concatenate(([False], t > x))
        p = np.where(upper, sf_lo - sf_hi, p)
        rows.append(np.maximum(p, 0.0))
    return np.array(rows)


def rates_2d(p1):
    """MI, GMI (bits/symbol) and dispersion (bits^2) of the 2-D channel."""
    pts, labels = qam_points()
    idx = [(i, q) for i in range(4) for q in range(4)]
    P = np.array([np.outer(p1[i], p1[q]).ravel() for i, q in idx])  # 16 x K^2
    r = np.full(16, 1.0 / 16)
    py = r @ P
    with np.errstate(divide="ignore", invalid="ignore"):
        dens = np.where(P > 0, np.log(P / py), 0.0)
    mi = float(np.sum(r[:, None] * P * dens))
    var = float(np.sum(r[:, None] * P * (dens - mi) ** 2))
    gmi = 0.0
    for b in range(4):
        for v in range(2):
            sel = np.array([(l >> b) & 1 == v for l in labels])
            pv = sel.sum() / 16
            pyv = (r[sel] @ P[sel]) / pv
            with np.errstate(divide="ignore", invalid="ignore"):
                term = np.where(pyv > 0, pyv * np.log(pyv / py), 0.0)
            gmi += pv * float(term.sum())
    l2 = math.log(2)
    return mi / l2, gmi / l2, var / l2**2


def shaped_gmi(sigma, levels, law):
    """Gray-labelled bit-metric GMI H(X) - sum_b H(B_b|Y) (bits) of a PAM
    under a non-uniform law, every level in the mixture, by scipy.quad on
    panels split at the levels, their 3-sigma points and the midpoints."""
    lab = [gray(i) for i in range(len(levels))]
    nbits = (len(levels) - 1).bit_length()

    def h(y):
        f = [p * stats.norm.pdf(y, x, sigma) for x, p in zip(levels, law)]
        tot = 0.0
        for b in range(nbits):
            g = [0.0, 0.0]
            for fi, la in zip(f, lab):
                g[(la >> b) & 1] += fi
            for v in (0, 1):
                if g[v] > 0.0:
                    tot += g[v] * math.log1p(g[1 - v] / g[v])
        return tot
    pts = sorted({p for x in levels for p in (x - 3 * sigma, x, x + 3 * sigma)} |
                 {(a + b) / 2 for a, b in zip(levels, levels[1:])})
    edges = [levels[0] - 14 * sigma] + pts + [levels[-1] + 14 * sigma]
    hb = sum(integrate.quad(h, a, b, epsabs=1e-15, epsrel=1e-13, limit=500)[0]
             for a, b in zip(edges, edges[1:]))
    hx = -sum(p * math.log(p) for p in law)
    return (hx - hb) / math.log(2)


def main():
    out = subprocess.run([sys.argv[1]], capture_output=True, text=True, check=True).stdout
    d = json.loads(out)
    sigma = d["sigma"]
    check("Gray labels of 4-PAM", float(sum(abs(a - b) for a, b in zip(d["labels"], LAB))),
          0.0, 0.0)

    for u in d["unquantized_pam4"]:
        mi, gmi = pam_unquantized(u["sigma"])
        check(f"4-PAM unquantized MI, sigma {u['sigma']:.4g}", u["mi_bits"], mi, TOL_QUAD)
        check(f"4-PAM unquantized Gray GMI, sigma {u['sigma']:.4g}", u["gmi_bits"], gmi,
              TOL_QUAD)

    sh = d["unquantized_shaped_pam8"]
    want = shaped_gmi(sh["sigma"], sh["levels"], sh["law"])
    # within quantcap's own error estimate (plus scipy's rounding)
    check("shaped 8-PAM unquantized Gray GMI, within its error estimate", sh["gmi_bits"],
          want, sh["error_bits"] + 1e-13)

    mi_gh, gmi_gh = qam_unquantized_gh(sigma)
    mi_1d, gmi_1d = pam_unquantized(sigma)
    check("16-QAM unquantized MI: 2-D rule vs twice 4-PAM (scipy alone)", 2 * mi_1d, mi_gh,
          TOL_GH)
    for des in d["designs"]:
        tag = f"{'16-QAM' if des['dimensions'] == 2 else '4-PAM'} {des['bits']}-bit " \
              f"{des['objective']}"
        k = des["dimensions"]
        if k == 2:
            want_unq = mi_gh if des["objective"] == "mi" else gmi_gh
            check(f"{tag}: unquantized (2-D Gauss-Hermite)", des["unquantized_bits"], want_unq,
                  TOL_GH)
            p1 = cells(sigma, des["thresholds"])
            mi, gmi, v = rates_2d(p1)
        else:
            p1 = cells(sigma, des["thresholds"])
            r = np.full(4, 0.25)
            py = r @ p1
            with np.errstate(divide="ignore", invalid="ignore"):
                dens = np.where(p1 > 0, np.log(p1 / py), 0.0)
            mi_n = float(np.sum(r[:, None] * p1 * dens))
            v = float(np.sum(r[:, None] * p1 * (dens - mi_n) ** 2)) / math.log(2) ** 2
            mi = mi_n / math.log(2)
            gmi = 0.0
            for b in range(2):
                for val in range(2):
                    sel = np.array([(l >> b) & 1 == val for l in LAB])
                    pyv = (r[sel] @ p1[sel]) / 0.5
                    with np.errstate(divide="ignore", invalid="ignore"):
                        gmi += 0.5 * float(np.where(pyv > 0, pyv * np.log(pyv / py), 0).sum())
            gmi /= math.log(2)
        check(f"{tag}: MI", des["mi_bits"], mi, TOL_SUM)
        check(f"{tag}: GMI", des["gmi_bits"], gmi, TOL_SUM)
        check(f"{tag}: rate = objective", des["rate_bits"],
              mi if des["objective"] == "mi" else gmi, TOL_SUM)
        check(f"{tag}: dispersion", des["dispersion"], v, TOL_V)
        n, eps = des["blocklength"], des["error_rate"]
        na = des["rate_bits"] - math.sqrt(v / n) * stats.norm.isf(eps) + math.log2(n) / (2 * n)
        check(f"{tag}: normal approximation n={n} eps={eps:g}",
              des["rate_at_blocklength_bits"], na, TOL_V)
        snr_db = 10 * math.log10(5.0 / sigma**2)
        check(f"{tag}: SNR (Es/N0 per dimension)", des["snr_db"], snr_db, TOL_DB)
        per_dim = des["rate_bits"] / k
        gap = snr_db - 10 * math.log10(2 ** (2 * per_dim) - 1)
        check(f"{tag}: shaping gap", des["shaping_gap_db"], gap, TOL_DB)

    print(f"{len(tally.failures)} failure(s)")
    sys.exit(1 if tally.failures else 0)


main()

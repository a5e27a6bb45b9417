#!/usr/bin/python3
"""Cross-check of quantcap's threshold designs against scipy.

Runs the dump program given as argv[1] (tests/quantizer/design_dump.c), then
recomputes every value independently with scipy/numpy:

* unquantized BPSK rate C = 1 - E[log2(1 + exp(-2 Y A / s^2))], Y ~ N(A, s^2)
  (I(X;Y) for equiprobable +-A, written as an expectation given X = +A by
  the symmetry of the channel; exp(-2 Y A / s^2) is the likelihood ratio
  p(Y|-A)/p(Y|+A)), by scipy.integrate.quad;
* MI-optimal 2- and 3-bit BPSK quantizers: I(X;Y_q) with cell probabilities
  from scipy.stats.norm.cdf/sf, maximized over SYMMETRIC thresholds
  (0, +-a) and (0, +-a, +-b, +-c) with scipy.optimize (bounded Brent for one
  parameter, Nelder-Mead from a grid of starts then L-BFGS-B for three);
* the uniform quantizer: thresholds (j - K/2) * D, maximized over the step D
  with scipy.optimize.minimize_scalar;
* MI-optimal 1- and 2-bit quantizers of unipolar PAM-4 (0, 1, 2, 3) in
  signal-dependent Gaussian noise (sigma^2 = 0.2^2 + 0.05 x): I(X;Y_q) from
  scipy.stats.norm.cdf/sf, maximized over all (not only symmetric)
  thresholds by Nelder-Mead from a grid of starts, to 1e-9 bit (the
  automatic grid of the design, sized by the local noise scale, must not
  lose the global optimum);
* uniform quantizers of the same unipolar PAM-4 with 4, 8 and 16 cells:
  I(X;Y_q) of K cells of equal width on [a, b] (outer cells open),
  maximized over both ends by Nelder-Mead from a grid of starts;
* Lloyd-Max: Lloyd's iteration (Lloyd, IEEE Trans. IT 28(2), 1982) with the
  conditional means in closed form (truncated-normal means from
  scipy.stats.norm), where quantcap integrates numerically.

Exits non-zero on any mismatch and prints every comparison.
"""
import itertools
import json
import os
import subprocess
import sys

import numpy as np
from scipy import integrate, optimize, stats

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from checklib import Tally  # noqa: E402

TOL_UNQ = 1e-9      # bits, quadrature against quadrature
TOL_RATE = 1e-6     # bits, designed rates
TOL_T = 2e-4        # threshold positions of a flat optimum
TOL_LLOYD = 1e-6    # Lloyd-Max thresholds and points
tally = Tally()
check = tally.near


def bpsk_unquantized(sigma):
    def f(y):
        return stats.norm.pdf(y, 1.0, sigma) * np.logaddexp(0.0, -2.0 * y / sigma**2)
    val, _ = integrate.quad(f, 1.0 - 40 * sigma, 1.0 + 40 * sigma, epsabs=1e-14,
                            epsrel=1e-13, limit=500, points=[0.0, 1.0])
    return 1.0 - val / np.log(2.0)


def quantized_mi(levels, sigma, t, law=None):
    """I(X;Y_q) in bits for thresholds t (sorted) by norm.cdf/sf."""
    levels = np.asarray(levels, float)
    law = np.full(len(levels), 1.0 / len(levels)) if law is None else np.asarray(law)
    edges = np.concatenate(([-np.inf], np.sort(t), [np.inf]))
    p = np.empty((len(levels), len(edges) - 1))
    for i, x in enumerate(levels):
        lo = stats.norm.cdf(edges[:-1], x, sigma)
        hi = stats.norm.cdf(edges[1:], x, sigma)
        up = stats.norm.sf(edges[:-1], x, sigma) - stats.norm.sf(edges[1:], x, sigma)
        p[i] = np.where(edges[:-1] > x, up, hi - lo)
    q = law @ p
    with np.errstate(divide="ignore", invalid="ignore"):
        terms = np.where(p > 0, p * np.log2(p / q), 0.0)
    return float(law @ terms.sum(axis=1))


def symmetric(half):
    half = np.sort(np.abs(half))
    return np.concatenate((-half[::-1], [0.0], half))


def best_symmetric(sigma, bits):
    if bits == 2:
        r = optimize.minimize_scalar(
            lambda a: -quantized_mi([-1, 1], sigma, symmetric([a])),
            bounds=(1e-3, 6.0), method="bounded", options={"xatol": 1e-12})
        return -r.fun, symmetric([r.x])
    best = (np.inf, None)
    for start in itertools.combinations([0.3, 0.9, 1.6, 2.4], 3):
        f = lambda h: -quantized_mi([-1, 1], sigma, symmetric(h))
        r = optimize.minimize(f, start, method="Nelder-Mead",
                              options={"xatol": 1e-10, "fatol": 1e-15, "maxiter": 20000})
        r = optimize.minimize(f, np.sort(np.abs(r.x)), method="L-BFGS-B",
                              options={"ftol": 1e-15, "gtol": 1e-12})
        if r.fun < best[0]:
            best = (r.fun, symmetric(r.x))
    return -best[0], best[1]


def best_uniform(sigma, cells):
    def t_of(d):
        return (np.arange(1, cells) - cells / 2) * d
    r = optimize.minimize_scalar(lambda d: -quantized_mi([-1, 1], sigma, t_of(d)),
                                 bounds=(1e-3, 8.0 / cells * 4), method="bounded",
                                 options={"xatol": 1e-12})
    return -r.fun


def lloyd_max(levels, sigma, cells):
    """Lloyd's iteration; conditional means of the Gaussian mixture by the
    truncated-normal mean, int_a^b y N(y; x, s^2) dy = x [Phi(b') - Phi(a')]
    + s [phi(a') - phi(b')] with a' = (a - x)/s (Johnson, Kotz, Balakrishnan,
    Continuous Univariate Distributions 1, ch. 13), by scipy.stats.norm."""
    levels = np.asarray(levels, float)
    t = np.linspace(levels.min() - 3 * sigma, levels.max() + 3 * sigma, cells + 1)[1:-1]
    for _ in range(200000):
        edges = np.concatenate(([-np.inf], t, [np.inf]))
        z = (edges[None, :] - levels[:, None]) / sigma
        cdf, pdf = stats.norm.cdf(z), stats.norm.pdf(z)
        m0 = (cdf[:, 1:] - cdf[:, :-1]).mean(axis=0)
        m1 = (levels[:, None] * (cdf[:, 1:] - cdf[:, :-1])
              + sigma * (pdf[:, :-1] - pdf[:, 1:])).mean(axis=0)
        pts = m1 / m0
        new = 0.5 * (pts[:-1] + pts[1:])
        done = np.max(np.abs(new - t)) < 1e-14
        t = new
        if done:
            break
    return t, pts


def sd_mi(levels, sds, t):
    """I(X;Y_q) in bits, equiprobable levels with one sigma each."""
    levels = np.asarray(levels, float)
    edges = np.concatenate(([-np.inf], np.sort(t), [np.inf]))
    p = np.empty((len(levels), len(edges) - 1))
    for i, (x, s) in enumerate(zip(levels, sds)):
        up = stats.norm.sf(edges[:-1], x, s) - stats.norm.sf(edges[1:], x, s)
        lo = stats.norm.cdf(edges[1:], x, s) - stats.norm.cdf(edges[:-1], x, s)
        p[i] = np.where(edges[:-1] > x, up, lo)
    r = np.full(len(levels), 1.0 / len(levels))
    q = r @ p
    with np.errstate(divide="ignore", invalid="ignore"):
        terms = np.where(p > 0, p * np.log2(p / q[None, :]), 0.0)
    return float(r @ terms.sum(axis=1))


def best_sd(levels, sds, cells):
    """Global MI-optimal thresholds: Nelder-Mead from every increasing
    choice of starts on a 0.5 grid over [-0.5, 3.5], the best polished."""
    def f(t):
        return -sd_mi(levels, sds, t)
    best = None
    for start in itertools.combinations(np.arange(-0.5, 3.51, 0.5), cells - 1):
        res = optimize.minimize(f, np.array(start), method="Nelder-Mead",
                                options={"xatol": 1e-5, "fatol": 1e-12})
        if best is None or res.fun < best.fun:
            best = res
    res = optimize.minimize(f, best.x, method="Nelder-Mead",
                            options={"xatol": 1e-11, "fatol": 1e-16, "maxiter": 20000})
    return -res.fun, np.sort(res.x)


def best_uniform_ends(levels, sds, cells):
    """Best uniform quantizer with K cells on [a, b]: Nelder-Mead over
    (a, b) from a grid of starts, the best polished."""
    def t_of(e):
        return e[0] + (e[1] - e[0]) * np.arange(1, cells) / cells

    def f(e):
        return -sd_mi(levels, sds, t_of(e)) if e[1] > e[0] else 1.0
    best = None
    for a, b in itertools.product(np.arange(-1.0, 1.01, 0.5), np.arange(2.0, 4.01, 0.5)):
        res = optimize.minimize(f, np.array([a, b]), method="Nelder-Mead",
                                options={"xatol": 1e-6, "fatol": 1e-13})
        if best is None or res.fun < best.fun:
            best = res
    res = optimize.minimize(f, best.x, method="Nelder-Mead",
                            options={"xatol": 1e-11, "fatol": 1e-16, "maxiter": 20000})
    return -res.fun, t_of(res.x)


def main():
    out = subprocess.run([sys.argv[1]], check=True, capture_output=True, text=True).stdout
    data = json.loads(out)
    for u in data["unquantized"]:
        check(f"unquantized BPSK at {u['snr_db']} dB", u["bits"],
              bpsk_unquantized(u["sigma"]), TOL_UNQ)
    for d in data["bpsk"]:
        bits = int(np.log2(d["cells"]))
        s = d["sigma"]
        if d["quantizer"] == "optimal":
            rate, t = best_symmetric(s, bits)
            check(f"optimal BPSK {bits} bits sigma {s} rate", d["rate_bits"], rate, TOL_RATE)
            for j, (a, b) in enumerate(zip(d["thresholds"], t)):
                check(f"  threshold {j + 1}", a, b, TOL_T)
            check(f"  rate of quantcap's thresholds by scipy", d["rate_bits"],
                  quantized_mi([-1, 1], s, d["thresholds"]), 1e-12)
        else:
            check(f"uniform BPSK {bits} bits sigma {s} rate", d["rate_bits"],
                  best_uniform(s, d["cells"]), TOL_RATE)
    for d in data["lloyd_max"]:
        t, pts = lloyd_max(d["levels"], d["sigma"], d["cells"])
        name = f"Lloyd-Max levels {d['levels']} sigma {d['sigma']} K={d['cells']}"
        for j, (a, b) in enumerate(zip(d["thresholds"], t)):
            check(f"{name} threshold {j + 1}", a, b, TOL_LLOYD)
        for j, (a, b) in enumerate(zip(d["reconstruction"], pts)):
            check(f"{name} point {j + 1}", a, b, TOL_LLOYD)
    for d in data["gauss_sd"]:
        levels = d["levels"]
        sds = [np.sqrt(d["sigma"] ** 2 + d["a"] * x + d["b"] * x * x) for x in levels]
        if d["quantizer"] == "uniform":
            rate, t = best_uniform_ends(levels, sds, d["cells"])
        else:
            rate, t = best_sd(levels, sds, d["cells"])
        name = f"{d['quantizer']} gauss-sd upam4 K={d['cells']}"
        check(f"{name} rate", d["rate_bits"], rate, 1e-9)
        for j, (a, b) in enumerate(zip(d["thresholds"], t)):
            check(f"  threshold {j + 1}", a, b, TOL_T)
    print(f"{len(tally.failures)} mismatches")
    return 1 if tally.failures else 0


if __name__ == "__main__":
    sys.exit(main())

#!/usr/bin/python3
"""check_apd_highcount.py — the exact `apd` model at high counts (10^5 to
6*10^9 primaries at M = 31.7: grid steps 1 to 64 electrons, polyphase and
chirp gain spectra, smooth and lattice regimes) against an Edgeworth series
built from the exact cumulants of the output.

Y = sum_{i<=N} G_i + T, N ~ Poisson(lambda), G_i McIntyre's gain law
(R. J. McIntyre, "The distribution of gains in uniformly multiplying
avalanche photodiodes: theory," IEEE Trans. Electron Devices 19(6),
703-713, 1972), T ~ N(0, sigma_th^2). Its cumulants are those of a
compound Poisson law plus a Gaussian,
    kappa_1 = lambda E[G],  kappa_2 = lambda E[G^2] + sigma_th^2,
    kappa_r = lambda E[G^r]  (r >= 3)
(W. Feller, An Introduction to Probability Theory and Its Applications,
vol. 1, 3rd ed., Wiley 1968, ch. XII (from memory)), with E[G^r] summed
here from the gain law evaluated with scipy.special.gammaln; its mean M
and second moment M^2 F, F = kM + (1-k)(2 - 1/M) (R. J. McIntyre,
"Multiplication noise in uniform avalanche diodes," IEEE Trans. Electron
Devices 13(1), 164-168, 1966), are checked first. The Edgeworth series of
the CDF is generated to any order from
    F(x) = Phi(x) - phi(x) sum_m c_m He_{m-1}(x),
    sum_m c_m t^m = exp(sum_{r>=3} l_r t^r / r!) - 1,  l_r = kappa_r/kappa_2^{r/2},
collecting the terms of order lambda^{-s/2} (S. I. Blinnikov and
R. Moessner, "Expansions for nearly Gaussian distributions," Astron.
Astrophys. Suppl. Ser. 130, 193-205, 1998). The series is summed through
order ORDER; the largest term of the next order is printed as its
accuracy and must be far below the tolerance. Runs tests/models/model_dump
(argv[1]). Exits 1 on any mismatch.
"""
import json
import math
import os
import subprocess
import sys
from math import factorial

import numpy as np
from scipy import special, stats

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from checklib import Tally  # noqa: E402

ORDER = 5            # Edgeworth terms through lambda^{-5/2}
TOL_CDF = 3e-11      # P(Y < t), P(Y >= t) vs the series, smooth regime
                     # (sigma_th >= 8h), up to 1e9 primaries (measured
                     # 2.8e-13 .. 1.3e-11)
TOL_CDF_CHIRP = 1e-10    # the same, grid step 64 by the chirp z-transform
                         # (6e9 primaries, 1.9e11 electrons; measured 3.4e-11)
TOL_CDF_LATTICE = 1e-11  # the same, lattice regime, sigma_th = h (measured
                         # 2.8e-12)
TOL_VAR = 1e-8       # relative variance of the computed law vs kappa_2
TOL_SERIES = 1e-13   # the first omitted order must be below this
TOL_GAIN = 1e-12     # gain law moments vs McIntyre's closed forms (relative)

GAIN, K = 31.7, 0.013
# (lambda, sigma_th, tolerance): the cases that showed the lattice excess
# variance (1.03e5 and 2.3e5 primaries, now on a step-1 grid placed over
# the law), grid steps 2 and 4 (1e7, 3e7), 16 (1e9, polyphase FFTs) and 64
# (6e9, chirp z-transform) in the smooth regime, and step 2 in the lattice
# regime (sigma_th < 8h)
CASES = [(1.03e5, 270.0, TOL_CDF), (2.3e5, 270.0, TOL_CDF),
         (1e7, 270.0, TOL_CDF), (3e7, 270.0, TOL_CDF), (1e9, 270.0, TOL_CDF),
         (6e9, 270.0, TOL_CDF_CHIRP), (1e7, 2.0, TOL_CDF_LATTICE)]


def mcintyre_pmf(g, k, n):
    u = 1.0 - k
    lp = (np.log(u) + special.gammaln(n / u + 1) - special.gammaln(n + 1)
          - np.log1p(k * (n - 1)) - special.gammaln(n * k / u + 1)
          + (1 + k * (n - 1)) / u * np.log((1 + k * (g - 1)) / g)
          + (n - 1) * np.log(u * (g - 1) / g))
    return np.exp(lp)


def gain_moments(g, k, rmax):
    n = np.arange(1, int(200 * g * (1 + k * g)) + 2000, dtype=float)
    p = mcintyre_pmf(g, k, n)
    assert p[-1] < 1e-40 * p.max(), "gain law not cut far enough"
    return [np.sum(p * n ** r) for r in range(rmax + 1)]


def hermite_he(m, x):
    h0, h1 = np.ones_like(x), x
    if m == 0:
        return h0
    for j in range(1, m):
        h0, h1 = h1, x * h1 - j * h0
    return h1


def edgeworth_orders(l, smax, x):
    """CDF correction terms of order 1..smax at standardized points x."""
    s_terms = {(r, r - 2): v / factorial(r) for r, v in l.items() if r - 2 <= smax}
    total, power = {}, {(0, 0): 1.0}
    for j in range(1, smax + 1):
        nxt = {}
        for (m1, s1), c1 in power.items():
            for (m2, s2), c2 in s_terms.items():
                if s1 + s2 <= smax:
                    nxt[(m1 + m2, s1 + s2)] = nxt.get((m1 + m2, s1 + s2), 0.0) + c1 * c2
        power = nxt
        for key, c in power.items():
            total[key] = total.get(key, 0.0) + c / factorial(j)
    phi = stats.norm.pdf(x)
    terms = [np.zeros_like(x) for _ in range(smax + 1)]
    for (m, s), c in total.items():
        terms[s] -= phi * c * hermite_he(m - 1, x)
    return terms


def dump(exe, lam, sth, t):
    q = [{"model": "apd", "params": {"signal": lam, "background": 0.0, "apd-gain": GAIN,
                                     "apd-k": K, "sigma-th": sth},
          "x": 1.0, "t": list(map(float, t))}]
    r = subprocess.run([exe], input=json.dumps(q), capture_output=True, text=True)
    if r.returncode != 0:
        raise SystemExit(f"model_dump failed: {r.stderr}")
    return json.loads(r.stdout)[0]


def main():
    exe = sys.argv[1]
    tally = Tally()
    mom = gain_moments(GAIN, K, ORDER + 3)
    mu = [m / mom[0] for m in mom]
    f = K * GAIN + (1 - K) * (2 - 1 / GAIN)
    tally.near("gain law E[G]/M", mu[1] / GAIN, 1.0, TOL_GAIN)
    tally.near("gain law E[G^2]/(M^2 F)", mu[2] / (GAIN * GAIN * f), 1.0, TOL_GAIN)
    for lam, sth, tol in CASES:
        kap = {r: lam * mu[r] for r in range(1, ORDER + 3)}
        kap[2] += sth * sth
        mean, sd = kap[1], math.sqrt(kap[2])
        l = {r: kap[r] / sd ** r for r in range(3, ORDER + 3)}
        t = mean + sd * (np.arange(-6.0, 6.0001, 0.25) + 0.0123)  # off the grid
        x = (t - mean) / sd  # of the thresholds as rounded
        terms = edgeworth_orders(l, ORDER + 1, x)
        ref = stats.norm.cdf(x) + sum(terms[1:ORDER + 1])
        omitted = float(np.max(np.abs(terms[ORDER + 1])))
        tag = f"lambda {lam:g}, sigma_th {sth:g} electrons"
        print(f"{tag}: Edgeworth first omitted order {omitted:.1e}")
        tally.check(omitted < TOL_SERIES, f"{tag}: Edgeworth series converged")
        out = dump(exe, lam, sth, t)
        below, above = np.array(out["below"]), np.array(out["above"])
        eb = float(np.max(np.abs(below - ref)))
        ea = float(np.max(np.abs(above - (1.0 - ref))))
        tally.near(f"{tag}: max |P(Y<t) - Edgeworth|", eb, 0.0, tol)
        tally.near(f"{tag}: max |P(Y>=t) - Edgeworth|", ea, 0.0, tol)
        if sth >= 100.0:
            # variance of the computed law: density at points 16 electrons
            # (more for wide laws) apart, trapezoid rule, which is exact to
            # far below TOL_VAR for a density this smooth
            step = 16.0 * 2 ** max(0, math.ceil(math.log2(sd / 2e4)))
            ys = np.arange(math.floor((mean - 13 * sd) / step) * step, mean + 15 * sd, step)
            d = np.array(dump(exe, lam, sth, ys)["density"])
            m0 = d.sum() * step
            m1 = (d * ys).sum() * step / m0
            var = (d * (ys - m1) ** 2).sum() * step / m0
            tally.near(f"{tag}: variance / (lambda M^2 F + sigma_th^2)", var / kap[2],
                       1.0, TOL_VAR)
    print(f"{tally.count} checks, {len(tally.failures)} failed")
    sys.exit(1 if tally.failures else 0)


if __name__ == "__main__":
    main()

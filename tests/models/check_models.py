#!/usr/bin/python3
"""check_models.py — cross-check quantcap's noise models against scipy.

Runs tests/models/model_dump (path in argv[1]) on a list of queries and compares
P(Y < t | x), P(Y >= t | x), the density and the moments with values
computed independently here:
  gauss-sd   scipy.stats.norm (cdf, sf, pdf)
  poisson    scipy.stats.poisson (cdf, sf, pmf); P(Y < t) = cdf(t - 1)
  preamp     scipy.stats.ncx2 (Y = ncx2(2m, 2x)/2) where its values are
             above 1e-280, and the Poisson mixture of gamma laws summed
             with scipy.special.gammainc/gammaincc over a wide window
  apd        McIntyre's gain law (scipy.special.gammaln), compound
             Poisson by numpy.fft on a long grid, thermal noise by
             sum_j p_j Phi((t - j)/sigma) with scipy.stats.norm
  table      the piecewise-linear density integrated by scipy.integrate.quad
Tail probabilities are compared by relative error down to 1e-300.
Exits 1 on any mismatch and prints every comparison class it ran.
"""
import json
import math
import os
import subprocess
import sys

import numpy as np
from scipy import integrate, special, stats

REL_TAIL = 1e-11     # relative error of tail probabilities (closed forms)
REL_APD = 1e-8       # apd: FFT grid + interpolation, relative ...
ABS_APD = 1e-13      # ... or absolute (FFT rounding floor)
REL_DENS = 1e-11
REL_PMF = 1e-10      # scipy.stats.poisson.pmf works in logs, k ln(mu) - mu -
                     # ln k!: its own relative error grows like eps * mu
FLOOR = 1e-300       # values below this are compared absolutely

failures = []
counts = {}


def close(got, want, rel, abs_=0.0):
    if want < FLOOR and got < FLOOR:
        return True
    return abs(got - want) <= max(rel * abs(want), abs_)


def compare(label, got, want, rel, abs_=0.0):
    counts[label.split()[0]] = counts.get(label.split()[0], 0) + 1
    if not close(got, want, rel, abs_):
        failures.append(f"{label}: quantcap {got!r} reference {want!r} "
                        f"(rel err {abs(got - want) / max(abs(want), 1e-300):.3g})")


def run_dump(exe, queries):
    out = subprocess.run([exe], input=json.dumps(queries), capture_output=True,
                         text=True, check=False)
    if out.returncode != 0:
        print(out.stderr)
        sys.exit(1)
    return json.loads(out.stdout)


# ---- queries ---------------------------------------------------------

def gauss_sd_cases():
    cases = []
    for s0, a, b, x in [(1.0, 0.0, 0.0, 0.0), (0.5, 0.2, 0.01, 3.0),
                        (1e-6, 2e-8, 0.0, 1e-5), (2.0, 1.0, 0.5, 10.0)]:
        sd = math.sqrt(s0 * s0 + a * x + b * x * x)
        t = [x + k * sd for k in (-37, -30, -20, -8, -3, -1, 0, 0.5, 2, 9, 20, 30, 37)]
        cases.append(({"model": "gauss-sd",
                       "params": {"sigma0": s0, "a": a, "b": b}, "x": x, "t": t},
                      ("norm", x, sd)))
    return cases


def poisson_cases():
    cases = []
    for ns, nb, x in [(3.0, 0.1, 1.0), (0.02, 0.0, 1.0), (50.0, 2.0, 0.5),
                      (1e4, 1.0, 1.0), (5.0, 1e-3, 0.0)]:
        lam = ns * x + nb
        t = sorted({1, 2, 3, max(1, int(lam / 4)), max(1, int(lam)),
                    int(lam + 10 * math.sqrt(lam)) + 5,
                    int(lam + 40 * math.sqrt(lam)) + 40, int(3 * lam) + 60})
        cases.append(({"model": "poisson",
                       "params": {"signal": ns, "background": nb}, "x": x, "t": t},
                      ("poisson", lam)))
    return cases


def preamp_cases():
    cases = []
    for m, x in [(1.0, 0.0), (1.0, 20.0), (2.0, 10.0), (8.0, 100.0),
                 (4.0, 2000.0), (3.5, 0.3)]:
        mean, sd = m + x, math.sqrt(m + 2 * x)
        t = sorted({mean * f for f in (1e-4, 0.01, 0.1, 0.3, 0.7, 1.0)} |
                   {mean + k * sd for k in (1, 3, 8, 20, 60)} | {mean * 10 + 100})
        t = [v for v in t if v > 0]
        cases.append(({"model": "preamp", "params": {"modes": m}, "x": x, "t": t},
                      ("ncx2", m, x)))
    return cases


def apd_cases():
    cases = []
    for ns, nb, g, k, sth, x in [(5.0, 0.0, 10.0, 0.3, 3.0, 1.0),
                                 (5.0, 0.5, 10.0, 0.3, 30.0, 1.0),
                                 (20.0, 0.0, 20.0, 0.0, 0.7, 1.0),
                                 (40.0, 1.0, 5.0, 0.5, 12.0, 0.5),
                                 (2.0, 0.0, 1.0, 0.0, 0.4, 1.0),
                                 (200.0, 0.0, 30.0, 0.2, 100.0, 1.0)]:
        lam = ns * x + nb
        f = k * g + (1 - k) * (2 - 1 / g)
        mean, sd = g * lam, math.sqrt(g * g * f * lam + sth * sth)
        t = [mean + q * sd for q in (-4, -2, -1, -0.3, 0, 0.37, 1, 2.5, 4, 6)]
        t += [-3 * sth, 0.0, 0.5, 1.0, 1.5]
        cases.append(({"model": "apd", "params": {"signal": ns, "background": nb,
                                                  "apd-gain": g, "apd-k": k,
                                                  "sigma-th": sth},
                       "x": x, "t": sorted(t)},
                      ("apd", lam, g, k, sth)))
    return cases


def table_cases(path):
    data = [r.split("#")[0].split() for r in open(path)]
    data = [r for r in data if r]
    levels = [float(v) for v in data[0][1:]]
    rows = np.array([[float(v) for v in r] for r in data[1:]])
    cases = []
    for i, x in enumerate(levels):
        t = [-45, -35, -12.5, 0, 7.3, 33.3, 61, 99.9, 140, 175, 200]
        cases.append(({"table": path, "x": x, "t": t},
                      ("table", rows[:, 0], rows[:, i + 1])))
    return cases


# ---- references --------------------------------------------------------

def mcintyre_pmf(g, k, n):
    """McIntyre (IEEE Trans. Electron Devices 19(6), 1972), one injected electron."""
    if g == 1.0:
        return (n == 1).astype(float)
    u = 1.0 - k
    lp = (np.log(u) + special.gammaln(n / u + 1) - special.gammaln(n + 1)
          - np.log1p(k * (n - 1)) - special.gammaln(n * k / u + 1)
          + (1 + k * (n - 1)) / u * np.log((1 + k * (g - 1)) / g)
          + (n - 1) * np.log(u * (g - 1) / g))
    return np.exp(lp)


def apd_reference(lam, g, k, sth):
    f = k * g + (1 - k) * (2 - 1 / g)
    top = int(g * lam + 40 * g * math.sqrt(f * max(lam, 1)) + 200 * g * g + 1000)
    n = 1 << int(math.ceil(math.log2(4 * top)))
    gain = np.zeros(n)
    idx = np.arange(1, n // 2)
    gain[1:n // 2] = mcintyre_pmf(g, k, idx.astype(float))
    gain /= gain.sum()
    pz = np.fft.irfft(np.exp(lam * (np.fft.rfft(gain) - 1.0)), n)
    pz = np.clip(pz[:n // 2], 0, None)
    pz /= pz.sum()
    z = np.arange(pz.size, dtype=float)
    return pz, z


def reference(kind, t):
    if kind[0] == "norm":
        _, x, sd = kind
        return (stats.norm.cdf(t, x, sd), stats.norm.sf(t, x, sd),
                stats.norm.pdf(t, x, sd), x, sd * sd)
    if kind[0] == "poisson":
        lam = kind[1]
        t = np.asarray(t)
        return (stats.poisson.cdf(t - 1, lam), stats.poisson.sf(t - 1, lam),
                stats.poisson.pmf(t, lam), lam, lam)
    if kind[0] == "ncx2":
        _, m, x = kind
        t = np.asarray(t, float)
        if x == 0:
            lo, hi = stats.gamma.cdf(t, m), stats.gamma.sf(t, m)
            dens = stats.gamma.pdf(t, m)
        else:
            # Poisson(x) mixture of Gamma(m + j, 1), summed over a wide window
            j = np.arange(max(0, int(x - 60 * math.sqrt(x) - 60)),
                          int(x + 60 * math.sqrt(x) + 400 + 5 * np.max(t)))
            lw = j * math.log(x) - x - special.gammaln(j + 1)
            w = np.exp(lw)
            lo = np.array([np.sum(w * special.gammainc(m + j, v)) for v in t])
            hi = np.array([np.sum(w * special.gammaincc(m + j, v)) for v in t])
            dens = np.array([np.sum(w * stats.gamma.pdf(v, m + j)) for v in t])
            for a, c in zip(dens, 2 * stats.ncx2.pdf(2 * t, 2 * m, 2 * x)):
                if c > 1e-280:
                    compare("preamp-vs-ncx2 density", a, c, 1e-6)
            # scipy.stats.ncx2 itself, where it resolves the value
            clo = stats.ncx2.cdf(2 * t, 2 * m, 2 * x)
            chi = stats.ncx2.sf(2 * t, 2 * m, 2 * x)
            for a, b, c, d in zip(lo, hi, clo, chi):
                if c > 1e-280:
                    compare("preamp-vs-ncx2 below", a, c, 1e-6)
                if d > 1e-280:
                    compare("preamp-vs-ncx2 above", b, d, 1e-6)
        return lo, hi, dens, m + x, m + 2 * x
    if kind[0] == "apd":
        _, lam, g, k, sth = kind
        pz, z = apd_reference(lam, g, k, sth)
        keep = pz > 0
        pz, z = pz[keep], z[keep]
        lo = np.array([np.sum(pz * stats.norm.cdf(v, z, sth)) for v in t])
        hi = np.array([np.sum(pz * stats.norm.sf(v, z, sth)) for v in t])
        dens = np.array([np.sum(pz * stats.norm.pdf(v, z, sth)) for v in t])
        f = k * g + (1 - k) * (2 - 1 / g)
        mean = np.sum(pz * z)
        var = np.sum(pz * z * z) - mean * mean + sth * sth
        # closed forms of the model vs this independent law
        compare("apd-law mean", mean, g * lam, 1e-9)
        compare("apd-law var", var, g * g * f * lam + sth * sth, 1e-7)
        return lo, hi, dens, mean, var
    if kind[0] == "table":
        _, ys, fs = kind
        area = np.trapz(fs, ys)
        dens = lambda v: np.interp(v, ys, fs, left=0.0, right=0.0) / area
        lo, hi, dd = [], [], []
        for v in t:
            a = integrate.quad(dens, ys[0], min(max(v, ys[0]), ys[-1]), points=ys,
                               limit=200, epsabs=1e-14, epsrel=1e-12)[0]
            b = integrate.quad(dens, min(max(v, ys[0]), ys[-1]), ys[-1], points=ys,
                               limit=200, epsabs=1e-14, epsrel=1e-12)[0]
            lo.append(a)
            hi.append(b)
            dd.append(float(dens(v)) if ys[0] <= v < ys[-1] else 0.0)
        mean = integrate.quad(lambda v: v * dens(v), ys[0], ys[-1], points=ys,
                              limit=200)[0]
        m2 = integrate.quad(lambda v: v * v * dens(v), ys[0], ys[-1], points=ys,
                            limit=200)[0]
        return lo, hi, dd, mean, m2 - mean * mean
    raise ValueError(kind)


def main():
    exe = sys.argv[1]
    src = os.environ.get("QC_TEST_DATA", os.path.dirname(__file__) + "/..")
    table = os.path.join(src, "..", "data", "table_demo.txt")
    cases = (gauss_sd_cases() + poisson_cases() + preamp_cases() + apd_cases() +
             table_cases(table))
    got = run_dump(exe, [q for q, _ in cases])
    smallest = 1.0
    for (q, kind), res in zip(cases, got):
        name = q.get("model", "table")
        lo, hi, dens, mean, var = reference(kind, q["t"])
        rel, abs_ = (REL_APD, ABS_APD) if name == "apd" else (REL_TAIL, 0.0)
        for i, t in enumerate(q["t"]):
            tag = f"{name} x={q['x']} t={t:.6g}"
            compare(f"{name} below {tag}", res["below"][i], float(lo[i]), rel, abs_)
            compare(f"{name} above {tag}", res["above"][i], float(hi[i]), rel, abs_)
            compare(f"{name} density {tag}", res["density"][i], float(dens[i]),
                    {"apd": REL_APD, "poisson": REL_PMF}.get(name, REL_DENS),
                    ABS_APD if name == "apd" else 0.0)
            for v in (lo[i], hi[i]):
                if FLOOR < v < smallest and name != "apd":
                    smallest = v
        compare(f"{name} mean x={q['x']}", res["mean"], mean, 1e-9)
        compare(f"{name} var x={q['x']}", res["var"], var, 1e-7)
    for k in sorted(counts):
        print(f"compared {counts[k]:4d} values of {k}")
    print(f"smallest tail probability compared by relative error: {smallest:.3g}")
    if failures:
        print(f"{len(failures)} MISMATCHES:")
        for f in failures:
            print("  " + f)
        return 1
    print("all values agree")
    return 0


if __name__ == "__main__":
    sys.exit(main())

#!/usr/bin/python3
"""check_preamp.py — the `preamp` model at many modes (m = 300 … 1e6)
against scipy and against its Gaussian limit.

Model parametrization (docs/models.md): energies in units of the ASE
energy per mode, level x = signal energy, Y = ncx2(2m, 2x)/2 with mean
m + x and variance m + 2x.

Runs tests/models/model_dump (argv[1]) and, where given, the quantcap CLI
(argv[2]) and checks
 1. P(Y < t), P(Y >= t) and the density at t = mean + k·sd,
    |k| <= 30, against scipy.stats.ncx2 (Boost's noncentral chi-square,
    Debian python3-scipy) by relative error, for x in {0, 1, 30, 1e3, 1e5,
    1e6}. For x = 0 the reference is ncx2 at noncentrality 2e-12 (an effect
    of ~1e-12 relative): scipy.special.gammainc (Cephes) is off by 4e-6
    relative at a = 1e6, t = a − 5√a.
 2. below + above = 1 and below increasing over the grid.
 3. the Gaussian limit N(m + x, m + 2x): the mean and variance integrated
    from the model's own tails (∫ P(Y >= t) dt and 2∫ t P(Y >= t) dt) match
    m + x and m + 2x, and sup_k |P(Y < t_k) − Φ(k)| stays below the size of
    the first Edgeworth term, skewness/6·max|(k²−1)φ(k)| <= skew/15 (skewness
    2(m + 3x)/(m + 2x)^1.5 from the cumulants κ_n = (n−1)!(m + n x)),
    which goes to 0 like 2/√m.
 4. with the CLI: `design` of levels {0, x1} at m = 1e3 … 1e6 exits 0, the
    quantized rate is at most the unquantized one, and the unquantized rate
    matches scipy.integrate.quad over scipy.stats.ncx2.pdf.
"""
import json
import math
import os
import subprocess
import sys

import numpy as np
from scipy import integrate, stats

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from checklib import Tally  # noqa: E402

MODES = [300.0, 1e3, 1e4, 1e5, 1e6]
LEVELS = [0.0, 1.0, 30.0, 1e3, 1e5, 1e6]
KS = [-30, -20, -10, -5, -2, -1, 0, 1, 2, 5, 10, 20, 30]
REL_SCIPY = 1e-9    # relative, tails and density (scipy's own accuracy at
                    # 2m = 2e6 degrees of freedom is a few 1e-10)
FLOOR = 1e-280      # below this scipy's values are not compared
DENS_FLOOR = 1e-200 # densities below this are not compared: Boost's ncx2
                    # pdf is 3e-8 off at m = x = 1e5, 30 sd below the mean,
                    # where the difference quotient of scipy's own cdf agrees
                    # with quantcap's density to 1.5e-9
SUM_TOL = 1e-13     # |below + above − 1|
MOMENT_TOL = 1e-7   # relative, mean and variance from the integrated tails
EDGEWORTH_FACTOR = 1.0 / 15.0
REL_MI = 1e-8       # unquantized rate against scipy quadrature, relative


def dump(exe, queries):
    out = subprocess.run([exe], input=json.dumps(queries), capture_output=True,
                         text=True, check=True).stdout
    return json.loads(out)


def ref(m, x, t):
    nc = 2.0 * (x if x > 0 else 1e-12)
    t = np.asarray(t, float)
    return (stats.ncx2.cdf(2 * t, 2 * m, nc), stats.ncx2.sf(2 * t, 2 * m, nc),
            2 * stats.ncx2.pdf(2 * t, 2 * m, nc))


def rel_ok(tally, what, got, want, floor=FLOOR):
    if not want > floor:
        return
    if got is None:
        tally.check(False, f"{what}: quantcap gave no number (scipy {want:.6g})")
        return
    tally.check(abs(got - want) <= REL_SCIPY * want,
                f"{what}: quantcap {got:.15g} scipy {want:.15g} "
                f"(rel {abs(got - want) / want:.2e}, tol {REL_SCIPY:g})")


def check_scipy(tally, exe):
    queries, keys = [], []
    for m in MODES:
        for x in LEVELS:
            mean, sd = m + x, math.sqrt(m + 2 * x)
            t = [mean + k * sd for k in KS if mean + k * sd > 0]
            queries.append({"model": "preamp", "params": {"modes": m}, "x": x, "t": t})
            keys.append((m, x, t))
    worst = 0.0
    for (m, x, t), r in zip(keys, dump(exe, queries)):
        lo, hi, de = ref(m, x, t)
        prev = -1.0
        for i, v in enumerate(t):
            tag = f"m={m:g} x={x:g} t={v:.10g}"
            rel_ok(tally, f"below {tag}", r["below"][i], lo[i])
            rel_ok(tally, f"above {tag}", r["above"][i], hi[i])
            rel_ok(tally, f"density {tag}", r["density"][i], de[i], DENS_FLOOR)
            for got, want, floor in ((r["below"][i], lo[i], FLOOR),
                                     (r["above"][i], hi[i], FLOOR),
                                     (r["density"][i], de[i], DENS_FLOOR)):
                if got is not None and want > floor:
                    worst = max(worst, abs(got - want) / want)
            b, a = r["below"][i], r["above"][i]
            tally.check(b is not None and a is not None and abs(b + a - 1) <= SUM_TOL,
                        f"below + above = 1 at {tag} (got {b} + {a})")
            tally.check(b is not None and b >= prev, f"below increasing at {tag}")
            prev = b if b is not None else prev
    print(f"preamp vs scipy.stats.ncx2: worst relative difference {worst:.2e}")


def check_gauss_limit(tally, exe):
    for m in MODES:
        for x in (0.0, 30.0, 1e3):
            mean, var = m + x, m + 2 * x
            sd = math.sqrt(var)
            # tails on a fine grid over mean ± 40 sd (the rest < 1e-300)
            ts = np.linspace(max(mean - 40 * sd, 0.0), mean + 40 * sd, 8001)
            ks = np.linspace(-6, 6, 49)
            q = [{"model": "preamp", "params": {"modes": m}, "x": x,
                  "t": list(ts) + list(mean + ks * sd)}]
            r = dump(exe, q)[0]
            above = np.array(r["above"][:len(ts)], float)
            below = np.array(r["below"][len(ts):], float)
            lo = ts[0]
            # E[Y] = lo + ∫_lo^∞ P(Y ≥ t) dt, E[(Y−lo)²] = 2∫ (t−lo) P(Y ≥ t) dt
            got_mean = lo + integrate.simpson(above, x=ts)
            e2 = 2 * integrate.simpson((ts - lo) * above, x=ts)
            got_var = e2 - (got_mean - lo) ** 2
            tally.check(abs(got_mean - mean) <= MOMENT_TOL * mean,
                        f"mean m + x at m={m:g} x={x:g}: {got_mean:.12g} vs {mean:.12g}")
            tally.check(abs(got_var - var) <= MOMENT_TOL * var * math.sqrt(m),
                        f"variance m + 2x at m={m:g} x={x:g}: {got_var:.12g} vs {var:.12g}")
            skew = 2 * (m + 3 * x) / var ** 1.5
            dev = float(np.max(np.abs(below - stats.norm.cdf(ks))))
            tally.check(dev <= EDGEWORTH_FACTOR * skew,
                        f"Gaussian limit at m={m:g} x={x:g}: sup|F − Φ| = {dev:.3g} "
                        f"> skew/15 = {EDGEWORTH_FACTOR * skew:.3g}")
            print(f"m={m:g} x={x:g}: mean {got_mean:.10g} (m+x {mean:g}), var "
                  f"{got_var:.8g} (m+2x {var:g}), sup|F − Φ| {dev:.2e} (skew {skew:.2e})")


def mi_reference(m, levels):
    """I(X;Y) in bits, equiprobable levels, scipy.integrate.quad over ncx2.pdf."""
    def pdf(x, y):
        return 2 * stats.ncx2.pdf(2 * y, 2 * m, 2 * (x if x > 0 else 1e-12))
    s = math.sqrt(m + 2 * max(levels))
    lo, hi = max(0.0, m + min(levels) - 40 * s), m + max(levels) + 40 * s
    tot = 0.0
    for x in levels:
        def g(y, x=x):
            f = pdf(x, y)
            mix = sum(pdf(z, y) for z in levels) / len(levels)
            return f * math.log(f / mix) if f > 0 and mix > 0 else 0.0
        pts = [m + x - 3 * s, m + x, m + x + 3 * s]
        tot += integrate.quad(g, lo, hi, epsabs=1e-16, epsrel=1e-12, limit=500,
                              points=pts)[0] / len(levels)
    return tot / math.log(2)


def check_cli(tally, cli):
    import warnings
    warnings.simplefilter("ignore")  # quad's roundoff notes at the 1e-12 request
    for m, x1 in ((1e3, 1.0), (1e4, 10.0), (3e5, 1000.0), (1e6, 3000.0)):
        cmd = [cli, "design", "--model", "preamp", "--modes", f"{m:g}",
               "--levels", f"0,{x1:g}", "--bits", "2", "--json"]
        p = subprocess.run(cmd, capture_output=True, text=True)
        if not tally.check(p.returncode == 0, f"{' '.join(cmd[1:])} exits 0 "
                                              f"(rc {p.returncode}: {p.stderr.strip()})"):
            continue
        r = json.loads(p.stdout)
        rate, unq = r["rate_bits"], r["unquantized_bits"]
        err = r["unquantized_error_bits"]
        tally.check(rate <= unq + err, f"m={m:g}: quantized {rate:.12g} <= unquantized "
                                       f"{unq:.12g} bit")
        want = mi_reference(m, [0.0, x1])
        tally.near(f"unquantized rate m={m:g} levels 0,{x1:g} (bit)", unq, want,
                   REL_MI * want)


def main():
    tally = Tally()
    check_scipy(tally, sys.argv[1])
    check_gauss_limit(tally, sys.argv[1])
    if len(sys.argv) > 2:
        check_cli(tally, sys.argv[2])
    print(f"{tally.count} checks, {len(tally.failures)} failed")
    return 1 if tally.failures else 0


if __name__ == "__main__":
    sys.exit(main())

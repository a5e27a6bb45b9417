#!/usr/bin/python3
"""Pulse-position rates (src/capacity/ppm.c, through ppm_dump) against a
direct enumeration of the whole PPM symbol channel with numpy: every one
of the K^M outputs, P(y | pulse in slot i) = p_on(y_i) * prod_{j != i}
p_off(y_j), the mutual information of the uniform law, and the capacity by
Blahut-Arimoto on the full matrix (Blahut, IEEE Trans. IT 18(4), 1972) to
confirm that the uniform law achieves it. The per-slot rows of photon
counting come from scipy.stats.poisson (counts Poisson(n_s + n_b) in the
pulsed slot, Poisson(n_b) in an empty one, cut by whole-count thresholds).
The hard receiver is enumerated over the 2^M firing patterns. Usage:
check_ppm.py PPM_DUMP"""
import itertools
import subprocess
import sys

import numpy as np
from scipy import stats

TOL = 1e-10          # bracket width asked of the library (bits)
SLACK = 1e-11        # rounding allowed around the bracket (bits)
TOL_HARD = 1e-12     # closed-form hard rate against enumeration (bits)

failures = []


def check(ok, what):
    if not ok:
        failures.append(what)
        print("FAIL:", what)


def symbol_channel(p_off, p_on, m):
    """(M x K^M) transition matrix of the full symbol channel."""
    k = len(p_off)
    outs = np.array(list(itertools.product(range(k), repeat=m)))
    w = np.empty((m, len(outs)))
    for i in range(m):
        rows = np.where(np.arange(m)[None, :] == i, p_on[outs], p_off[outs])
        w[i] = np.prod(rows, axis=1)
    return w


def mi_bits(w, r):
    q = r @ w
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.where(w > 0, w * np.log2(w / q[None, :]), 0.0)
    return float(r @ t.sum(axis=1))


def ba_capacity(w, iters=2000):
    r = np.full(w.shape[0], 1.0 / w.shape[0])
    for _ in range(iters):
        q = r @ w
        with np.errstate(divide="ignore", invalid="ignore"):
            d = np.where(w > 0, w * np.log(w / q[None, :]), 0.0).sum(axis=1)
        r = r * np.exp(d)
        r /= r.sum()
    return mi_bits(w, r), r


def poisson_rows(ns, nb, thresholds):
    """Cells [0, t1), [t1, t2), ..., [t_{K-1}, inf) of Poisson counts."""
    def row(lam):
        edges = list(thresholds)
        cdf = [stats.poisson.cdf(t - 1, lam) for t in edges]
        cells = [cdf[0]] + [cdf[i] - cdf[i - 1] for i in range(1, len(cdf))]
        cells.append(stats.poisson.sf(edges[-1] - 1, lam))
        return np.array(cells)
    return row(nb), row(ns + nb)


def run(dump, lines):
    out = subprocess.run([dump], input="\n".join(lines) + "\n", capture_output=True,
                         text=True, check=True).stdout.split("\n")
    return [list(map(float, l.split())) for l in out if l.strip()]


def main():
    dump = sys.argv[1]
    rng = np.random.default_rng(20261202)
    cases = []
    # random per-slot rows, some cells empty in one row or the other
    for m, k in [(2, 2), (2, 5), (3, 3), (3, 4), (4, 3), (4, 5), (5, 4), (6, 3)]:
        off = rng.dirichlet(np.ones(k))
        on = rng.dirichlet(np.ones(k))
        if k >= 3:
            off[0] = 0.0            # a cell only a pulse reaches
            off /= off.sum()
            on[1] = 0.0             # a cell only an empty slot reaches
            on /= on.sum()
        cases.append((f"random M={m} K={k}", m, off, on))
    # photon counting with background (scipy.stats.poisson)
    for m, ns, nb, th in [(2, 3.0, 0.2, [1, 3]), (4, 4.0, 0.5, [1, 2, 4, 7]),
                          (4, 2.0, 0.05, [1]), (8, 5.0, 0.3, [2]), (3, 6.0, 1.0, [2, 4, 7, 10, 14]),
                          (5, 1.0, 0.1, [1, 2, 3])]:
        off, on = poisson_rows(ns, nb, th)
        cases.append((f"poisson M={m} ns={ns} nb={nb} t={th}", m, off, on))
    lines = ["soft %d %d %.17g %s %s" % (m, len(off), TOL, " ".join("%.17g" % v for v in off),
                                         " ".join("%.17g" % v for v in on))
             for _, m, off, on in cases]
    got = run(dump, lines)
    for (name, m, off, on), (lo, hi, _) in zip(cases, got):
        w = symbol_channel(off, on, m)
        ref = mi_bits(w, np.full(m, 1.0 / m))
        check(hi - lo <= TOL + SLACK, f"{name}: bracket [{lo}, {hi}] wider than {TOL}")
        check(lo - SLACK <= ref <= hi + SLACK,
              f"{name}: enumeration {ref!r} outside [{lo!r}, {hi!r}]")
        if len(w[0]) <= 4096:
            cap, r = ba_capacity(w)
            # the uniform law is capacity-achieving by symmetry
            check(abs(cap - ref) < 1e-9 and np.max(np.abs(r - 1.0 / m)) < 1e-6,
                  f"{name}: Blahut-Arimoto capacity {cap} with law {r} vs uniform {ref}")
        print(f"ok {name}: enumeration {ref:.15f} in [{lo:.15f}, {hi:.15f}]")

    # noiseless photon counting: an erasure channel, (1 - e^{-ns}) log2 M
    # (from memory; derived in tests/capacity/test_ppm.c)
    lines, want = [], []
    for m in [2, 16, 256, 4096]:
        for ns in [0.1, 1.0, 5.0]:
            off, on = poisson_rows(ns, 0.0, [1])
            lines.append("soft %d 2 %.17g %.17g %.17g %.17g %.17g" % (m, TOL, *off, *on))
            want.append(((1 - np.exp(-ns)) * np.log2(m), m, ns))
    for (ref, m, ns), (lo, hi, _) in zip(want, run(dump, lines)):
        check(lo - SLACK <= ref <= hi + SLACK,
              f"noiseless M={m} ns={ns}: {ref} outside [{lo}, {hi}]")

    # hard receiver: enumerate the 2^M firing patterns
    lines, hcases = [], []
    for m in [2, 3, 5, 8, 10]:
        for a, b in [(0.9, 0.01), (0.5, 0.2), (1.0, 0.0), (0.3, 0.0), (0.99, 0.3)]:
            lines.append("hard %d %.17g %.17g" % (m, a, b))
            hcases.append((m, a, b))
    for (m, a, b), (rate, pc, pw, pe) in zip(hcases, run(dump, lines)):
        w = np.zeros((m, m + 1))    # outputs: slot 0..M-1, erasure
        for fire in itertools.product([0, 1], repeat=m):
            for i in range(m):
                p = np.prod([(a if fire[j] else 1 - a) if j == i else (b if fire[j] else 1 - b)
                             for j in range(m)])
                w[i, fire.index(1) if sum(fire) == 1 else m] += p
        ref = mi_bits(w, np.full(m, 1.0 / m))
        check(abs(rate - ref) <= TOL_HARD, f"hard M={m} a={a} b={b}: {rate} vs {ref}")
        check(abs(pe - w[0, m]) <= TOL_HARD and abs(pc - w[0, 0]) <= TOL_HARD,
              f"hard M={m} a={a} b={b}: erasure {pe} vs {w[0, m]}")
    print("hard receiver: %d cases" % len(hcases))
    if failures:
        print("%d failures" % len(failures))
        sys.exit(1)
    print("all PPM checks passed")


if __name__ == "__main__":
    main()

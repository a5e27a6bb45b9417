#!/usr/bin/python3
"""nelder_mead_peer.py — the scipy peer of the optimal threshold design:
MI-optimal thresholds of a K-cell quantizer after PAM levels in Gaussian
noise (one standard deviation for all levels, or one per level for
signal-dependent noise), found by Nelder–Mead (J. A. Nelder and R. Mead, Computer Journal
7(4), 1965; scipy.optimize.minimize) from uniform thresholds, with the
mutual information over the K cells computed with scipy.stats.norm.

usage: nelder_mead_peer.py SIGMA CELLS BUDGET_S LEVEL1,LEVEL2,...
SIGMA is one number or a comma-separated list with one per level.
prints: seconds (optimization only, imports excluded) and the rate in bits.
BUDGET_S caps the search time; the best point found so far counts."""
import sys
import time

import numpy as np
from scipy.optimize import minimize
from scipy.stats import norm


class OutOfTime(Exception):
    pass


def main():
    cells = int(sys.argv[2])
    budget = float(sys.argv[3])
    levels = np.array([float(v) for v in sys.argv[4].split(",")])
    sigma = np.array([float(v) for v in sys.argv[1].split(",")])
    sigma = np.broadcast_to(sigma, levels.shape)[:, None]
    r = np.full(levels.size, 1.0 / levels.size)
    best = {"mi": -np.inf, "t": None}

    def mi_bits(t):
        t = np.sort(t)
        edges = np.concatenate(([-np.inf], t, [np.inf]))
        cdf = norm.cdf((edges[None, :] - levels[:, None]) / sigma)
        p = np.diff(cdf, axis=1)
        q = r @ p
        with np.errstate(divide="ignore", invalid="ignore"):
            terms = np.where(p > 0, p * np.log2(p / q[None, :]), 0.0)
        return float(r @ terms.sum(axis=1))

    start = time.perf_counter()

    def objective(t):
        v = mi_bits(t)
        if v > best["mi"]:
            best["mi"], best["t"] = v, np.sort(t)
        if time.perf_counter() - start > budget:
            raise OutOfTime
        return -v

    lo = (levels - 2 * sigma[:, 0]).min()
    hi = (levels + 2 * sigma[:, 0]).max()
    t0 = lo + (hi - lo) * np.arange(1, cells) / cells
    try:
        minimize(objective, t0, method="Nelder-Mead",
                 options={"xatol": 1e-7, "fatol": 1e-12,
                          "maxfev": 400 * cells * cells, "adaptive": cells > 8})
    except OutOfTime:
        pass
    print(f"{time.perf_counter() - start:.6f} {best['mi']:.12f}")


if __name__ == "__main__":
    main()

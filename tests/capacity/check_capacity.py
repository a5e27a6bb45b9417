#!/usr/bin/python3
"""check_capacity.py — cross-check of the capacity engine against an
independent computation with scipy/numpy (Debian python3-scipy).

Runs the dump program given as argv[1] (tests/capacity/capacity_dump.c),
which prints random small channels (some with input costs and a budget)
together with quantcap's certified capacity, upper bound and input law.
For each case the capacity (or capacity under the budget) is recomputed
by maximizing I(X;Y) over the probability simplex with
scipy.optimize.minimize (SLSQP, analytic gradient, several starts).
Checks:
  - no law scipy finds exceeds quantcap's certified upper bound;
  - quantcap's value agrees with scipy's maximum to 1e-7 bit;
  - numpy's I(X;Y) of quantcap's law equals the reported capacity;
  - that law meets the budget.
Exits non-zero on any mismatch."""
import json
import subprocess
import sys

import numpy as np
from scipy.optimize import minimize

TOL_AGREE = 1e-7    # bits: SLSQP's accuracy on these small problems
TOL_BOUND = 1e-9    # bits: certified bound vs a law found by scipy
TOL_MI = 1e-11      # bits: I of the returned law recomputed by numpy
COST_RTOL = 1e-9


def mutual_information_bits(r, p):
    """I(X;Y) = sum_x r(x) D(P(.|x) || rP), inputs with r(x) = 0 skipped."""
    q = r @ p
    with np.errstate(divide="ignore", invalid="ignore"):
        terms = np.where(p > 0, p * np.log2(p / q), 0.0)
    used = r > 0
    return float(r[used] @ terms[used].sum(axis=1))


def divergences_bits(r, p):
    q = r @ p
    with np.errstate(divide="ignore", invalid="ignore"):
        terms = np.where(p > 0, p * np.log2(p / np.where(q > 0, q, 1.0)), 0.0)
    return terms.sum(axis=1)


def scipy_capacity(p, costs, budget, rng):
    nx = p.shape[0]
    cons = [{"type": "eq", "fun": lambda r: r.sum() - 1.0,
             "jac": lambda r: np.ones_like(r)}]
    if costs is not None:
        cons.append({"type": "ineq", "fun": lambda r: budget - r @ costs,
                     "jac": lambda r: -costs})
    best, best_r = -np.inf, None
    starts = [np.full(nx, 1.0 / nx)] + [rng.dirichlet(np.ones(nx)) for _ in range(5)]
    for r0 in starts:
        if costs is not None and r0 @ costs > budget:
            cheapest = np.argmin(costs)
            eta = (r0 @ costs - budget) / (r0 @ costs - costs[cheapest])
            r0 = (1 - eta) * r0
            r0[cheapest] += eta
        res = minimize(lambda r: -mutual_information_bits(np.clip(r, 0, 1), p), r0,
                       jac=lambda r: -(divergences_bits(np.clip(r, 0, 1), p) - np.log2(np.e)),
                       method="SLSQP", bounds=[(0.0, 1.0)] * nx, constraints=cons,
                       options={"ftol": 1e-15, "maxiter": 2000})
        r = np.clip(res.x, 0.0, None)
        r /= r.sum()
        if costs is not None and r @ costs > budget:
            continue  # slightly infeasible after the clip: not a valid witness
        val = mutual_information_bits(r, p)
        if val > best:
            best, best_r = val, r
    return best, best_r


def main():
    if len(sys.argv) != 2:
        print("usage: check_capacity.py CAPACITY_DUMP", file=sys.stderr)
        return 2
    out = subprocess.run([sys.argv[1]], check=True, capture_output=True, text=True).stdout
    cases = json.loads(out)
    rng = np.random.default_rng(20240607)
    failures = 0
    for k, c in enumerate(cases):
        p = np.array(c["p"]).reshape(c["nx"], c["ny"])
        costs = None if c["costs"] is None else np.array(c["costs"])
        budget = c["budget"]
        law = np.array(c["law"])
        ref, _ = scipy_capacity(p, costs, budget, rng)
        mi_law = mutual_information_bits(law, p)
        problems = []
        if ref > c["upper_bound_bits"] + TOL_BOUND:
            problems.append("scipy law beats the certified upper bound")
        if abs(c["capacity_bits"] - ref) > TOL_AGREE:
            problems.append("capacity differs from scipy's maximum")
        if abs(mi_law - c["capacity_bits"]) > TOL_MI:
            problems.append("I(returned law) differs from capacity_bits")
        if costs is not None and law @ costs > budget * (1 + COST_RTOL):
            problems.append("returned law exceeds the budget")
        kind = "cost" if costs is not None else "free"
        print(f"case {k:2d} {c['nx']}x{c['ny']} {kind}: quantcap {c['capacity_bits']:.12f} "
              f"<= {c['upper_bound_bits']:.12f}, scipy {ref:.12f}, "
              f"numpy I(law) {mi_law:.12f}" + (f"  FAIL: {'; '.join(problems)}" if problems else "  ok"))
        failures += bool(problems)
    print(f"{len(cases)} cases, {failures} mismatches")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())

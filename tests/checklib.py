"""checklib.py — the tally the Python check scripts share: count each
check, print and keep each failure (and, when asked, each pass), and
compare a quantcap value with a reference value within a tolerance.

    from checklib import Tally
    tally = Tally()
    tally.check(rc == 0, "design exits 0")
    tally.near("I(X;Y)", got, want, 1e-9)
    sys.exit(1 if tally.failures else 0)
"""


class Tally:
    def __init__(self, verbose=False):
        self.count = 0
        self.failures = []
        self.verbose = verbose

    def check(self, cond, what):
        """Count one check; print and keep `what` when `cond` is false."""
        self.count += 1
        if not cond:
            self.failures.append(what)
            print("FAIL:", what)
        elif self.verbose:
            print("ok  ", what)
        return cond

    def near(self, what, got, want, tol):
        """Count one check of |got - want| <= tol, printing both values."""
        ok = abs(got - want) <= tol
        print(f"{'ok  ' if ok else 'FAIL'} {what}: quantcap {got:.12g} scipy {want:.12g}"
              f" (|diff| {abs(got - want):.2e}, tol {tol:g})")
        self.count += 1
        if not ok:
            self.failures.append(what)
        return ok

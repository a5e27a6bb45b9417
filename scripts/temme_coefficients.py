#!/usr/bin/env python3
"""Taylor coefficients at eta = 0 of the functions c_k(eta) of Temme's
uniform asymptotic expansion of the incomplete gamma functions
(N. M. Temme, "The asymptotic expansion of the incomplete gamma
functions", SIAM J. Math. Anal. 10(4), 1979; DLMF 8.12), in exact rational
arithmetic, printed as the C table of src/models/incgamma.c.

With lambda = 1 + mu and eta^2/2 = mu - ln(1 + mu):
  c_0 = 1/mu - 1/eta,
  c_k = c_{k-1}'(eta)/eta + (-1)^k g_k/mu,
g_k the coefficients of Stirling's series of Gamma (DLMF 5.11.3); g_k is
read off the pole of c_{k-1}'/eta, which the second term must cancel.
Usage: temme_coefficients.py [K] [N]  (c_0 ... c_{K-1}, N coefficients).
"""
import sys
from fractions import Fraction as F


def mul(a, b, n):
    r = [F(0)] * n
    for i, x in enumerate(a):
        if x:
            for j in range(min(len(b), n - i)):
                r[i + j] += x * b[j]
    return r


def main():
    terms = int(sys.argv[1]) if len(sys.argv) > 1 else 5
    degree = int(sys.argv[2]) if len(sys.argv) > 2 else 22
    n = degree + 3 * terms + 2
    # mu(eta) = eta + m_2 eta^2 + ...: solve mu - ln(1 + mu) = eta^2/2
    m = [F(0)] * n
    m[1] = F(1)

    def f(mu):
        r, p, j = [F(0)] * n, mul(mu, mu, n), 2
        while any(p):
            r = [x + F((-1) ** j, j) * y for x, y in zip(r, p)]
            p, j = mul(p, mu, n), j + 1
        return r

    for i in range(2, n - 1):
        m[i] = -f(m)[i + 1]
    # s = eta/mu as a power series
    u = m[1:] + [F(0)]
    s = [F(1)] + [F(0)] * (n - 1)
    for i in range(1, n):
        s[i] = -sum(u[j] * s[i - j] for j in range(1, i + 1))
    c = [[s[i + 1] for i in range(n - 1)]]
    for k in range(1, terms):
        a = c[-1]
        g = F((-1) ** (k + 1)) * a[1]
        c.append([(i + 2) * a[i + 2] + F((-1) ** k) * g * s[i + 1]
                  for i in range(len(a) - 3)])
    for row in c:
        print("    {" + ", ".join("%.17g" % float(x) for x in row[:degree]) + "},")


if __name__ == "__main__":
    main()

#!/usr/bin/python3
"""hard_decision_ref.py — cross-check quantcap's hard-decision figures
against scipy. Runs `quantcap design --json` (path in argv[1]) and
recomputes, independently here:
  - the cell probabilities P(cell | x) of model gauss by
    scipy.integrate.quad of scipy.stats.norm.pdf over each cell,
  - the MAP decision of each cell on the input law, the symbol error rate
    and the bit error rate through binary-reflected Gray labels of the
    level ranks,
for 4-PAM and 16-QAM (per quadrature; SER of the square QAM
1 - (1 - P)^2) with the designed (optimal, uniform) thresholds and with
the midpoints, where both also equal the exact Gray BER of K. Cho and
D. Yoon, "On the general BER expression of one- and two-dimensional
amplitude modulations", IEEE Trans. Commun. 50(7), 2002:
  BER(4-PAM) = BER(16-QAM) = (1/4)[3Q(d) + 2Q(3d) - Q(5d)], d = 1/sigma.
Also the Q-factor 20 log10(Q^-1(BER)) with scipy.stats.norm.isf and
NGMI = GMI/m for these uniform laws.
"""
import json
import math
import os
import subprocess
import sys

from scipy import integrate, stats

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), '..'))
from checklib import Tally  # noqa: E402

REL = 1e-8          # quad against the library's erfc-based cell sums
QUAD_EPS = 1e-13    # quad's own tolerances

tally = Tally()


def run(cli, *args):
    p = subprocess.run([cli, 'design', '--model', 'gauss', '--json', *args],
                       capture_output=True, text=True)
    if p.returncode != 0:
        tally.check(False, f"design {' '.join(args)} exits 0: {p.stderr.strip()}")
        return None
    return json.loads(p.stdout)


def gray(i):
    return i ^ (i >> 1)


def reference(levels, sigma, thresholds, law):
    edges = [-math.inf] + list(thresholds) + [math.inf]
    n, k = len(levels), len(edges) - 1
    pdf = [[0.0] * k for _ in range(n)]
    for x, a in enumerate(levels):
        for j in range(k):
            lo, hi = edges[j], edges[j + 1]
            # split at the level so quad sees the peak
            parts = [(lo, min(hi, a)), (max(lo, a), hi)]
            s = 0.0
            for u, v in parts:
                if u < v:
                    s += integrate.quad(stats.norm(a, sigma).pdf, u, v,
                                        epsabs=QUAD_EPS, epsrel=QUAD_EPS, limit=200)[0]
            pdf[x][j] = s
    rank = sorted(range(n), key=lambda i: levels[i])
    label = [0] * n
    for r, i in enumerate(rank):
        label[i] = gray(r)
    nbits = int(math.log2(n))
    ser = ber = 0.0
    for j in range(k):
        dec = max(range(n), key=lambda x: (law[x] * pdf[x][j], -x))
        for x in range(n):
            if x != dec:
                p = law[x] * pdf[x][j]
                ser += p
                ber += p * bin(label[x] ^ label[dec]).count('1')
    return ser, ber / nbits


def q(x):
    return stats.norm.sf(x)


def main():
    cli = sys.argv[1]
    cases = [
        ('pam:4', 1, ['--snr-db', '10', '--bits', '3']),
        ('pam:4', 1, ['--snr-db', '14', '--bits', '2', '--quantizer', 'uniform']),
        ('pam:4', 1, ['--sigma', '0.6', '--quantizer', 'fixed', '--thresholds', '-2,0,2']),
        ('qam:16', 2, ['--snr-db', '12', '--bits', '3']),
        ('qam:16', 2, ['--sigma', '0.5', '--quantizer', 'fixed', '--thresholds', '-2,0,2']),
    ]
    for alphabet, dims, args in cases:
        if '--quantizer' in args and 'fixed' in args:
            args = args + ['--cells', '4']
        j = run(cli, '--alphabet', alphabet, *args)
        if j is None:
            continue
        what = f"{alphabet} {' '.join(args)}"
        sigma = j['parameters']['sigma']
        ser1, ber = reference(j['levels'], sigma, j['thresholds'], j['input_distribution'])
        ser = 1 - (1 - ser1) ** 2 if dims == 2 else ser1
        tally.near(f"{what}: symbol error rate", j['symbol_error_rate'], ser, REL * ser)
        tally.near(f"{what}: pre-FEC BER", j['pre_fec_ber'], ber, REL * ber)
        qf = 20 * math.log10(stats.norm.isf(j['pre_fec_ber']))
        tally.near(f"{what}: Q-factor dB", j['q_factor_db'], qf, 1e-9)
        m = 2 * dims
        tally.near(f"{what}: NGMI = GMI/m (uniform law)", j['ngmi'], j['gmi_bits'] / m, 1e-12)
        if 'fixed' in args:
            d = 1 / sigma
            cho_yoon = 0.25 * (3 * q(d) + 2 * q(3 * d) - q(5 * d))
            tally.near(f"{what}: BER against Cho & Yoon (2002)", j['pre_fec_ber'], cho_yoon,
                       REL * cho_yoon)
    print(f"hard decisions: {tally.count} checks, {len(tally.failures)} failed")
    return 1 if tally.failures else 0


if __name__ == '__main__':
    sys.exit(main())

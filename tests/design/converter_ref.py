#!/usr/bin/python3
"""Cross-check of quantcap's converter quantizer against scipy.

Runs the dump program given as argv[1] (tests/design/converter_dump.c) and
recomputes each rate independently: for a Gaussian channel, a converter with
ENOB < N bits is an ideal converter on a channel with the combined noise.

* the converter's own noise at its input, from the definitions of IEEE Std
  1241 for a full-scale sine of amplitude A = (HI - LO)/2:
  SINAD = 6.0206*ENOB + 1.7609 dB (20 log10 2, 10 log10 1.5), noise and
  distortion power (A^2/2) / 10^(SINAD/10), less the ideal quantization
  noise D^2/12 of the nominal bits (D = 2A / 2^N); jitter s_t at f adds
  (A^2/2) (2 pi f s_t)^2 (SNR = -20 log10(2 pi f s_t), common practice);
* referred to the receiver output by the gain g: variance / g^2, added to
  the channel's (gauss: sigma^2; gauss-sd: sigma0^2 + a x + b x^2);
* the AGC rule: g = A / (K * rms of the output about its mean), offset at
  mid-scale minus g * mean (mean and variance of the Gaussian mixture);
* thresholds (T_k - offset) / g with T_k = LO + k D, cell probabilities
  by scipy.stats.norm.cdf/sf, I(X;Y_q) by numpy for the uniform input.

Exits non-zero on any mismatch.
"""
import json
import math
import os
import subprocess
import sys

import numpy as np
from scipy import stats

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from checklib import Tally  # noqa: E402

TOL_RATE = 1e-9   # bits: exact finite sums of cell probabilities
TOL_GAIN = 1e-12  # relative: the AGC gain
tally = Tally()


def mutual_information(p, r):
    q = r @ p
    with np.errstate(divide="ignore", invalid="ignore"):
        terms = np.where(p > 0, p * np.log2(p / q), 0.0)
    return float(r @ terms.sum(axis=1))


def main():
    data = json.loads(subprocess.run([sys.argv[1]], check=True, capture_output=True,
                                     text=True).stdout)
    for i, d in enumerate(data, 1):
        lo, hi = d["full_scale"]
        bits, enob = d["bits"], d["enob"]
        a = 0.5 * (hi - lo)
        delta = (hi - lo) / 2**bits
        sinad_db = 20 * math.log10(2) * enob + 10 * math.log10(1.5)
        var_c = 0.5 * a * a / 10 ** (sinad_db / 10) - delta**2 / 12
        var_c += 0.5 * a * a * (2 * math.pi * d["signal_freq"] * d["jitter_s"]) ** 2
        x = np.array(d["levels"])
        if d["model"] == "gauss":
            var_x = np.full(len(x), d["params"][0] ** 2)
        else:
            s0, av, bv = d["params"]
            var_x = s0**2 + av * x + bv * x**2
        if d["agc_k"] > 0:
            mean = x.mean()
            rms = math.sqrt(float(np.mean(var_x + x**2)) - mean**2)
            g = a / (d["agc_k"] * rms)
            o = 0.5 * (lo + hi) - g * mean
            tally.near(f"case {i}: AGC gain", d["gain"], g, TOL_GAIN * g)
            tally.near(f"case {i}: AGC offset", d["offset"], o, 1e-12)
        else:
            g, o = d["gain"], d["offset"]
        T = lo + delta * np.arange(1, 2**bits)
        for k, t in enumerate(T):
            tally.near(f"case {i}: transition {k + 1}", d["transitions"][k], t, 1e-12)
        t = (T - o) / g
        sd = np.sqrt(var_x + var_c / g**2)
        cdf = stats.norm.cdf((t[None, :] - x[:, None]) / sd[:, None])
        edges = np.hstack([np.zeros((len(x), 1)), cdf, np.ones((len(x), 1))])
        p = np.diff(edges, axis=1)
        r = np.full(len(x), 1.0 / len(x))
        tally.near(f"case {i}: {d['model']} {bits} bits ENOB {enob:g} rate", d["rate_bits"],
                   mutual_information(p, r), TOL_RATE)
    print(f"{len(tally.failures)} mismatches in {tally.count} checks")
    return 1 if tally.failures else 0


if __name__ == "__main__":
    sys.exit(main())

#!/usr/bin/python3
"""Checks the coherent memory channel (isi_coherent_dump) against
references computed here with numpy/scipy:

- the taps of the fibre's all-pass dispersion response exp(j·β2·ω²·L/2),
  β2·L = −λ²·D·L/(2π·c), through the ideal Nyquist pulse at the symbol
  rate: h_k = ∫_{−1/2}^{1/2} H(f·Rs)·e^{j2πfk} df, by numpy's inverse FFT
  of H on a grid of its own (numpy.fft.ifft over numpy.fft.fftfreq) and in
  closed form by completing the square into Fresnel integrals
  (scipy.special.fresnel; Abramowitz and Stegun, Handbook of Mathematical
  Functions, 7.3.1-2); the kept window (the widest ±m whose taps reach 1 %
  of the largest, at most the taps asked for) and the truncated energy
  1 − Σ_kept |h_k|² (Parseval: Σ_all |h_k|² = 1);
- the exact symbol-by-symbol rate of a coherent channel with complex taps
  (QPSK and PAM on the in-phase quadrature, product quantizer): the joint
  I/Q cell law given the main-cursor symbol by enumerating every window
  with scipy.stats.norm, its mutual information (Cover & Thomas, Elements
  of Information Theory, eq. 2.28);
- one tap of 1 on QPSK with continuous output: twice the binary-input
  AWGN rate, by quadrature (scipy.integrate.quad);
- the orderings of the simulated rates (quantized ≤ unquantized,
  symbol-by-symbol ≤ sequence detector, ≤ log2 of the symbols).

Usage: check_isi_coherent.py ISI_COHERENT_DUMP"""
import itertools
import json
import math
import subprocess
import sys

import numpy as np
from scipy import integrate, special, stats

DUMP = sys.argv[1]
LIGHT = 299792458.0
TOL_TAP_FFT = 1e-8     # two FFT grids (2^16 and 2^20 points) of a kinked periodic H
                       # (the C grid's error falls as 1/N²: about 1e-9 here)
TOL_TAP_FRESNEL = 1e-8  # FFT grid against the closed form
TOL_ENERGY = 1e-9      # Parseval on the grid
TOL_TRUNC = 1e-8       # truncated energy: taps of two grids differ by at most TOL_TAP_FFT
TOL_EXACT = 1e-9       # two exact enumerations of the same law
FLOOR = 0.01           # QC_ISI_TAP_FLOOR
failures = 0


def check(ok, what):
    global failures
    print(('ok   ' if ok else 'FAIL ') + what)
    if not ok:
        failures += 1


def dump(*args):
    out = subprocess.run([DUMP, *map(str, args)], check=True, capture_output=True,
                         text=True).stdout
    return json.loads(out)


def phase_coefficient(ps_nm, baud, lambda_nm):
    """a in H = exp(j·a·f²), f in units of the symbol rate: β2·(2π·Rs)²·L/2."""
    lam = lambda_nm * 1e-9
    beta2_l = -lam * lam * (ps_nm * 1e-3) / (2 * math.pi * LIGHT)  # s²
    return beta2_l * (2 * math.pi * baud) ** 2 / 2


def taps_fft(a, n=1 << 20):
    f = np.fft.fftfreq(n)             # cycles per symbol in [−1/2, 1/2)
    return np.fft.ifft(np.exp(1j * a * f * f))  # h_k at index k mod n


def tap_fresnel(a, k):
    if a == 0:
        return 1.0 + 0j if k == 0 else 0j
    f0 = math.pi * k / a
    s = math.sqrt(2 * abs(a) / math.pi)
    S, C = special.fresnel(s * (np.array([-0.5, 0.5]) + f0))
    integral = (C[1] - C[0]) + 1j * math.copysign(1.0, a) * (S[1] - S[0])
    return np.exp(-1j * math.pi ** 2 * k * k / a) * integral / s


for ps_nm, baud, max_taps in [(100, 32e9, 11), (250, 64e9, 11), (-60, 90e9, 11),
                              (800, 32e9, 5), (0, 32e9, 11)]:
    a = phase_coefficient(ps_nm, baud, 1550.0)
    got = dump('taps', f'dispersion:{ps_nm}', repr(baud), '1550', max_taps)
    h = np.array(got['re']) + 1j * np.array(got['im'])
    ref = taps_fft(a)
    n = len(ref)
    mag = np.abs(ref)
    big = mag.max()
    m = 0
    for k in range(n // 2 - 1, 0, -1):
        if max(mag[k], mag[-k]) >= FLOOR * big:
            m = k
            break
    m = min(m, (max_taps - 1) // 2)
    want = np.array([ref[k % n] for k in range(-m, m + 1)])
    tag = f'{ps_nm} ps/nm at {baud / 1e9:g} GBd'
    check(len(h) == 2 * m + 1, f'{tag}: {len(h)} taps = 2·{m} + 1 (1 % floor, at most {max_taps})')
    if len(h) == len(want):
        err = float(np.abs(h - want).max())
        check(err <= TOL_TAP_FFT, f'{tag}: taps against numpy ifft, max error {err:.2e}')
        fres = np.array([tap_fresnel(a, k) for k in range(-m, m + 1)])
        err = float(np.abs(h - fres).max())
        check(err <= TOL_TAP_FRESNEL, f'{tag}: taps against Fresnel integrals, max error {err:.2e}')
        trunc = 1.0 - float(np.sum(np.abs(want) ** 2))
        check(abs(got['truncated'] - trunc) <= TOL_TRUNC,
              f'{tag}: truncated energy {got["truncated"]:.3e} (numpy {trunc:.3e})')
        check(abs(float(np.sum(np.abs(ref) ** 2)) - 1.0) <= TOL_ENERGY,
              f'{tag}: the all-pass has unit energy (numpy)')
        check(float(np.abs(h - h[::-1]).max()) <= 1e-12, f'{tag}: h_-k = h_k')


def cells(u, sigma, thr):
    edges = np.concatenate(([-np.inf], thr, [np.inf]))
    c = stats.norm.cdf((edges[None, :] - np.asarray(u)[:, None]) / sigma)
    return np.diff(c, axis=1)


def symbolwise_exact(sigma, taps, thr, levels, mode):
    if mode == 'qam':
        symbols = [complex(i, q) for q in levels for i in levels]
    else:
        symbols = [complex(i, 0) for i in levels]
    M = len(symbols)
    d = int(np.argmax(np.abs(taps)))
    K = len(thr) + 1
    law = np.zeros((M, K * K))
    for window in itertools.product(range(M), repeat=len(taps)):
        u = sum(taps[i] * symbols[window[i]] for i in range(len(taps)))
        pi = cells([u.real], sigma, thr)[0]
        pq = cells([u.imag], sigma, thr)[0]
        law[window[d]] += np.outer(pq, pi).ravel() / M ** (len(taps) - 1)
    py = law.mean(axis=0)
    with np.errstate(divide='ignore', invalid='ignore'):
        t = np.where(law > 0, law * np.log2(law / py[None, :]), 0.0)
    return float(t.sum() / M)


for sigma, tap_text, thr, levels, mode in [
        (0.4, '0.9+0.1j,0.2-0.3j', [-1, 0, 1], [-1, 1], 'qam'),
        (0.3, '0.5+0.5j,0.4-0.2j,-0.1+0.15j', [-1.2, -0.6, 0, 0.6, 1.2], [-1, 1], 'qam'),
        (0.25, '0.2-0.3j,0.9+0.2j', [-2, -1, 0, 1, 2], [-3, -1, 1, 3], 'pam')]:
    taps = [complex(t.replace(' ', '')) for t in tap_text.split(',')]
    got = dump('rate', sigma, tap_text, ','.join(map(str, thr)), ','.join(map(str, levels)),
               mode, 20000, 3)
    exact = symbolwise_exact(sigma, taps, np.array(thr, float), levels, mode)
    tag = f'{mode} taps {tap_text}'
    check(abs(got['symbolwise'] - exact) <= TOL_EXACT,
          f'{tag}: symbol-by-symbol {got["symbolwise"]:.10f} = enumeration {exact:.10f}')
    M = len(levels) ** (2 if mode == 'qam' else 1)
    check(got['states'] == M ** (len(taps) - 1), f'{tag}: states = {M}^{len(taps) - 1}')
    check(got['rate'] <= got['unquantized'] + got['ci'] + got['unquantized_ci'],
          f'{tag}: quantized {got["rate"]:.4f} ≤ unquantized {got["unquantized"]:.4f}')
    check(got['symbolwise'] <= got['rate'] + got['ci'],
          f'{tag}: symbol-by-symbol {got["symbolwise"]:.4f} ≤ trellis {got["rate"]:.4f}')
    check(0 < got['rate'] <= math.log2(M) + got['ci'], f'{tag}: 0 < rate ≤ log2 {M}')



def biawgn_bits(sigma):
    """I(X;Y) of equiprobable ±1 in N(0, σ²), by quadrature (scipy.integrate.quad)."""
    def integrand(y):
        p1 = stats.norm.pdf(y, 1, sigma)
        p0 = stats.norm.pdf(y, -1, sigma)
        py = 0.5 * (p0 + p1)
        return 0.0 if p1 == 0 else p1 * math.log2(p1 / py)
    return integrate.quad(integrand, 1 - 40 * sigma, 1 + 40 * sigma, limit=400)[0]


# One tap of 1: QPSK with continuous output is two binary-input AWGN
# channels.
for sigma in (0.5, 0.8):
    got = dump('rate', sigma, '1', '0', '-1,1', 'qam', 40000, 17)
    exact = 2 * biawgn_bits(sigma)
    check(abs(got['unquantized'] - exact) <= got['unquantized_ci'],
          f'QPSK one tap, sigma {sigma}: unquantized {got["unquantized"]:.5f} ± '
          f'{got["unquantized_ci"]:.5f} covers 2·BI-AWGN {exact:.5f}')

sys.exit(1 if failures else 0)

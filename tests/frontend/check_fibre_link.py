#!/usr/bin/python3
"""check_fibre_link.py — the amplified fibre link of `quantcap design`
against outside references.

argv[1]: the quantcap program, argv[2]: scenarios/longhaul.ini. Each case runs `quantcap design --json` on a
gauss model whose SNR is set by the link, and reads the link's figures from
the JSON (osnr_db, snr_ase_db, snr_nli_db, launch_dbm).

  - OSNR rule of thumb for an amplified chain at 1550 nm in 0.1 nm:
    OSNR = 58 dB + P_ch - span loss - NF - 10 log10 N (common practice),
    to 0.1 dB;
  - the NLI coefficient eta (P_NLI = eta P^3) of the GN model's closed form
    against scipy.integrate.quad of the GN reference formula for one span
    (Poggiolini, J. Lightw. Technol. 30(24), 2012, eq. 1, with
    chi = 1): single channel and small WDM combs, centre channel;
  - the reach: `require --solve-for length-km` and `--solve-for spans` agree
    (length = spans x span length), and the demo study's reach grows with
    the ADC bits and is longer for 16-QAM than for 64-QAM (its sweep run
    thinned with --set).
Exits 1 on any mismatch.
"""
import json
import math
import os
import subprocess
import sys
import tempfile

from scipy import integrate

C0 = 299792458.0
TOL_RULE_DB = 0.1   # the rule's 58 dB rounds 57.95 dB (h nu 12.5 GHz at 1550 nm)
TOL_GN_DB = 0.5     # closed form against the integral: the closed form's
                    # approximation (asinh of the integral over a rectangle,
                    # N_ch^(2Rs/df) for the gaps); 0.28 dB seen at worst here
QUAD_REL = 1e-7     # relative accuracy asked of scipy's quad

failures = []


def run(exe, args):
    out = subprocess.run([exe, "design", "--json", "--model", "gauss", "--alphabet",
                          "qam:4", "--bits", "2"] + args,
                         capture_output=True, text=True, check=False)
    if out.returncode != 0:
        print(out.stderr)
        sys.exit(1)
    return json.loads(out.stdout)


def check(label, got, want, tol):
    ok = abs(got - want) <= tol
    print(f"{'ok  ' if ok else 'FAIL'} {label}: quantcap {got:.4f}, reference {want:.4f}")
    if not ok:
        failures.append(label)


def gnrf_eta(span_km, loss_db_km, d, gamma, lam_nm, rs, nch, df):
    """eta of one span by the GN reference formula, integrated numerically:
    G_NLI(0) = 16/27 gamma^2 int int G(f1) G(f2) G(f1 + f2) |rho|^2 df1 df2,
    rho = (1 - exp(-a L) exp(j 4 pi^2 b2 L f1 f2)) / (a - j 4 pi^2 b2 f1 f2),
    a the power attenuation; flat spectra G = P/Rs over each channel."""
    lam = lam_nm * 1e-9
    a = loss_db_km * math.log(10.0) / 10.0 / 1e3
    length = span_km * 1e3
    b2 = abs(d * 1e-6 * lam ** 2 / (2.0 * math.pi * C0))
    g = gamma * 1e-3
    bands = [((i - (nch - 1) / 2) * df - rs / 2, (i - (nch - 1) / 2) * df + rs / 2)
             for i in range(nch)]

    def rho2(f1, f2):
        x = 4.0 * math.pi ** 2 * b2 * f1 * f2
        num = 1.0 - math.exp(-a * length) * complex(math.cos(x * length), math.sin(x * length))
        return abs(num / complex(a, -x)) ** 2

    def inner(f2):
        total = 0.0
        for lo1, hi1 in bands:
            for lo3, hi3 in bands:  # f1 + f2 inside a channel
                lo, hi = max(lo1, lo3 - f2), min(hi1, hi3 - f2)
                if hi > lo:
                    v, _ = integrate.quad(rho2, lo, hi, args=(f2,),
                                          points=[0.0] if lo < 0.0 < hi else None,
                                          limit=400, epsabs=0.0, epsrel=QUAD_REL)
                    total += v
        return total

    total = 0.0
    for lo, hi in bands:
        v, _ = integrate.quad(inner, lo, hi, points=[0.0] if lo < 0.0 < hi else None,
                              limit=400, epsabs=0.0, epsrel=QUAD_REL)
        total += v
    # P = 1 W: G = 1/Rs; P_NLI = G_NLI(0) Rs
    return 16.0 / 27.0 * g * g * total / rs ** 3 * rs


def main():
    exe = sys.argv[1]
    # OSNR rule of thumb (linear link: gamma 0, launch power given)
    for p, span, loss, nf, n in [(0, 80, 0.2, 5, 20), (3, 100, 0.22, 4.5, 10),
                                 (-2, 60, 0.25, 6, 1), (1, 50, 0.2, 5.5, 100)]:
        j = run(exe, ["--span-km", str(span), "--loss-db-km", str(loss), "--nf-db", str(nf),
                      "--spans", str(n), "--launch-dbm", str(p), "--gamma", "0",
                      "--symbol-rate", "32e9"])
        want = 58.0 + p - span * loss - nf - 10.0 * math.log10(n)
        check(f"OSNR rule {p} dBm, {n} x {span} km, NF {nf} dB", j["osnr_db"], want,
              TOL_RULE_DB)
    # GN closed form against the GN reference formula, one span
    for nch, df_ghz, rs, d in [(1, 50, 32e9, 17.0), (3, 50, 32e9, 17.0),
                               (5, 37.5, 32e9, 17.0), (3, 75, 64e9, 4.0)]:
        args = ["--span-km", "80", "--spans", "1", "--nf-db", "5", "--launch-dbm", "0",
                "--chromatic-dispersion", str(d), "--symbol-rate", str(rs),
                "--channels", str(nch)]
        if nch > 1:
            args += ["--channel-spacing-ghz", str(df_ghz)]
        j = run(exe, args)
        p = 1e-3 * 10.0 ** (j["launch_dbm"] / 10.0)
        eta = p / 10.0 ** (j["snr_nli_db"] / 10.0) / p ** 3
        want = gnrf_eta(80, 0.2, d, 1.3, 1550, rs, nch, df_ghz * 1e9)
        check(f"GN eta, {nch} ch at {df_ghz} GHz, {rs / 1e9:g} GBd, D {d} (dB)",
              10.0 * math.log10(eta), 10.0 * math.log10(want), TOL_GN_DB)
    # reach: length-km and spans are the same question
    link = ["--model", "gauss", "--alphabet", "qam:16", "--bits", "4", "--span-km", "80",
            "--nf-db", "5", "--symbol-rate", "32e9", "--target", "ngmi=0.8", "--json"]
    req = {}
    for key in ("length-km", "spans"):
        out = subprocess.run([exe, "require", "--solve-for", key, f"--{key}",
                              "10" if key == "spans" else "800"] + link,
                             capture_output=True, text=True, check=False)
        if out.returncode != 0:
            print(out.stderr)
            sys.exit(1)
        req[key] = json.loads(out.stdout)["required"]
    check("reach by length-km and by spans (km)", req["length-km"], 80.0 * req["spans"],
          1e-4 * req["length-km"])
    # the demo study, thinned: reach grows with bits; 16-QAM reaches farther
    with tempfile.TemporaryDirectory() as tmp:
        out = subprocess.run([exe, "sweep", sys.argv[2], "--output-dir", tmp, "--no-plots",
                              "--set", "length-km=800", "--set", "bits=3,6"],
                             capture_output=True, text=True, check=False)
        if out.returncode != 0:
            print(out.stderr)
            sys.exit(1)
        with open(os.path.join(tmp, "results.json"), encoding="utf-8") as f:
            points = json.load(f)
    points = points["points"] if isinstance(points, dict) else points
    reach = {}
    for p in points:
        reach[(p["alphabet"], p["result"]["bits"])] = p["result"]["required"]
    for a in ("qam16", "qam64"):
        ok = reach[(a, 6)] > reach[(a, 3)]
        print(f"{'ok  ' if ok else 'FAIL'} demo {a}: reach {reach[(a, 3)]:.0f} km at 3 bits, "
              f"{reach[(a, 6)]:.0f} km at 6 bits")
        if not ok:
            failures.append(f"demo reach {a}")
    ok = reach[("qam16", 6)] > reach[("qam64", 6)]
    print(f"{'ok  ' if ok else 'FAIL'} demo: 16-QAM reaches farther than 64-QAM")
    if not ok:
        failures.append("demo 16-QAM against 64-QAM")
    if failures:
        print(f"{len(failures)} mismatches")
        sys.exit(1)


main()

#!/usr/bin/python3
"""Numerical extremes of `quantcap design`: SNR from -40 to +400 dB and
noise down to sigma = 1e-300 (the noiseless limit), photon counts from
1e-3 to 1e4 per slot, large alphabets and fine grids of 2^16 cells. Every
run must succeed and its JSON must hold no NaN, Inf or null (except fields
null by their documented meaning: the SNR of models that define none, an
undefined SNR penalty beside the note saying why, a limit flag that is not
set), the certified upper bound must be >= the rate, the rates must stay
within their information limits exactly, as the library holds them
(0 <= rate <= log2 min(levels, cells), unquantized <= log2 levels, rate <=
unquantized rate by the data-processing inequality, loss >= 0), and rates
must be monotone where theory says so. Each argument: the worse channel is the better one followed by a
random monotone map of its output, so a threshold quantizer of the worse
output is a mixture of threshold quantizers of the better one, and I(X;Q)
is convex in the channel for a fixed input law (Cover & Thomas, Elements
of Information Theory, 2nd ed., Thm 2.7.4): the best threshold quantizer
of the better channel does at least as well.
  - in SNR at fixed bits, Gaussian noise: y -> y + independent noise;
  - in photons per slot, Poisson counting at fixed background: binomial
    thinning of the counts plus independent Poisson background;
  - in bits at fixed SNR for the MI-optimal quantizer: merging cells.

Usage: check_extremes.py PATH/TO/quantcap
Prints one line per run and a last line "extremes: N passed, N failed"."""
import json
import math
import os
import subprocess
import sys
import tempfile
import time

QC = sys.argv[1] if len(sys.argv) > 1 else None
TOL_BOUND = 1e-12   # upper bound vs rate, both from the same sums
TOL_LIMIT = 1e-9    # log2(min(levels, cells)) and data processing, bits
TOL_MONO = 1e-9     # monotone sequences, bits (the design tolerance)
TOL_NOISELESS = 1e-12  # bits: a noiseless rate against log2 of the distinct levels
NO_SNR_MODELS = {"poisson", "apd", "apd-gauss", "preamp", "table"}
PHOTON_MODELS = {"poisson", "apd", "apd-gauss"}  # models declaring detected photons

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from checklib import Tally  # noqa: E402

tally = Tally()
check = tally.check


def reject_constant(name):
    raise ValueError(f"non-finite number {name} in JSON")


def allowed_nulls(j):
    """Top-level fields that are null by their documented meaning, not
    because a number came out NaN or infinite (docs/alphabets.md sec. 7,
    src/quantcap.h qc_design_result)."""
    allowed = {"rate_limited_by", "unquantized_limited_by"}  # null: no limit applied
    if j.get("snr_penalty_db") is None and isinstance(j.get("snr_penalty_note"), str):
        allowed.add("snr_penalty_db")                 # undefined, the note says why
    if j.get("snr_penalty_db") is not None:
        allowed.add("snr_penalty_note")               # defined: no note
    if j.get("model") in NO_SNR_MODELS:
        allowed |= {"operating_snr_db", "snr_penalty_db", "snr_definition"}       # the model defines no SNR
    if j.get("model") != "gauss" or j.get("noiseless_limit"):
        allowed.add("shaping_gap_db")                 # gauss only, and not noiseless
    if j.get("quantizer") != "lloyd-max":
        allowed.add("mse")                            # Lloyd-Max only
        allowed |= {"design_converged", "design_residual"}  # Lloyd-Max only
    if j.get("blocklength") is None:                  # no blocklength asked
        allowed |= {"blocklength", "error_rate", "rate_at_blocklength_bits"}
    n = len(j.get("levels") or [])
    if n & (n - 1):                                   # not a power of 2
        allowed |= {"mi_bits", "gmi_bits", "labels", "pre_fec_ber", "q_factor_db", "ngmi"}
    ber = j.get("pre_fec_ber")
    if ber is not None and not 0 < ber < 0.5:         # Q-factor of BER in (0, 1/2) only
        allowed.add("q_factor_db")
    if j.get("symbol_rate") is None:                  # no symbol rate: no Gb/s
        allowed |= {"symbol_rate", "rate_gbps", "net_rate_gbps"}
    if j.get("fec") is None:                          # no FEC code asked
        allowed |= {"fec", "fec_closes", "fec_margin", "net_bits", "net_rate_gbps"}
    if j.get("model") not in PHOTON_MODELS:           # the model counts no photons
        allowed |= {"photons_per_symbol", "bits_per_photon", "photons_per_bit"}
    if not (j.get("rate_bits") or 0) > 0:             # photons per bit of a zero rate
        allowed.add("photons_per_bit")
    return allowed


def nulls(value, path=""):
    """Paths of null values anywhere in a JSON value."""
    if value is None:
        return [path or "(root)"]
    if isinstance(value, dict):
        return [p for k, v in value.items() for p in nulls(v, f"{path}.{k}" if path else k)]
    if isinstance(value, list):
        return [p for i, v in enumerate(value) for p in nulls(v, f"{path}[{i}]")]
    return []


def design(label, args):
    """Run one design; check the per-run properties; return its JSON."""
    t0 = time.monotonic()
    p = subprocess.run([QC, "design", *args, "--json"], capture_output=True, text=True)
    dt = time.monotonic() - t0
    if p.returncode != 0:
        check(False, f"{label}: exit {p.returncode}: {p.stderr.strip()}")
        return None
    try:
        j = json.loads(p.stdout, parse_constant=reject_constant)
    except ValueError as e:
        check(False, f"{label}: output is not finite JSON ({e})")
        return None
    bad = [k for k in nulls(j) if k not in allowed_nulls(j)]
    check(not bad, f"{label}: null (non-finite) fields {bad}")
    rate, upper = j["rate_bits"], j["upper_bound_bits"]
    unq, unq_err = j["unquantized_bits"], j["unquantized_error_bits"]
    nlev, cells = len(j["levels"]), j["cells"]
    dims = j.get("dimensions") or 1                   # QAM: rates per complex symbol
    limit = dims * math.log2(min(nlev, cells))
    check(rate >= 0.0, f"{label}: rate {rate} >= 0")
    check(upper >= rate - TOL_BOUND, f"{label}: upper bound {upper} >= rate {rate}")
    check(rate <= limit, f"{label}: rate {rate} <= log2 min(levels, cells) = {limit}")
    check(unq <= dims * math.log2(nlev), f"{label}: unquantized {unq} <= log2 levels")
    check(rate <= unq, f"{label}: rate {rate} <= unquantized {unq} (data processing)")
    check(j["loss_bits"] >= 0.0, f"{label}: loss {j['loss_bits']} >= 0")
    th = j["thresholds"]
    check(len(th) == cells - 1, f"{label}: {len(th)} thresholds for {cells} cells")
    check(all(a < b for a, b in zip(th, th[1:])), f"{label}: thresholds strictly increasing")
    law = j["input_distribution"]
    check(abs(sum(law) - 1.0) <= 1e-12 * len(law) and min(law) >= 0.0, f"{label}: input law")
    print(f"  {label:48s} rate {rate:.12f} bit  upper {upper:.12f}  unq {unq:.12f}  {dt:5.2f} s")
    return j


def channel_and_capacity(label, levels, sigma, thresholds):
    """The transition matrix of a large alphabet (finite, rows summing to
    1) and the certified capacity of that matrix."""
    t0 = time.monotonic()
    p = subprocess.run([QC, "channel", "--model", "gauss", "--sigma", repr(sigma),
                        "--levels", ",".join(map(str, levels)),
                        "--thresholds", ",".join(map(str, thresholds)), "--json"],
                       capture_output=True, text=True)
    if p.returncode != 0:
        check(False, f"{label}: channel exit {p.returncode}: {p.stderr.strip()}")
        return
    try:
        j = json.loads(p.stdout, parse_constant=reject_constant)
    except ValueError as e:
        check(False, f"{label}: channel output is not finite JSON ({e})")
        return
    check(not nulls(j), f"{label}: channel null (non-finite) fields {nulls(j)[:5]}")
    rows = j["matrix"]
    check(len(rows) == len(levels) and all(len(r) == len(thresholds) + 1 for r in rows),
          f"{label}: matrix is {len(levels)} x {len(thresholds) + 1}")
    check(all(abs(sum(r) - 1.0) <= 1e-9 and min(r) >= 0.0 for r in rows),
          f"{label}: rows are probability laws")
    with tempfile.NamedTemporaryFile("w", suffix=".txt", delete=False) as f:
        for r in rows:
            f.write(" ".join(repr(v) for v in r) + "\n")
        path = f.name
    try:
        p = subprocess.run([QC, "capacity", path, "--json"], capture_output=True, text=True)
    finally:
        os.unlink(path)
    if p.returncode != 0:
        check(False, f"{label}: capacity exit {p.returncode}: {p.stderr.strip()}")
        return
    try:
        c = json.loads(p.stdout, parse_constant=reject_constant)
    except ValueError as e:
        check(False, f"{label}: capacity output is not finite JSON ({e})")
        return
    check(not nulls(c), f"{label}: capacity null (non-finite) fields {nulls(c)[:5]}")
    cap, upper = c["capacity_bits"], c["upper_bound_bits"]
    limit = math.log2(len(thresholds) + 1)
    check(0.0 <= cap <= limit + TOL_LIMIT, f"{label}: 0 <= capacity {cap} <= log2 cells")
    check(upper >= cap - TOL_BOUND, f"{label}: upper bound {upper} >= capacity {cap}")
    print(f"  {label:48s} capacity {cap:.12f} bit  upper {upper:.12f}  "
          f"{time.monotonic() - t0:5.2f} s")


def monotone(label, rates):
    for (a, ra), (b, rb) in zip(rates, rates[1:]):
        if ra is not None and rb is not None:
            check(rb >= ra - TOL_MONO, f"{label}: rate falls from {ra} at {a} to {rb} at {b}")


def main():
    if not QC:
        sys.exit(__doc__)
    t0 = time.monotonic()

    # Gaussian noise, 4-PAM: SNR from -40 to +80 dB at fixed bits.
    snrs = [-40, -30, -20, -10, 0, 10, 20, 30, 40, 60, 80, 120, 200, 300, 400]
    for bits in (1, 3):
        rates = []
        for snr in snrs:
            j = design(f"gauss pam:4 snr {snr:+d} dB bits {bits}",
                       ["--model", "gauss", "--snr-db", str(snr), "--alphabet", "pam:4",
                        "--bits", str(bits)])
            rates.append((f"{snr} dB", j and j["rate_bits"]))
        monotone(f"gauss pam:4 bits {bits}: rate in SNR", rates)
    # Capacity objective (input law optimized by the engine, certified
    # upper bound above the rate).
    rates = []
    for snr in snrs:
        j = design(f"gauss pam:4 snr {snr:+d} dB bits 2 capacity",
                   ["--model", "gauss", "--snr-db", str(snr), "--alphabet", "pam:4",
                    "--bits", "2", "--objective", "capacity"])
        rates.append((f"{snr} dB", j and j["rate_bits"]))
    monotone("gauss pam:4 bits 2 capacity: rate in SNR", rates)
    for s in ("1e-3", "1e4"):
        design(f"poisson signal {s} upam:4 bits 2 capacity",
               ["--model", "poisson", "--signal", s, "--background", "0.1",
                "--alphabet", "upam:4", "--bits", "2", "--objective", "capacity"])
    # Rate in bits at fixed SNR for the optimal quantizer.
    for snr in (-40, 10, 80):
        rates = []
        for bits in range(1, 7):
            j = design(f"gauss pam:4 snr {snr:+d} dB bits {bits}",
                       ["--model", "gauss", "--snr-db", str(snr), "--alphabet", "pam:4",
                        "--bits", str(bits)])
            rates.append((f"{bits} bits", j and j["rate_bits"]))
        monotone(f"gauss pam:4 snr {snr} dB: rate in bits", rates)

    # Photon counting: 1e-3 to 1e4 photons per slot, with and without
    # background, on-off keying and 4-level intensity.
    photons = ["1e-3", "1e-2", "1e-1", "1", "10", "100", "1e3", "1e4"]
    for background, alphabet, bits in (("0", "upam:2", "1"), ("0.1", "upam:4", "2"),
                                       ("1", "upam:4", "3")):
        rates = []
        for s in photons:
            j = design(f"poisson signal {s} bg {background} {alphabet} bits {bits}",
                       ["--model", "poisson", "--signal", s, "--background", background,
                        "--alphabet", alphabet, "--bits", bits])
            rates.append((f"{s} photons", j and j["rate_bits"]))
        monotone(f"poisson bg {background} {alphabet}: rate in photons", rates)
    # APD (exact and Gaussian approximation) and optical preamplifier at
    # the ends of the photon range.
    for s in ("1e-3", "1", "1e4"):
        for model in ("apd", "apd-gauss"):
            design(f"{model} signal {s} bits 3",
                   ["--model", model, "--signal", s, "--apd-gain", "20", "--apd-k", "0.02",
                    "--sigma-th", "100", "--levels", "0,1", "--bits", "3"])
        design(f"preamp 1 mode levels 0,{s} bits 3",
               ["--model", "preamp", "--modes", "1", "--levels", f"0,{s}", "--bits", "3"])
    design("gauss-sd tiny noise bits 3",
           ["--model", "gauss-sd", "--sigma0", "1e-6", "--a", "1e-6", "--levels", "0,1",
            "--bits", "3"])

    # Large alphabets (up to 4096 levels) and the finest grids (2^16 cells).
    # `design` rates 1024 levels; 4096 levels go through `channel` and
    # `capacity` (a 4096-level design takes about 10 s, most of it the
    # optimal strategy's dynamic programme; tests/bench/bench_lloyd.c).
    for alphabet, bits in (("pam:256", "8"), ("pam:1024", "10")):
        design(f"gauss {alphabet} snr 80 dB bits {bits} uniform",
               ["--model", "gauss", "--snr-db", "80", "--alphabet", alphabet, "--bits", bits,
                "--quantizer", "uniform"])
    levels = [2 * i - 4095 for i in range(4096)]  # pam:4096, E[x^2] = (M^2 - 1)/3
    energy = (4096 ** 2 - 1) / 3
    for snr in (-40, 80):
        sigma = math.sqrt(energy / 10 ** (snr / 10))
        thresholds = [t * 512 for t in range(-7, 8)]  # 16 cells
        channel_and_capacity(f"gauss pam:4096 snr {snr:+d} dB 16 cells", levels, sigma, thresholds)
    design("gauss pam:4 snr 20 dB bits 4 fine grid 65536",
           ["--model", "gauss", "--snr-db", "20", "--alphabet", "pam:4", "--bits", "4",
            "--fine-cells", "65536"])
    design("gauss pam:4 snr 20 dB bits 12 uniform",
           ["--model", "gauss", "--snr-db", "20", "--alphabet", "pam:4", "--bits", "12",
            "--quantizer", "uniform"])

    # Nearly noiseless: SNR up to 400 dB and sigma down to 1e-300. The
    # unquantized rate is the noiseless limit, log2 M for distinct levels
    # under a uniform law; the quantized rate reaches log2 min(M, cells).
    for label, args, want in (
            ("gauss pam:4 snr +400 dB bits 2", ["--model", "gauss", "--snr-db", "400",
                                                "--alphabet", "pam:4", "--bits", "2"], 2.0),
            ("gauss pam:4 snr +400 dB bits 1", ["--model", "gauss", "--snr-db", "400",
                                                "--alphabet", "pam:4", "--bits", "1"], 1.0),
            ("gauss pam:4 snr +400 dB bits 2 capacity",
             ["--model", "gauss", "--snr-db", "400", "--alphabet", "pam:4", "--bits", "2",
              "--objective", "capacity"], 2.0),
            ("gauss pam:4 snr +400 dB bits 2 gmi",
             ["--model", "gauss", "--snr-db", "400", "--alphabet", "pam:4", "--bits", "2",
              "--objective", "gmi"], 2.0),
            ("gauss pam:4 snr +400 dB bits 2 uniform",
             ["--model", "gauss", "--snr-db", "400", "--alphabet", "pam:4", "--bits", "2",
              "--quantizer", "uniform"], 2.0),
            ("gauss pam:4 snr +400 dB bits 2 lloyd-max",
             ["--model", "gauss", "--snr-db", "400", "--alphabet", "pam:4", "--bits", "2",
              "--quantizer", "lloyd-max"], 2.0),
            ("gauss qam:16 snr +400 dB bits 2", ["--model", "gauss", "--snr-db", "400",
                                                 "--alphabet", "qam:16", "--bits", "2"], 4.0),
            ("gauss pam:2 sigma 1e-10 bits 1", ["--model", "gauss", "--sigma", "1e-10",
                                                "--alphabet", "pam:2", "--bits", "1"], 1.0),
            ("gauss pam:2 sigma 1e-100 bits 1", ["--model", "gauss", "--sigma", "1e-100",
                                                 "--alphabet", "pam:2", "--bits", "1"], 1.0),
            ("gauss pam:4 sigma 1e-300 bits 2", ["--model", "gauss", "--sigma", "1e-300",
                                                 "--alphabet", "pam:4", "--bits", "2"], 2.0),
            ("gauss-sd sigma0 1e-300 levels 0,1 bits 2",
             ["--model", "gauss-sd", "--sigma0", "1e-300", "--levels", "0,1", "--bits", "2"],
             1.0),
            ("gauss-sd sigma0 1e-300 a 1e-300 levels 0,1,2 bits 2",
             ["--model", "gauss-sd", "--sigma0", "1e-300", "--a", "1e-300",
              "--levels", "0,1,2", "--bits", "2"], math.log2(3)),
            ("poisson signal 1e12 upam:2 bits 1", ["--model", "poisson", "--signal", "1e12",
                                                   "--alphabet", "upam:2", "--bits", "1"],
             1.0)):
        j = design(label, args)
        if j:
            check(abs(j["rate_bits"] - want) <= TOL_NOISELESS,
                  f"{label}: rate {j['rate_bits']} is the noiseless {want} bit")
            check(j["snr_penalty_db"] is None,
                  f"{label}: no SNR penalty at saturation ({j['snr_penalty_db']})")

    passed = tally.count - len(tally.failures)
    print(f"{tally.count} checks in {time.monotonic() - t0:.1f} s")
    print(f"extremes: {passed} passed, {len(tally.failures)} failed")
    return 1 if tally.failures else 0


if __name__ == "__main__":
    sys.exit(main())

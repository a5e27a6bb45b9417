#!/usr/bin/python3
"""Probabilistic shaping beyond the additive Gaussian channel with PAM
levels: the exponential law p(x) = exp(-nu x)/Z on intensity levels at the
uniform law's average optical power E[x] (signal-dependent Gaussian,
photon counting, optically pre-amplified detection), and the
Maxwell-Boltzmann law behind a converter with a fixed full scale. Each
shaped rate is recomputed here from the reported levels, law and
thresholds, and each shaping gain re-derived as the power the uniform law
needs for the shaped rate (the bad-input paths are cases in
tests/bad_inputs/cases.tsv).

Usage: check_shaping_models.py PATH/TO/quantcap
References: the law of most entropy at a given mean on x >= 0 is
exponential (Cover and Thomas, Elements of Information Theory, 2nd ed.,
2006, sec. 12.1), its law, entropy and mean in closed form (numpy); nu at
an entropy by scipy.optimize.brentq; cell probabilities from
scipy.stats.norm (Gaussian laws, the converter's noise added in power)
and scipy.stats.ncx2 / chi2 (pre-amplified detection: Y = ncx2(2m, 2x)/2,
Humblet and Azizoglu, J. Lightw. Technol. 9(11), 1991); the gain as the
root of the uniform law's rate against its power (scipy.optimize.brentq)."""
import json
import math
import os
import subprocess
import sys

import numpy as np
from scipy import stats
from scipy.optimize import brentq

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from checklib import Tally  # noqa: E402

QC = sys.argv[1]
tally = Tally()
check = tally.check

TOL_LAW = 1e-14      # a law in closed form, double rounding
TOL_ENTROPY = 1e-12  # entropy and mean in closed form (bits, level units)
TOL_RATE = 1e-10     # a finite sum against scipy's CDFs (bits)
TOL_NU_REL = 1e-9    # nu from a target entropy (root finders on both sides)
TOL_GAIN_DB = 1e-5   # the gain's root (1e-6 dB) against scipy's (rate to 1e-10)


def design_json(*args):
    p = subprocess.run([QC, "design", *args, "--json"], capture_output=True, text=True)
    check(p.returncode == 0, f"design {' '.join(args)}: exit {p.returncode} ({p.stderr.strip()})")
    try:
        return json.loads(p.stdout)
    except ValueError:
        return {}


def exp_law(x, nu):
    w = np.exp(-nu * (x - x.min()))
    return w / w.sum()


def entropy_bits(p):
    p = p[p > 0]
    return float(-(p * np.log2(p)).sum())


def mi_bits(law, below):
    """I(X;Y) of a law and P(Y < t_k | x_i) (rows: levels, columns: thresholds)."""
    n = below.shape[0]
    cdf = np.hstack([np.zeros((n, 1)), below, np.ones((n, 1))])
    w = np.diff(cdf, axis=1)
    q = law @ w
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.where(w > 0, w * np.log2(w / q), 0.0)
    return float(law @ t.sum(axis=1))


def gain_db(rate_uniform_at, target, per_db):
    """The dB of power at which the uniform law's rate reaches the target:
    levels scaled by 10^(g / per_db) (10: optical power, 20: E[x^2])."""
    f = lambda g: rate_uniform_at(10 ** (g / per_db)) - target  # noqa: E731
    step = 0.25 if f(0.0) < 0 else -0.25  # toward the target, nearest crossing first
    g = 0.0
    while f(g + step) * f(0.0) > 0 and abs(g) < 20:
        g += step
    return brentq(f, min(g, g + step), max(g, g + step), xtol=1e-10, rtol=1e-14)


# ---- signal-dependent Gaussian, fixed thresholds: law, power, rate, gain ----
S0, A, NU = 0.05, 0.02, 1.2
T = np.array([0.15, 0.5, 0.85])
x = np.arange(4) / 3.0  # upam:4
r = design_json("--model", "gauss-sd", "--sigma0", str(S0), "--a", str(A), "--alphabet",
                "upam:4", "--thresholds", "0.15,0.5,0.85", "--shaping", f"mb:{NU}")
p = exp_law(x, NU)
check(np.max(np.abs(np.array(r.get("input_distribution", [])) - p)) <= TOL_LAW,
      f"gauss-sd mb:{NU}: the law exp(-nu x)/Z (numpy) {p}")
tally.near("gauss-sd: H(X) (bits)", r.get("entropy_bits"), entropy_bits(p), TOL_ENTROPY)
scale = 0.5 / float(p @ x)
tally.near("gauss-sd: scale E_unif[x] / E_nu[x]", r.get("shaping_scale"), scale, TOL_ENTROPY)
tally.near("gauss-sd: average optical power kept at the uniform law's 0.5",
           r.get("average_level"), 0.5, TOL_ENTROPY)
check(r.get("shaping_power") == "E[x]", f"shaping_power E[x] ({r.get('shaping_power')})")


def gauss_sd_rate(levels, law):
    sd = np.sqrt(S0 ** 2 + A * levels)
    return mi_bits(law, stats.norm.cdf((T[None, :] - levels[:, None]) / sd[:, None]))


tally.near("gauss-sd: shaped rate (scipy.stats.norm)", r.get("rate_bits"),
           gauss_sd_rate(scale * x, p), TOL_RATE)
u = np.full(4, 0.25)
tally.near("gauss-sd: uniform rate at the same optical power (scipy)",
           r.get("uniform_rate_bits"), gauss_sd_rate(x, u), TOL_RATE)
g = gain_db(lambda a: gauss_sd_rate(a * x, u), r["rate_bits"], 10.0)
tally.near("gauss-sd: shaping gain in optical dB (scipy brentq)", r.get("shaping_gain_db"), g,
           TOL_GAIN_DB)
# thresholds held where the uniform law's levels were: the shaped law moves
# its levels off them and loses (a negative gain)
check(r.get("shaping_gain_db", 0) < 0, f"gauss-sd mb:{NU}, fixed thresholds: gain < 0 "
      f"({r.get('shaping_gain_db')})")

# nu = 0 is the uniform law, levels as given, gain 0
z = design_json("--model", "gauss-sd", "--sigma0", str(S0), "--a", str(A), "--alphabet",
                "upam:4", "--thresholds", "0.15,0.5,0.85", "--shaping", "mb:0")
check(z.get("input_distribution") == [0.25] * 4 and z.get("shaping_gain_db") == 0.0,
      "gauss-sd mb:0: the uniform law, gain 0 dB")
tally.near("gauss-sd mb:0: rate (scipy)", z.get("rate_bits"), gauss_sd_rate(x, u), TOL_RATE)

# best: at least the uniform law, with a gain >= 0
b = design_json("--model", "gauss-sd", "--sigma0", str(S0), "--a", str(A), "--alphabet",
                "upam:4", "--bits", "3", "--shaping", "best")
check(b.get("rate_bits", 0) >= b.get("uniform_rate_bits", 1) and b.get("shaping_gain_db", -1) >= 0,
      f"gauss-sd best: rate {b.get('rate_bits')} >= uniform {b.get('uniform_rate_bits')}, "
      f"gain {b.get('shaping_gain_db')} >= 0")

# ---- photon counting: the law by entropy -------------------------------------
x8 = np.arange(8) / 7.0
r = design_json("--model", "poisson", "--signal", "4", "--background", "0.2", "--alphabet",
                "upam:8", "--bits", "2", "--shaping", "entropy:2.2")
nu_ref = brentq(lambda v: entropy_bits(exp_law(x8, v)) - 2.2, 0.0, 50.0, xtol=1e-15,
                rtol=1e-14)
tally.near("poisson entropy:2.2: nu (relative, scipy brentq)", r.get("shaping_nu", 0) / nu_ref,
           1.0, TOL_NU_REL)
tally.near("poisson entropy:2.2: H(X)", r.get("entropy_bits"), 2.2, TOL_ENTROPY)
tally.near("poisson: average level kept at 0.5", r.get("average_level"), 0.5, TOL_ENTROPY)
# the photons per symbol are the uniform law's: signal * E[x]
tally.near("poisson: photons per symbol = 4 * 0.5", r.get("photons_per_symbol"), 2.0, 1e-12)

# ---- pre-amplified detection, thresholds designed for the rate ---------------
MODES, NU = 2, 0.08
xp = np.array([0.0, 8.0, 16.0, 24.0])
r = design_json("--model", "preamp", "--modes", str(MODES), "--levels", "0,8,16,24",
                "--bits", "2", "--shaping", f"mb:{NU}")
p = exp_law(xp, NU)
scale = 12.0 / float(p @ xp)
TP = np.array(r.get("thresholds", []))


def preamp_rate(levels, law):
    below = np.array([[stats.ncx2.cdf(2 * t, 2 * MODES, 2 * lv) if lv > 0
                       else stats.chi2.cdf(2 * t, 2 * MODES) for t in TP] for lv in levels])
    return mi_bits(law, below)


check(np.max(np.abs(np.array(r.get("input_distribution", [])) - p)) <= TOL_LAW,
      "preamp: the law exp(-nu x)/Z (numpy)")
tally.near("preamp: scale keeps E[x] = 12", r.get("shaping_scale"), scale, TOL_ENTROPY)
# scipy's ncx2 is accurate to ~1e-12 relative here (the model's own note)
tally.near("preamp: shaped rate at its thresholds (scipy.stats.ncx2)", r.get("rate_bits"),
           preamp_rate(scale * xp, p), 1e-9)
# the gain, by its definition: the uniform law with its levels (the signal
# energies) raised by the gain in optical dB, thresholds designed again,
# reaches the shaped rate
gp = r.get("shaping_gain_db")
check(gp is not None and gp > 0, f"preamp mb:{NU}: a positive gain ({gp})")
if gp is not None:
    lv = ",".join(repr(float(v)) for v in xp * 10 ** (gp / 10))
    v = design_json("--model", "preamp", "--modes", str(MODES), "--levels", lv, "--bits", "2")
    tally.near("preamp: the uniform law at + gain optical dB reaches the shaped rate",
               v.get("rate_bits"), r["rate_bits"], 1e-6)

# ---- a converter with a fixed full scale on the Gaussian channel -------------
SIG, NU = 0.05, 1.0
xc = np.array([-0.6, -0.2, 0.2, 0.6])
r = design_json("--model", "gauss", "--sigma", str(SIG), "--levels", "-0.6,-0.2,0.2,0.6",
                "--bits", "4", "--full-scale", "-1,1", "--enob", "3.5", "--shaping", f"mb:{NU}")
w = np.exp(-NU * xc * xc)
p = w / w.sum()
scale = math.sqrt(float(np.mean(xc * xc)) / float(p @ (xc * xc)))
tc = np.array(r.get("thresholds", []))
noise = r.get("converter", {}).get("noise_rms", float("nan"))
sd = math.hypot(SIG, noise)  # the converter's noise adds in power to the channel's


def conv_rate(levels, law):
    return mi_bits(law, stats.norm.cdf((tc[None, :] - levels[:, None]) / sd))


check(len(tc) == 15 and tc[0] == -0.875 and tc[-1] == 0.875,
      f"converter: 15 transitions at the full scale's steps ({tc})")
tally.near("converter: scale keeps E[x^2]", r.get("shaping_scale"), scale, TOL_ENTROPY)
check(r.get("shaping_power") == "E[x^2]", "converter on gauss: shaping_power E[x^2]")
tally.near("converter: shaped rate (scipy.stats.norm)", r.get("rate_bits"),
           conv_rate(scale * xc, p), TOL_RATE)
g = gain_db(lambda a: conv_rate(a * xc, np.full(4, 0.25)), r["rate_bits"], 20.0)
tally.near("converter: shaping gain in SNR dB (scipy brentq)", r.get("shaping_gain_db"), g,
           TOL_GAIN_DB)

# ---- require on a physical intensity link: the shaped law needs less light --
# by the definition of the gain, the uniform law's required power minus the
# shaped law's is the shaping gain at the shaped law's required power
LINK = ["--target", "rate=1.5", "--solve-for", "received-dbm", "--range", "-55,-30", "--model",
        "gauss-sd", "--alphabet", "upam:4", "--bits", "3", "--responsivity", "0.8",
        "--thermal-density", "10e-12", "--bandwidth", "10e9"]
req = {}
for name, extra in (("shaped", ["--shaping", "best"]), ("uniform", [])):
    p = subprocess.run([QC, "require", "--json", *LINK, *extra], capture_output=True, text=True)
    check(p.returncode == 0, f"require {name}: exit {p.returncode} ({p.stderr.strip()})")
    req[name] = json.loads(p.stdout) if p.returncode == 0 else {}
if req["shaped"] and req["uniform"]:
    gain = req["shaped"].get("design", {}).get("shaping_gain_db")
    tally.near("require: uniform minus shaped required power = the shaping gain (dB)",
               req["uniform"]["required"] - req["shaped"]["required"],
               gain if gain is not None else float("nan"), 1e-4)

print(f"{tally.count} checks, {len(tally.failures)} failed")
sys.exit(1 if tally.failures else 0)

/* incgamma.h — regularized incomplete gamma functions and the Poisson
 * term with relative accuracy for large parameters (used by `preamp` and
 * `poisson`). Internal. */
#ifndef QC_INCGAMMA_H
#define QC_INCGAMMA_H

/* −stirlerr(a) − bd0(a, t) of Loader's saddle-point form for a > 0,
 * t > 0: ln(t^a e^{−t}/Γ(a+1)) + ½ ln(2πa). */
double qc_loader_exponent(double a, double t);

/* ln(t^a e^{−t}/Γ(a+1)) for a ≥ 0, t ≥ 0 (−∞ where the term is 0), in
 * Loader's saddle-point form, without the cancellation of
 * a·ln t − t − ln Γ(a+1) at large a and t. */
double qc_log_poisson_term(double a, double t);

/* P(a, t) (upper = 0) or Q(a, t) (upper = 1) for a ≥ 1, t ≥ 0, each
 * with relative accuracy in its own tail; NaN when the series or
 * continued fraction does not converge (not seen for a ≤ 1e8). */
double qc_gamma_inc(double a, double t, int upper);

/* Smallest a for qc_gamma_inc_uniform. */
#define QC_GAMMA_UNIFORM_MIN_A 1000.0

/* P(a, t) (upper = 0) or Q(a, t) (upper = 1) for a ≥ QC_GAMMA_UNIFORM_MIN_A,
 * t ≥ 0, by Temme's uniform asymptotic expansion: relative error about
 * 1e-15·(1 + d) in each tail, d = t − a − a·ln(t/a), at a fixed cost for
 * any a; NaN for a below the range. */
double qc_gamma_inc_uniform(double a, double t, int upper);

#endif

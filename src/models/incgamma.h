/* incgamma.h — regularized incomplete gamma functions and the Poisson
 * term with relative accuracy for large parameters (used by `preamp`).
 * Internal. */
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

#endif

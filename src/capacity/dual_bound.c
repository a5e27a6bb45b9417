/* dual_bound.c — the certified upper bound on capacity under an average
 * cost from the divergences at any output law (R. E. Blahut,
 * "Computation of channel capacity and rate-distortion functions", IEEE
 * Trans. IT 18(4), 1972, Thm 9):
 *     C(β) ≤ min_{s ≥ 0} max_x [D(P(·|x) ‖ q) − s·(c_x − β)],
 * a convex piecewise-linear function of s. Used by the multiplier search
 * (cost.c) and by the active-set solve (cost_newton.c) to certify the
 * law each of them finds. */
#include "capacity/engine.h"

#include <math.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_roots.h>

/* The lines d_x − s·(c_x − β) of the dual bound, split into the
 * envelope of those that fall with s (c_x > β) and of the others. */
typedef struct {
    const double *d, *c;
    double beta;
    size_t nx;
} dual_lines;

static void envelopes(const dual_lines *l, double s, double *fall, double *rise)
{
    *fall = -INFINITY;
    *rise = -INFINITY;
    for (size_t x = 0; x < l->nx; x++) {
        double v = l->d[x] - s * (l->c[x] - l->beta);
        if (l->c[x] > l->beta)
            *fall = fmax(*fall, v);
        else
            *rise = fmax(*rise, v);
    }
}

static double envelope_gap(double s, void *p)
{
    double fall, rise;
    envelopes(p, s, &fall, &rise);
    return fall - rise;
}

/* Upper bound min_{s ≥ 0} max_x [d_x − s·(c_x − β)] from divergences
 * d at some output law; *s_best receives the minimizing s. The
 * function is convex and piecewise linear, smallest where the falling
 * envelope meets the rising one: that crossing is bracketed by doubling
 * and found with GSL's Brent solver. Any s gives a valid bound, so a
 * solver failure only costs tightness. */
double ba_dual_bound(const double *d, const double *c, double beta, size_t nx,
                     double *s_best)
{
    dual_lines l = {d, c, beta, nx};
    double fall, rise, lo = 0.0, hi = 1.0;
    envelopes(&l, 0.0, &fall, &rise);
    *s_best = 0.0;
    if (fall <= rise)
        return rise;
    while (envelope_gap(hi, &l) > 0.0 && hi < 1e300) {
        lo = hi;
        hi *= 2.0;
    }
    gsl_root_fsolver *solver = gsl_root_fsolver_alloc(gsl_root_fsolver_brent);
    gsl_function fn = {envelope_gap, &l};
    if (solver && gsl_root_fsolver_set(solver, &fn, lo, hi) == GSL_SUCCESS) {
        for (int i = 0; i < 200; i++) {
            if (gsl_root_fsolver_iterate(solver) != GSL_SUCCESS)
                break;
            lo = gsl_root_fsolver_x_lower(solver);
            hi = gsl_root_fsolver_x_upper(solver);
            if (gsl_root_test_interval(lo, hi, 0.0, 1e-15) == GSL_SUCCESS)
                break;
        }
    }
    gsl_root_fsolver_free(solver);
    double best = INFINITY;
    const double cand[2] = {lo, hi};
    for (int k = 0; k < 2; k++) {
        envelopes(&l, cand[k], &fall, &rise);
        if (fmax(fall, rise) < best) {
            best = fmax(fall, rise);
            *s_best = cand[k];
        }
    }
    return best;
}

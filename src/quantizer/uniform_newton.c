/* uniform_newton.c — the full-scale range [a, b] of the uniform quantizer
 * by damped Newton steps on the exact gradient and curvature of
 * I(X;Y_q). The thresholds t_j = a + (b − a)·(j + 1)/K are linear in
 * (a, b), so with u_j = 1 − (j + 1)/K and v_j = (j + 1)/K the chain rule
 * gives the gradient (Σ u_j g_j, Σ v_j g_j) and the 2 × 2 Hessian
 * JᵀHJ from the exact gradient g and tridiagonal Hessian H of the rate in
 * the thresholds (qc_cell_mi_derivatives, refine.c). A step solves
 * (−JᵀHJ + μD) s = Jᵀg with D the magnitudes of the diagonal, μ raised
 * tenfold until the matrix is positive definite and the rate does not drop
 * (Levenberg–Marquardt; Moré, "The Levenberg–Marquardt algorithm:
 * implementation and theory", Springer LNM 630, 1978), lowered tenfold
 * after an accepted step. It stops as refine.c does: a step below
 * 10⁻¹¹ of the cell width, an undamped step of the exact curvature below
 * 10⁻⁶ of it (the next would be below 10⁻¹¹), or a rejected step below
 * 10⁻⁸ of it (rounding). One threshold (a + b)/2 is moved by shifting
 * both ends together, its spacing being the noise scale. A stationary
 * point of a smooth rate is reached in a handful of evaluations, where a
 * simplex on the two ends needs a hundred or more. */
#include "quantizer/quantizer.h"

#include <math.h>
#include <stdlib.h>

void qc_uniform_thresholds(double a, double b, size_t nt, double *t)
{
    const double K = (double)(nt + 1);
    for (size_t j = 0; j < nt; j++)
        t[j] = a + (b - a) * (double)(j + 1) / K;
}

/* Thresholds of the range [a, b] into t; 0 if they are not increasing. */
static int range_to_thresholds(double a, double b, size_t nt, double *t)
{
    qc_uniform_thresholds(a, b, nt, t);
    for (size_t j = 0; j < nt; j++)
        if (!isfinite(t[j]) || (j > 0 && !(t[j] > t[j - 1])))
            return 0;
    return nt > 0;
}

/* The gradient G and the negated Hessian A (A[0], A[1] = A[2], A[3]) of
 * the rate in (a, b) from its derivatives in the thresholds. */
static void project(size_t nt, const double *g, const double *hd, const double *ho,
                    double G[2], double A[4])
{
    const double K = (double)(nt + 1);
    G[0] = G[1] = 0.0;
    A[0] = A[1] = A[3] = 0.0;
    for (size_t j = 0; j < nt; j++) {
        const double v = (double)(j + 1) / K, u = 1.0 - v;
        G[0] += u * g[j];
        G[1] += v * g[j];
        A[0] -= u * u * hd[j];
        A[1] -= u * v * hd[j];
        A[3] -= v * v * hd[j];
        if (j + 1 < nt) {
            const double v2 = (double)(j + 2) / K, u2 = 1.0 - v2;
            A[0] -= 2.0 * u * u2 * ho[j];
            A[1] -= (u * v2 + u2 * v) * ho[j];
            A[3] -= 2.0 * v * v2 * ho[j];
        }
    }
    A[2] = A[1];
}

/* Solves (A + μD) s = G, D = diag(max(|A_ii|, 10⁻⁸·max|A_ii|)); 0 when
 * that matrix is not positive definite. With one threshold both ends take
 * the one step G_0/(A_00 + μD_00) (A and G then hold the derivatives
 * along that shift in every entry). */
static int damped_step(const double A[4], const double G[2], double mu, int shift,
                       double s[2])
{
    const double amax = fmax(fabs(A[0]), fabs(A[3]));
    if (shift) {
        const double m = A[0] + mu * fabs(A[0]);
        s[0] = s[1] = G[0] / m;
        return m > 0.0 && isfinite(s[0]);
    }
    const double m00 = A[0] + mu * fmax(fabs(A[0]), 1e-8 * amax);
    const double m11 = A[3] + mu * fmax(fabs(A[3]), 1e-8 * amax);
    const double det = m00 * m11 - A[1] * A[2];
    if (!(m00 > 0.0 && m11 > 0.0 && det > 0.0) || !isfinite(det))
        return 0;
    s[0] = (m11 * G[0] - A[1] * G[1]) / det;
    s[1] = (m00 * G[1] - A[2] * G[0]) / det;
    return isfinite(s[0]) && isfinite(s[1]);
}

qc_status qc_uniform_newton(qc_cell_mi *w, double scale, double *lo_end, double *hi_end,
                            double *mi_nats, size_t *evals, int *converged)
{
    const size_t nt = w->nt, nx = w->nlevels;
    *converged = 0;
    double *work = qc_malloc_array(6 * nt + nt * nx, sizeof *work);
    if (!work)
        return qc_fail(QC_ENOMEM, "out of memory for the range of %zu thresholds", nt);
    double *t = work, *tp = work + nt, *g = work + 2 * nt, *hd = work + 3 * nt;
    double *ho = work + 4 * nt, *F = work + 5 * nt, *f = work + 6 * nt;
    double a = *lo_end, b = *hi_end, mi = -INFINITY, mu = 0.0;
    const double h = QC_NEWTON_SLOPE_STEP * scale;
    qc_status st = QC_OK;
    if (!range_to_thresholds(a, b, nt, t))
        goto done;
    st = qc_cell_mi_eval(w, t, &mi, NULL);
    (*evals)++;
    int at_t = 1; /* the workspace holds the channel of t */
    for (size_t it = 0; st == QC_OK && it < QC_NEWTON_MAX_ITER; it++) {
        if (!at_t) {
            if ((st = qc_cell_mi_eval(w, t, &mi, NULL)) != QC_OK)
                break;
            (*evals)++;
            at_t = 1;
        }
        if (!qc_cell_mi_derivatives(w, t, h, g, hd, ho, f, F))
            break;
        double G[2], A[4], s[2];
        project(nt, g, hd, ho, G, A);
        if (nt == 1) {
            /* one threshold, (a + b)/2: both ends move together */
            G[0] = G[1] = G[0] + G[1];
            A[0] = A[1] = A[2] = A[3] = A[0] + 2.0 * A[1] + A[3];
        }
        const int newton = damped_step(A, G, 0.0, nt == 1, s); /* exact curvature */
        /* the cell width; one threshold: the noise scale, as refine.c */
        const double width = nt == 1 ? scale : (b - a) / (double)(nt + 1);
        int accepted = 0, quadratic = 0, stop = 0;
        for (int tries = 0; tries < QC_NEWTON_MAX_DAMP && !accepted && !stop; tries++) {
            if (!damped_step(A, G, mu, nt == 1, s)) {
                mu = mu > 0.0 ? 10.0 * mu : 1e-3;
                continue;
            }
            const double rel = fmax(fabs(s[0]), fabs(s[1])) / width;
            if (rel < QC_NEWTON_TOL) {
                *converged = stop = 1; /* the step is below the resolution */
                break;
            }
            double mip = -INFINITY;
            const int ordered = range_to_thresholds(a + s[0], b + s[1], nt, tp);
            if (ordered) {
                if ((st = qc_cell_mi_eval(w, tp, &mip, NULL)) != QC_OK)
                    break;
                (*evals)++;
                at_t = 0;
            }
            if (ordered && mip >= mi) {
                accepted = at_t = 1;
                quadratic = mu == 0.0 && newton && rel < QC_NEWTON_QUADRATIC;
                a += s[0];
                b += s[1];
                for (size_t j = 0; j < nt; j++)
                    t[j] = tp[j];
                mi = mip;
                mu *= 0.1;
            } else if (ordered && rel < QC_NEWTON_ROUNDING) {
                *converged = stop = 1; /* a tiny step lost to rounding */
            } else {
                mu = mu > 0.0 ? 10.0 * mu : 1e-3;
            }
        }
        if (st != QC_OK || stop || !accepted)
            break;
        if (quadratic) {
            *converged = 1;
            break;
        }
    }
    if (st == QC_OK && !at_t) { /* leave the workspace's channel at the result */
        st = qc_cell_mi_eval(w, t, &mi, NULL);
        (*evals)++;
    }
done:
    free(work);
    if (st == QC_OK) {
        *lo_end = a;
        *hi_end = b;
        *mi_nats = mi;
    }
    return st;
}

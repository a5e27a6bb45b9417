/* refine.c — local refinement of MI-optimal thresholds after the
 * coarse-to-fine dynamic programme, so that the design does not depend on
 * the grid. Continuous outputs: damped Newton steps (Levenberg–Marquardt;
 * Moré, "The Levenberg–Marquardt algorithm: implementation and theory",
 * Springer LNM 630, 1978) on the exact gradient of cell_mi.c and the
 * exact Hessian of I(X;Y_q), which is tridiagonal because ∂I/∂t_j involves
 * only t_{j−1}, t_j, t_{j+1}. With cell c = [t_{c−1}, t_c), P_c(x) its
 * probability given x, q_c = Σ_x r(x) P_c(x), f_j(x) = f(t_j|x),
 * F_j = Σ_x r(x) f_j(x) and L_c(x) = log(P_c(x)/q_c), differentiating
 * ∂I/∂t_j = Σ_x r(x) f_j(x) [L_j(x) − L_{j+1}(x)] once more gives
 *   ∂²I/∂t_j² = Σ_x r f'_j (L_j − L_{j+1}) + Σ_x r f_j² (1/P_j + 1/P_{j+1})
 *               − F_j² (1/q_j + 1/q_{j+1}),
 *   ∂²I/∂t_j∂t_{j+1} = −Σ_x r f_j f_{j+1} / P_{j+1} + F_j F_{j+1} / q_{j+1},
 * with f'_j = ∂f(y|x)/∂y at t_j: −(t_j − μ_x)·f_j(x)/σ_x² when the law
 * given x is Gaussian (QC_MODEL_GAUSSIAN_LAW; the workspace keeps μ_x and
 * 1/σ_x²), else a forward difference of the density (step 10⁻⁵ of the
 * noise scale; it only scales the step, the fixed point is that of the
 * exact gradient, and its relative error of about 10⁻⁵ still contracts
 * the error by that factor per step). One iteration costs one rate
 * evaluation and one density per threshold and level (two with the
 * forward difference); it stops
 * when a step falls below 10⁻¹¹ of the spacing, or after an undamped
 * Newton step (exact curvature of the right sign) below 10⁻⁶ of it, whose
 * successor would be below 10⁻¹¹. qc_refine_held takes the same steps
 * with the first and the last threshold held (their gradient and
 * coupling set to 0), which relocate.c uses to rate one slot. Count
 * outputs: integer coordinate search (pattern search, doubling steps). */
#include "quantizer/quantizer.h"

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_linalg.h>

#define NEWTON_WORK (1u << 22) /* iteration cap × thresholds × levels */
#define TRIAL_GRACE 1          /* iterations before a trial may be given up */
#define TRIAL_ROOM 4.0         /* × the predicted gain a trial must be within */
#define TRIAL_HOME 0.05        /* × spacing: a trial this near a known maximum ends */

/* Threshold j's share of qc_cell_mi_derivatives: the density f(t_j|x) of
 * the levels that reach t_j (qc_cell_mi_reach; the others add nothing)
 * into f[j·nx + x] (0 where it vanishes), g[j], hd[j] and F[j] = Σ_x r f;
 * 0 when g[j] or hd[j] is not finite. */
static int threshold_sums(const qc_cell_mi *w, const double *t, double h, size_t j,
                          double *g, double *hd, double *f, double *F)
{
    const size_t nx = w->nlevels, k = w->nt + 1;
    const qc_model_type *ty = qc_model_get_type(w->model);
    const double *P = w->channel->p, *q = w->q, *lr = w->lr, *r = w->input;
    double gj = 0.0, hj = 0.0, Fj = 0.0;
    size_t x0, x1;
    qc_cell_mi_reach(w, t[j], &x0, &x1);
    for (size_t x = x0; x < x1; x++) {
        double *fx = f + j * nx + x;
        *fx = 0.0;
        if (!(r[x] > 0.0) || !qc_cell_mi_inside(w, x, t[j]))
            continue;
        double d = ty->density(w->model, w->levels[x], t[j]);
        if (!(d > 0.0) || !isfinite(d))
            continue;
        double dp = w->mean ? -(t[j] - w->mean[x]) * w->inv_var[x] * d
                            : (ty->density(w->model, w->levels[x], t[j] + h) - d) / h;
        *fx = d;
        double dl = lr[x * k + j] - lr[x * k + j + 1];
        gj += r[x] * d * dl;
        hj += r[x] * (isfinite(dp) ? dp : 0.0) * dl;
        double pa = P[x * k + j], pb = P[x * k + j + 1];
        if (pa > 0.0)
            hj += r[x] * d * d / pa;
        if (pb > 0.0)
            hj += r[x] * d * d / pb;
        Fj += r[x] * d;
    }
    if (q[j] > 0.0)
        hj -= Fj * Fj / q[j];
    if (q[j + 1] > 0.0)
        hj -= Fj * Fj / q[j + 1];
    g[j] = gj;
    hd[j] = hj;
    F[j] = Fj;
    return isfinite(gj) && isfinite(hj);
}

/* ho[j − 1]: the coupling of thresholds j − 1 and j through cell j; only
 * the levels that reach both add to it (f of the others is 0 or unset). */
static void coupling(const qc_cell_mi *w, const double *t, size_t j, const double *f,
                     const double *F, double *ho)
{
    const size_t nx = w->nlevels, k = w->nt + 1;
    const double *P = w->channel->p, *q = w->q, *r = w->input;
    size_t a0, a1, b0, b1;
    qc_cell_mi_reach(w, t[j - 1], &a0, &a1);
    qc_cell_mi_reach(w, t[j], &b0, &b1);
    double off = 0.0;
    for (size_t x = a0 > b0 ? a0 : b0; x < a1 && x < b1; x++) {
        double d = f[j * nx + x];
        if (d > 0.0 && P[x * k + j] > 0.0)
            off += r[x] * f[(j - 1) * nx + x] * d / P[x * k + j];
    }
    ho[j - 1] = -off + (q[j] > 0.0 ? F[j - 1] * F[j] / q[j] : 0.0);
}

int qc_cell_mi_derivatives(const qc_cell_mi *w, const double *t, double h, double *g,
                           double *hd, double *ho, double *f, double *F)
{
    const size_t nt = w->nt;
    if (qc_parallel_worth(nt * w->nlevels) && qc_model_thread_safe(w->model)) {
        int finite = 1;
#pragma omp parallel for schedule(static) reduction(&& : finite)
        for (size_t j = 0; j < nt; j++)
            finite = threshold_sums(w, t, h, j, g, hd, f, F) && finite;
        if (!finite)
            return 0; /* densities beyond the range of doubles */
#pragma omp parallel for schedule(static)
        for (size_t j = 1; j < nt; j++)
            coupling(w, t, j, f, F, ho);
        return 1;
    }
    for (size_t j = 0; j < nt; j++) {
        if (!threshold_sums(w, t, h, j, g, hd, f, F))
            return 0;
        if (j > 0)
            coupling(w, t, j, f, F, ho);
    }
    return 1;
}

/* Solve (−H + μD) step = g, D = max(|H_jj|, 1e-8·max|H|); 0 if singular. */
static int damped_step(size_t nt, const double *hd, const double *ho, const double *g,
                       double mu, double hmax, double *a, double *e, double *rhs,
                       double *step)
{
    for (size_t j = 0; j < nt; j++) {
        a[j] = fabs(hd[j]) + mu * fmax(fabs(hd[j]), 1e-8 * hmax);
        rhs[j] = g[j];
        if (j + 1 < nt)
            e[j] = -ho[j];
    }
    if (nt == 1) {
        step[0] = rhs[0] / a[0];
        return a[0] > 0.0;
    }
    gsl_vector_view d = gsl_vector_view_array(a, nt);
    gsl_vector_view o = gsl_vector_view_array(e, nt - 1);
    gsl_vector_view b = gsl_vector_view_array(rhs, nt);
    gsl_vector_view x = gsl_vector_view_array(step, nt);
    return gsl_linalg_solve_symm_tridiag(&d.vector, &o.vector, &b.vector, &x.vector) ==
           GSL_SUCCESS;
}

/* A held threshold: no gradient, no coupling, a curvature of the
 * largest size (so that the system stays regular and its step is 0). */
static void hold_ends(size_t nt, const int held[2], double hmax, double *g, double *hd,
                      double *ho)
{
    for (int end = 0; end < 2; end++) {
        if (!held[end])
            continue;
        size_t j = end ? nt - 1 : 0;
        g[j] = 0.0;
        hd[j] = -(hmax > 0.0 ? hmax : 1.0);
        if (nt > 1)
            ho[end ? nt - 2 : 0] = 0.0;
    }
}

/* The Newton iterations of qc_refine_trial; held[0] and held[1] keep the
 * first and the last threshold where they are; at most `steps` of them
 * (0: as many as convergence takes). */
static qc_status refine(qc_cell_mi *w, double scale, double target, const double *homes,
                        size_t nhomes, const int held[2], size_t steps, double *t,
                        double *mi_nats, size_t *iterations)
{
    qc_gsl_init();
    const size_t nt = w->nt, nx = w->nlevels;
    if (iterations)
        *iterations = 0;
    double *work = qc_malloc_array(10 * nt + nt * nx, sizeof *work);
    if (!work)
        return qc_fail(QC_ENOMEM, "out of memory for refining %zu thresholds", nt);
    double *g = work, *tp = work + nt, *hd = work + 2 * nt, *ho = work + 3 * nt;
    double *a = work + 4 * nt, *e = work + 5 * nt, *rhs = work + 6 * nt;
    double *step = work + 7 * nt, *sp = work + 8 * nt, *F = work + 9 * nt;
    double *f = work + 10 * nt;
    double mi, mu = 0.0;
    const double h = QC_NEWTON_SLOPE_STEP * scale;
    qc_status st = qc_cell_mi_eval(w, t, &mi, NULL);
    int at_t = 1; /* the workspace holds the channel of t */
    size_t maxit = NEWTON_WORK / (nt * nx);
    maxit = maxit < 8 ? 8 : maxit > QC_NEWTON_MAX_ITER ? QC_NEWTON_MAX_ITER : maxit;
    if (steps > 0 && steps < maxit)
        maxit = steps;
    for (size_t it = 0; st == QC_OK && it < maxit; it++) {
        if (!at_t && (st = qc_cell_mi_eval(w, t, &mi, NULL)) != QC_OK)
            break;
        at_t = 1;
        if (!qc_cell_mi_derivatives(w, t, h, g, hd, ho, f, F))
            break;
        double hmax = 0.0;
        for (size_t j = 0; j < nt; j++)
            hmax = fmax(hmax, fabs(hd[j]));
        hold_ends(nt, held, hmax, g, hd, ho);
        for (size_t j = 0; j < nt; j++) {
            double s = INFINITY;
            if (j > 0)
                s = fmin(s, t[j] - t[j - 1]);
            if (j + 1 < nt)
                s = fmin(s, t[j + 1] - t[j]);
            sp[j] = isfinite(s) ? s : scale;
        }
        if (!(hmax > 0.0) || !isfinite(hmax))
            break;
        if (it >= TRIAL_GRACE && isfinite(target)) {
            /* the Newton model's remaining gain ½·gᵀ(−H)⁻¹g, with room */
            double pred = 0.0;
            if (damped_step(nt, hd, ho, g, 0.0, hmax, a, e, rhs, step))
                for (size_t j = 0; j < nt; j++)
                    pred += 0.5 * g[j] * step[j];
            /* a Newton model without a finite prediction (singular
             * curvature) after the grace iterations: far from any maximum */
            if (!isfinite(pred) || (pred >= 0.0 && mi + TRIAL_ROOM * pred < target))
                break;
        }
        int accepted = 0, quadratic = 0, newton = 1;
        for (size_t j = 0; j < nt; j++)
            newton &= hd[j] < 0.0; /* the curvature is the exact Hessian's */
        double rel = 0.0;
        for (int tries = 0; tries < QC_NEWTON_MAX_DAMP && !accepted; tries++) {
            int ordered = damped_step(nt, hd, ho, g, mu, hmax, a, e, rhs, step);
            rel = 0.0;
            for (size_t j = 0; j < nt && ordered; j++) {
                tp[j] = t[j] + step[j];
                rel = fmax(rel, fabs(step[j]) / sp[j]);
                if (!isfinite(tp[j]) || (j > 0 && !(tp[j] > tp[j - 1])))
                    ordered = 0;
            }
            if (ordered && rel < QC_NEWTON_TOL)
                break; /* converged: the step is below the resolution */
            double mip = -INFINITY;
            if (ordered) {
                if ((st = qc_cell_mi_eval(w, tp, &mip, NULL)) != QC_OK)
                    break;
                at_t = 0;
            }
            if (ordered && mip >= mi) {
                accepted = 1;
                quadratic = mu == 0.0 && newton && rel < QC_NEWTON_QUADRATIC;
                memcpy(t, tp, nt * sizeof *t);
                mi = mip;
                at_t = 1;
                mu *= 0.1;
            } else if (ordered && rel < QC_NEWTON_ROUNDING) {
                break; /* a tiny step lost to rounding: nothing left to gain */
            } else {
                mu = mu > 0.0 ? 10.0 * mu : 1e-3;
            }
        }
        if (st != QC_OK)
            break;
        if (iterations)
            (*iterations)++;
        if (!accepted || rel < QC_NEWTON_TOL || quadratic)
            break;
        /* beside a local maximum already known: the trial would end there */
        int near = 0;
        for (size_t k = 0; k < nhomes && !near; k++) {
            const double *home = homes + k * nt;
            near = 1;
            for (size_t j = 0; j < nt && near; j++)
                near = fabs(t[j] - home[j]) <= TRIAL_HOME * sp[j];
        }
        if (near)
            break;
    }
    if (st == QC_OK && !at_t) /* leave the workspace's channel at the result */
        st = qc_cell_mi_eval(w, t, &mi, NULL);
    if (st == QC_OK && mi_nats)
        *mi_nats = mi;
    free(work);
    return st;
}

qc_status qc_refine_continuous(qc_cell_mi *w, double scale, double *t, double *mi_nats,
                               size_t *iterations)
{
    static const int free_ends[2] = {0, 0};
    return refine(w, scale, -INFINITY, NULL, 0, free_ends, 0, t, mi_nats, iterations);
}

qc_status qc_refine_trial(qc_cell_mi *w, double scale, double target, const double *homes,
                          size_t nhomes, double *t, double *mi_nats, size_t *iterations)
{
    static const int free_ends[2] = {0, 0};
    return refine(w, scale, target, homes, nhomes, free_ends, 0, t, mi_nats, iterations);
}

qc_status qc_refine_held(qc_cell_mi *w, double scale, int hold_first, int hold_last,
                         size_t steps, double *t, double *mi_nats, size_t *iterations)
{
    const int held[2] = {hold_first, hold_last};
    if (w->nt <= (size_t)(hold_first != 0) + (size_t)(hold_last != 0)) { /* nothing to move */
        if (iterations)
            *iterations = 0;
        return qc_cell_mi_eval(w, t, mi_nats, NULL);
    }
    return refine(w, scale, -INFINITY, NULL, 0, held, steps, t, mi_nats, iterations);
}

#define COUNT_SWEEPS 200

qc_status qc_refine_counts(qc_cell_mi *w, double *t, double *mi_nats,
                           size_t *iterations)
{
    const size_t nt = w->nt;
    double best;
    qc_status st = qc_cell_mi_eval(w, t, &best, NULL);
    if (st != QC_OK)
        return st;
    size_t sweep = 0;
    for (int improved = 1; improved && sweep < COUNT_SWEEPS; sweep++) {
        improved = 0;
        for (size_t j = 0; j < nt; j++) {
            for (int dir = -1; dir <= 1; dir += 2) {
                for (double step = 1.0;; step *= 2.0) {
                    double lower = j > 0 ? t[j - 1] + 1.0 : 1.0;
                    double upper = j + 1 < nt ? t[j + 1] - 1.0 : INFINITY;
                    double old = t[j], cand = old + dir * step;
                    if (cand < lower || cand > upper || !(cand < 9e15))
                        break;
                    t[j] = cand;
                    double v;
                    st = qc_cell_mi_eval(w, t, &v, NULL);
                    if (st != QC_OK)
                        return st;
                    if (v > best + 1e-15 * fmax(1.0, best)) {
                        best = v;
                        improved = 1;
                    } else {
                        t[j] = old;
                        break;
                    }
                }
            }
        }
    }
    if (iterations)
        *iterations = sweep;
    return qc_cell_mi_eval(w, t, mi_nats, NULL);
}

/* refine.c — local refinement of MI-optimal thresholds after the
 * fine-grid dynamic programme, so that the design does not depend on the
 * grid. Continuous outputs: quasi-Newton ascent (GSL multimin vector_bfgs2,
 * Fletcher's BFGS with the analytic gradient of cell_mi.c; Fletcher,
 * Practical Methods of Optimization, 1987) on log-gap coordinates
 *   t_0 = c + s·u_0,  t_j = t_{j−1} + s·exp(u_j),
 * which keep the thresholds strictly increasing; then Newton steps on the
 * gradient alone, whose Hessian is tridiagonal (∂I/∂t_j involves only
 * t_{j−1}, t_j, t_{j+1}) and is estimated by differencing the analytic
 * gradient with three interleaved perturbations (Curtis, Powell & Reid,
 * J. Inst. Maths Applics 13, 1974). The Newton stage does not need I to
 * resolve changes below rounding, so the thresholds settle to ~1e-10 of
 * their spacing where the BFGS line search stops near 1e-7. Count
 * outputs: integer coordinate search (pattern search, doubling steps). */
#include "quantizer/quantizer.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_linalg.h>
#include <gsl/gsl_multimin.h>

#define REFINE_STEP 0.1      /* first trial step in u */
#define REFINE_LINE_TOL 0.1  /* line-search tolerance advised for bfgs2 */
#define REFINE_GRAD_TOL 1e-13 /* nats per unit of u */
#define REFINE_STALL 25       /* iterations without a 1e-15 relative gain */
#define REFINE_WORK (1u << 23) /* iteration cap × thresholds × levels */
#define NEWTON_MAX_ITER 50
#define NEWTON_WORK (1u << 22) /* iteration cap × thresholds × levels */
#define NEWTON_MAX_DAMP 12     /* damping increases per Newton iteration */
#define NEWTON_FD_STEP 1e-7    /* difference step, relative to the spacing */
#define NEWTON_TOL 1e-11       /* stop when steps fall below this × spacing */

typedef struct {
    qc_cell_mi *w;
    size_t nt;
    double c, s;
    double *t, *gt, *best_t;
    double best;
} refine_ctx;

/* Thresholds of u; 0 when they are not finite and strictly increasing. */
static int to_thresholds(refine_ctx *r, const gsl_vector *u)
{
    r->t[0] = r->c + r->s * gsl_vector_get(u, 0);
    if (!isfinite(r->t[0]))
        return 0;
    for (size_t j = 1; j < r->nt; j++) {
        r->t[j] = r->t[j - 1] + r->s * exp(gsl_vector_get(u, j));
        if (!isfinite(r->t[j]) || !(r->t[j] > r->t[j - 1]))
            return 0;
    }
    return 1;
}

/* −I and its gradient in u. Infeasible or failing points get −I = +1
 * (worse than any quantizer, I ≥ 0) and a zero gradient, so the line
 * search backs off. */
static void neg_mi_fdf(const gsl_vector *u, void *p, double *f, gsl_vector *g)
{
    refine_ctx *r = p;
    double mi;
    if (!to_thresholds(r, u) ||
        qc_cell_mi_eval(r->w, r->t, &mi, g ? r->gt : NULL) != QC_OK) {
        *f = 1.0;
        if (g)
            gsl_vector_set_zero(g);
        return;
    }
    if (mi > r->best) {
        r->best = mi;
        memcpy(r->best_t, r->t, r->nt * sizeof *r->t);
    }
    *f = -mi;
    if (!g)
        return;
    double suffix = 0.0;
    for (size_t j = r->nt; j-- > 0;) {
        suffix += r->gt[j];
        double dt = j == 0 ? r->s : r->s * exp(gsl_vector_get(u, j));
        gsl_vector_set(g, j, -dt * suffix);
    }
}

static double neg_mi_f(const gsl_vector *u, void *p)
{
    double f;
    neg_mi_fdf(u, p, &f, NULL);
    return f;
}

static void neg_mi_df(const gsl_vector *u, void *p, gsl_vector *g)
{
    double f;
    neg_mi_fdf(u, p, &f, g);
}

/* Tridiagonal Hessian of I at t by differencing the analytic gradient
 * g (at t) with three interleaved perturbations; diag (nt), off (nt − 1).
 * h, tp, gp: scratch of nt. */
static qc_status tridiagonal_hessian(qc_cell_mi *w, const double *t, const double *g,
                                     double *diag, double *off, double *h, double *tp,
                                     double *gp)
{
    const size_t nt = w->nt;
    for (size_t j = 0; j < nt; j++) {
        double sp = INFINITY;
        if (j > 0)
            sp = fmin(sp, t[j] - t[j - 1]);
        if (j + 1 < nt)
            sp = fmin(sp, t[j + 1] - t[j]);
        if (!isfinite(sp))
            sp = fmax(1e-3, fabs(t[j]));
        h[j] = NEWTON_FD_STEP * sp;
        diag[j] = off[j] = NAN;
    }
    for (size_t color = 0; color < 3 && color < nt; color++) {
        for (size_t j = 0; j < nt; j++)
            tp[j] = t[j] + ((j % 3 == color) ? h[j] : 0.0);
        double mip;
        qc_status st = qc_cell_mi_eval(w, tp, &mip, gp);
        if (st != QC_OK)
            return st;
        for (size_t j = color; j < nt; j += 3) {
            diag[j] = (gp[j] - g[j]) / h[j];
            /* H[j−1][j] and H[j][j+1] from column j, averaged with the
             * estimate from the neighbouring column */
            if (j > 0) {
                double v = (gp[j - 1] - g[j - 1]) / h[j];
                off[j - 1] = isnan(off[j - 1]) ? v : 0.5 * (off[j - 1] + v);
            }
            if (j + 1 < nt) {
                double v = (gp[j + 1] - g[j + 1]) / h[j];
                off[j] = isnan(off[j]) ? v : 0.5 * (off[j] + v);
            }
        }
    }
    return QC_OK;
}

/* Damped Newton (Levenberg–Marquardt; Moré, "The Levenberg–Marquardt algorithm", Springer,
 * 1978) on ∇I = 0 with the tridiagonal Hessian: solve (−H + μD) step = g,
 * D = max(|H_jj|, 1e-8·max|H|). A step is kept if it keeps the order and
 * I does not drop by more than rounding; otherwise μ grows. Thresholds in
 * flat far tails (H ≈ 0) are thus held by the damping instead of
 * stopping the polish. `work` holds 10·nt doubles. */
static qc_status newton_polish(qc_cell_mi *w, double *t, double *work,
                               size_t *iterations)
{
    const size_t nt = w->nt;
    double *g = work, *gp = work + nt, *tp = work + 2 * nt, *hd = work + 3 * nt;
    double *ho = work + 4 * nt, *a = work + 5 * nt, *e = work + 6 * nt;
    double *rhs = work + 7 * nt, *step = work + 8 * nt, *h = work + 9 * nt;
    double mi, mu = 0.0;
    qc_status st = qc_cell_mi_eval(w, t, &mi, g);
    if (st != QC_OK)
        return st;
    size_t maxit = NEWTON_WORK / (nt * w->nlevels);
    maxit = maxit < 8 ? 8 : maxit > NEWTON_MAX_ITER ? NEWTON_MAX_ITER : maxit;
    for (size_t it = 0; it < maxit; it++) {
        st = tridiagonal_hessian(w, t, g, hd, ho, h, tp, gp);
        if (st != QC_OK)
            return st;
        double hmax = 0.0;
        for (size_t j = 0; j < nt; j++)
            hmax = fmax(hmax, fabs(hd[j]));
        if (!(hmax > 0.0) || !isfinite(hmax))
            return QC_OK;
        int accepted = 0;
        double rel = 0.0;
        for (int tries = 0; tries < NEWTON_MAX_DAMP && !accepted; tries++) {
            for (size_t j = 0; j < nt; j++) {
                a[j] = -hd[j] + mu * fmax(fabs(hd[j]), 1e-8 * hmax);
                rhs[j] = g[j];
                if (j + 1 < nt)
                    e[j] = -ho[j];
            }
            int solved;
            if (nt == 1) {
                solved = a[0] > 0.0;
                step[0] = rhs[0] / a[0];
            } else {
                gsl_vector_view d = gsl_vector_view_array(a, nt);
                gsl_vector_view o = gsl_vector_view_array(e, nt - 1);
                gsl_vector_view b = gsl_vector_view_array(rhs, nt);
                gsl_vector_view x = gsl_vector_view_array(step, nt);
                solved = gsl_linalg_solve_symm_tridiag(&d.vector, &o.vector, &b.vector,
                                                       &x.vector) == GSL_SUCCESS;
            }
            int ordered = solved;
            rel = 0.0;
            for (size_t j = 0; j < nt && ordered; j++) {
                tp[j] = t[j] + step[j];
                rel = fmax(rel, fabs(step[j]) * NEWTON_FD_STEP / h[j]);
                if (!isfinite(tp[j]) || (j > 0 && !(tp[j] > tp[j - 1])))
                    ordered = 0;
            }
            double mip = -INFINITY;
            if (ordered) {
                st = qc_cell_mi_eval(w, tp, &mip, gp);
                if (st != QC_OK)
                    return st;
            }
            if (ordered && mip >= mi - 1e-14 * fmax(1.0, mi)) {
                accepted = 1;
                memcpy(t, tp, nt * sizeof *t);
                memcpy(g, gp, nt * sizeof *g);
                mi = mip;
                mu *= 0.1;
            } else {
                mu = mu > 0.0 ? 10.0 * mu : 1e-3;
            }
        }
        if (iterations)
            (*iterations)++;
        if (!accepted || rel < NEWTON_TOL)
            break;
    }
    return QC_OK;
}

qc_status qc_refine_continuous(qc_cell_mi *w, double *t, double *mi_nats,
                               size_t *iterations)
{
    qc_gsl_init();
    const size_t nt = w->nt;
    if (iterations)
        *iterations = 0;
    refine_ctx r = {w, nt, t[0], 0.0, NULL, NULL, NULL, -INFINITY};
    gsl_vector *u = NULL;
    gsl_multimin_fdfminimizer *m = NULL;
    r.t = qc_malloc_array(nt, sizeof *r.t);
    r.gt = qc_malloc_array(nt, sizeof *r.gt);
    r.best_t = qc_malloc_array(nt, sizeof *r.best_t);
    u = gsl_vector_alloc(nt);
    m = gsl_multimin_fdfminimizer_alloc(gsl_multimin_fdfminimizer_vector_bfgs2,
                                        nt);
    qc_status st = QC_OK;
    if (!r.t || !r.gt || !r.best_t || !u || !m) {
        st = qc_fail(QC_ENOMEM, "out of memory for refining %zu thresholds", nt);
        goto done;
    }
    /* The starting point is the reference the result never falls below. */
    st = qc_cell_mi_eval(w, t, &r.best, NULL);
    if (st != QC_OK)
        goto done;
    memcpy(r.best_t, t, nt * sizeof *t);
    if (nt >= 2) {
        r.s = (t[nt - 1] - t[0]) / (double)(nt - 1);
    } else {
        double lo, hi;
        qc_levels_support(w->model, w->levels, w->nlevels, &lo, &hi);
        r.s = (hi - lo) / 16.0;
    }
    if (!(r.s > 0.0) || !isfinite(r.s))
        goto done; /* nothing sensible to scale by: keep the start */
    gsl_vector_set(u, 0, 0.0);
    for (size_t j = 1; j < nt; j++)
        gsl_vector_set(u, j, log((t[j] - t[j - 1]) / r.s));
    gsl_multimin_function_fdf fdf = {neg_mi_f, neg_mi_df, neg_mi_fdf, nt, &r};
    if (gsl_multimin_fdfminimizer_set(m, &fdf, u, REFINE_STEP, REFINE_LINE_TOL) !=
        GSL_SUCCESS)
        goto done;
    size_t work = nt * w->nlevels;
    size_t maxit = REFINE_WORK / (work ? work : 1);
    if (maxit < 10)
        maxit = 10;
    if (maxit > 1000)
        maxit = 1000;
    size_t it = 0, stall = 0;
    double last = r.best;
    while (it < maxit) {
        it++;
        if (gsl_multimin_fdfminimizer_iterate(m) != GSL_SUCCESS)
            break; /* GSL_ENOPROG: no further progress possible */
        if (gsl_multimin_test_gradient(gsl_multimin_fdfminimizer_gradient(m),
                                       REFINE_GRAD_TOL) == GSL_SUCCESS)
            break;
        if (r.best > last + 1e-15 * fmax(1.0, last)) {
            last = r.best;
            stall = 0;
        } else if (++stall >= REFINE_STALL) {
            break;
        }
    }
    if (iterations)
        *iterations = it;
done:
    if (st == QC_OK) {
        memcpy(t, r.best_t, nt * sizeof *t);
        double *work = qc_malloc_array(10 * nt, sizeof *work);
        st = work ? newton_polish(w, t, work, iterations)
                  : qc_fail(QC_ENOMEM, "out of memory");
        free(work);
    }
    if (st == QC_OK) /* leave the workspace's channel at the result */
        st = qc_cell_mi_eval(w, t, mi_nats, NULL);
    free(r.t);
    free(r.gt);
    free(r.best_t);
    gsl_vector_free(u);
    gsl_multimin_fdfminimizer_free(m);
    return st;
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

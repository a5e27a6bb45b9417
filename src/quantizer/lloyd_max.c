/* lloyd_max.c — the minimum mean-square-error quantizer of the received
 * signal Y, whose law is the mixture Σ_x r(x) f(y|x) (Lloyd, "Least
 * squares quantization in PCM", IEEE Trans. IT 28(2), 1982; Max,
 * "Quantizing for minimum distortion", IRE Trans. IT 6(1), 1960).
 * Alternate the two optimality conditions: reconstruction points are the
 * conditional means of their cells, thresholds are midpoints between
 * neighbouring reconstruction points. Cell masses come from the model's
 * tail-accurate CDFs. For models whose output given x is Gaussian
 * (QC_MODEL_GAUSSIAN_LAW) the first and second moments have closed forms
 * in the density at the cell's ends (Stein's identity, Stein, Ann. Stat.
 * 9(6), 1981: ∫_a^b (y-μ) f = σ²(f(a) - f(b)), ∫_a^b (y-μ)² f =
 * σ²(P + (a-μ) f(a) - (b-μ) f(b))); for other models adaptive
 * Gauss–Kronrod quadrature (GSL QAGS) of the mixture density about the
 * cell's middle, so that narrow cells do not cancel. Count outputs sum
 * the probability masses instead and keep integer thresholds. Reported
 * next to the MI-optimal design, not used by it. */
#include "quantizer/quantizer.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_integration.h>
#include <gsl/gsl_linalg.h>

#define LLOYD_TOL 1e-12 /* largest residual, relative to the support width */
#define NEWTON_HALVINGS 4 /* step lengths 1, 1/2, 1/4, 1/8 before a Lloyd step */
#define MSE_SLACK 1e-12 /* relative rise of the error a step may show by rounding */
#define START_PER_CELL 8 /* grid points per cell tabulating the start */
#define START_MIN 4096
#define QUAD_LIMIT 1000
#define QUAD_EPSREL 1e-11
#define MASS_FLOOR 1e-18 /* probability below which a cell's moments may be
                            inaccurate (models resolve ~1e-16) */

typedef struct {
    const qc_model *m;
    const double *levels, *input;
    size_t nlevels;
    double anchor;
    int power;
    qc_dmc *cells;            /* cell masses per level */
    double *lo_s, *hi_s;      /* scratch for qc_discretize_sent */
    gsl_integration_workspace *w;
    double lo, hi;            /* support union */
    int gaussian;             /* closed-form moments (QC_MODEL_GAUSSIAN_LAW) */
    double *mu, *var;         /* per level: conditional mean and variance */
    double *fdens;            /* nt × nlevels: density at each threshold */
    double *fmix;             /* nt: mixture density at each threshold */
    double *mass;             /* K: cell masses under the mixture */
    double *work;             /* 4·nt: the tridiagonal system */
} lloyd;

static double mixture(const lloyd *L, double y)
{
    double f = 0.0;
    for (size_t i = 0; i < L->nlevels; i++)
        if (L->input[i] > 0.0)
            f += L->input[i] * qc_model_get_type(L->m)->density(L->m, L->levels[i], y);
    return f;
}

static double moment_integrand(double y, void *p)
{
    const lloyd *L = p;
    double d = y - L->anchor;
    return (L->power == 1 ? d : d * d) * mixture(L, y);
}

/* Mass, first and second moments about the anchor of cell [a, b) under
 * the mixture; *anchor is the middle of the cell clipped to the support. */
static qc_status cell_moments(lloyd *L, double a, double b, double mass,
                              double *anchor, double *m1, double *m2)
{
    double ca = fmax(a, L->lo), cb = fmin(b, L->hi);
    *m1 = *m2 = 0.0;
    if (qc_model_get_type(L->m)->output == QC_OUTPUT_COUNTS) {
        /* counts y with a ≤ y < b inside the support */
        double y0 = fmax(0.0, ceil(ca)), y1 = fmin(b - 1.0, floor(L->hi));
        L->anchor = *anchor = y1 >= y0 ? 0.5 * (y0 + y1) : (isfinite(a) ? a : b);
        double s1 = 0.0, s2 = 0.0;
        for (double y = y0; mass > 0.0 && y <= y1; y += 1.0) {
            double f = mixture(L, y), d = y - L->anchor;
            s1 += d * f;
            s2 += d * d * f;
        }
        *m1 = s1;
        *m2 = s2;
        return QC_OK;
    }
    if (!(cb > ca)) {
        *anchor = isfinite(a) ? (isfinite(b) ? 0.5 * (a + b) : a) : b;
        return QC_OK;
    }
    L->anchor = *anchor = 0.5 * (ca + cb);
    if (!(mass > 0.0))
        return QC_OK;
    gsl_function fn = {moment_integrand, L};
    double width = cb - ca, err;
    for (int p = 1; p <= 2; p++) {
        L->power = p;
        double scale = p == 1 ? width : width * width;
        double *out = p == 1 ? m1 : m2;
        /* Relative accuracy for cells with real mass; an absolute floor
         * at MASS_FLOOR, below what the models resolve, for the rest. */
        int rc = gsl_integration_qags(&fn, ca, cb, scale * (1e-14 * mass + MASS_FLOOR),
                                      QUAD_EPSREL, QUAD_LIMIT, L->w, out, &err);
        int usable = rc == GSL_SUCCESS || rc == GSL_EROUND ||
                     ((rc == GSL_EMAXITER || rc == GSL_ESING || rc == GSL_EDIVERGE) &&
                      isfinite(*out) && err <= scale * (1e-8 * mass + 100 * MASS_FLOOR));
        if (!usable)
            return qc_fail(QC_ENUMERIC,
                           "Lloyd-Max: moment %d of the cell [%g, %g) (mass %g) "
                           "failed: %s",
                           p, a, b, mass, gsl_strerror(rc));
    }
    return QC_OK;
}

/* Gaussian conditional laws: the moments about the anchor of cell c of t
 * (ends a, b) from the component masses and the densities at the ends
 * (Stein's identity), each component shifted by d = μ - anchor. */
static void gaussian_moments(const lloyd *L, const double *t, size_t nt, size_t c,
                             double *anchor, double *m1, double *m2)
{
    const size_t K = nt + 1;
    double a = c == 0 ? -INFINITY : t[c - 1], b = c == nt ? INFINITY : t[c];
    double ca = fmax(a, L->lo), cb = fmin(b, L->hi);
    *anchor = cb > ca ? 0.5 * (ca + cb)
                      : (isfinite(a) ? (isfinite(b) ? 0.5 * (a + b) : a) : b);
    double s1 = 0.0, s2 = 0.0;
    for (size_t x = 0; x < L->nlevels; x++) {
        double r = L->input[x], P = L->cells->p[x * K + c];
        if (!(r > 0.0) || !(P > 0.0))
            continue;
        double mu = L->mu[x], v = L->var[x], d = mu - *anchor;
        double fa = c == 0 ? 0.0 : L->fdens[(c - 1) * L->nlevels + x];
        double fb = c == nt ? 0.0 : L->fdens[c * L->nlevels + x];
        double ea = c == 0 ? 0.0 : (a - mu) * fa;
        double eb = c == nt ? 0.0 : (b - mu) * fb;
        double i1 = v * (fa - fb), i2 = fmax(0.0, v * (P + ea - eb));
        s1 += r * (i1 + d * P);
        s2 += r * (i2 + d * (2.0 * i1 + d * P));
    }
    *m1 = s1;
    *m2 = s2;
}

/* Reconstruction points (conditional means) of the cells of t, the
 * cell masses (L->mass) and the mixture density at each threshold
 * (L->fmix); a cell of zero mass keeps recon[c] if it is finite, else its
 * anchor. *mse (may be NULL) receives the mean-square error about those
 * points. */
static qc_status centroids(lloyd *L, const double *t, size_t nt, double *recon,
                           double *mse)
{
    const size_t K = nt + 1;
    const qc_model_type *ty = qc_model_get_type(L->m);
    qc_status st = qc_discretize_sent(L->m, L->levels, L->input, L->nlevels, t, nt, 0,
                                      L->lo_s, L->hi_s, NULL, L->cells);
    if (st != QC_OK)
        return st;
    if (L->gaussian) {
        for (size_t j = 0; j < nt; j++) {
            double f = 0.0;
            for (size_t x = 0; x < L->nlevels; x++) {
                double d = L->input[x] > 0.0 ? ty->density(L->m, L->levels[x], t[j]) : 0.0;
                L->fdens[j * L->nlevels + x] = d;
                f += L->input[x] * d;
            }
            L->fmix[j] = f;
        }
    } else if (ty->output != QC_OUTPUT_COUNTS) {
        for (size_t j = 0; j < nt; j++)
            L->fmix[j] = mixture(L, t[j]);
    }
    double err = 0.0;
    for (size_t c = 0; c < K; c++) {
        double mass = 0.0;
        for (size_t x = 0; x < L->nlevels; x++)
            mass += L->input[x] * L->cells->p[x * K + c];
        L->mass[c] = mass;
        double a = c == 0 ? -INFINITY : t[c - 1], b = c == nt ? INFINITY : t[c];
        double anchor, m1, m2;
        if (L->gaussian) {
            gaussian_moments(L, t, nt, c, &anchor, &m1, &m2);
        } else {
            st = cell_moments(L, a, b, mass, &anchor, &m1, &m2);
            if (st != QC_OK)
                return st;
        }
        if (mass > 0.0 && isfinite(m1)) {
            recon[c] = anchor + m1 / mass;
            err += fmax(0.0, m2 - m1 * m1 / mass);
        } else if (!isfinite(recon[c])) {
            recon[c] = anchor;
        }
    }
    if (mse)
        *mse = err;
    return QC_OK;
}

/* The Lloyd–Max residual: the largest distance of a threshold from the
 * midpoint of its two reconstruction points, r_j = t_j − (c_j + c_{j+1})/2. */
static double residual(const double *t, const double *recon, size_t nt, double *r)
{
    double worst = 0.0;
    for (size_t j = 0; j < nt; j++) {
        r[j] = t[j] - 0.5 * (recon[j] + recon[j + 1]);
        worst = fmax(worst, fabs(r[j]));
    }
    return worst;
}

/* New thresholds from reconstruction points; returns the largest move. */
static double midpoints(const lloyd *L, const double *recon, size_t nt, double *t)
{
    const int counts = qc_model_get_type(L->m)->output == QC_OUTPUT_COUNTS;
    double move = 0.0;
    for (size_t j = 0; j < nt; j++) {
        double v = 0.5 * (recon[j] + recon[j + 1]);
        if (counts) {
            v = fmax(1.0, ceil(v));
            if (j > 0 && v <= t[j - 1])
                v = t[j - 1] + 1.0;
        } else if (j > 0 && !(v > t[j - 1])) {
            v = nextafter(t[j - 1], INFINITY);
        }
        move = fmax(move, fabs(v - t[j]));
        t[j] = v;
    }
    return move;
}

/* The Newton step δ for the residual r at thresholds t (centroids, masses
 * and densities of t in recon, L->mass, L->fmix): J δ = −r with the
 * tridiagonal Jacobian of r_j = t_j − (c_j + c_{j+1})/2. A centroid
 * c = M1/P of a cell [a, b] moves with its ends as
 *   ∂c/∂b = f(b)(b − c)/P,   ∂c/∂a = f(a)(c − a)/P,
 * so row j has ∂r_j/∂t_{j−1} = −½ f(t_{j−1})(c_j − t_{j−1})/P_j,
 * ∂r_j/∂t_j = 1 − ½ f(t_j)[(t_j − c_j)/P_j + (c_{j+1} − t_j)/P_{j+1}] and
 * ∂r_j/∂t_{j+1} = −½ f(t_{j+1})(t_{j+1} − c_{j+1})/P_{j+1}; a cell without
 * mass has a fixed point. Solved by GSL's tridiagonal elimination. */
static int newton_step(lloyd *L, const double *t, const double *recon, const double *r,
                       size_t nt, double *delta)
{
    double *diag = L->work, *up = diag + nt, *down = up + nt, *rhs = down + nt;
    for (size_t j = 0; j < nt; j++) {
        double f = L->fmix[j], Pl = L->mass[j], Pr = L->mass[j + 1];
        double dl = Pl > 0.0 ? f * (t[j] - recon[j]) / Pl : 0.0;
        double dr = Pr > 0.0 ? f * (recon[j + 1] - t[j]) / Pr : 0.0;
        diag[j] = 1.0 - 0.5 * (dl + dr);
        if (j + 1 < nt)
            up[j] = Pr > 0.0 ? -0.5 * L->fmix[j + 1] * (t[j + 1] - recon[j + 1]) / Pr : 0.0;
        if (j > 0)
            down[j - 1] = Pl > 0.0 ? -0.5 * L->fmix[j - 1] * (recon[j] - t[j - 1]) / Pl : 0.0;
        rhs[j] = -r[j];
    }
    for (size_t j = 0; j < nt; j++)
        if (!isfinite(diag[j]) || !isfinite(rhs[j]) ||
            (j + 1 < nt && (!isfinite(up[j]) || !isfinite(down[j]))))
            return 0;
    if (nt == 1) {
        if (!(diag[0] != 0.0))
            return 0;
        delta[0] = rhs[0] / diag[0];
        return isfinite(delta[0]);
    }
    gsl_vector_view vd = gsl_vector_view_array(diag, nt);
    gsl_vector_view vu = gsl_vector_view_array(up, nt - 1);
    gsl_vector_view vl = gsl_vector_view_array(down, nt - 1);
    gsl_vector_view vb = gsl_vector_view_array(rhs, nt);
    gsl_vector_view vx = gsl_vector_view_array(delta, nt);
    if (gsl_linalg_solve_tridiag(&vd.vector, &vu.vector, &vl.vector, &vb.vector,
                                 &vx.vector) != GSL_SUCCESS)
        return 0;
    for (size_t j = 0; j < nt; j++)
        if (!isfinite(delta[j]))
            return 0;
    return 1;
}

/* ---- the companded start -------------------------------------------- */

/* nt thresholds at the quantiles of the point density λ ∝ f^{1/3} of the
 * mixture on the union of the supports (Panter & Dite 1951; Bennett
 * 1948): the high-resolution optimum, so that few rounds remain. f is
 * tabulated on an even grid, each level adding its density only over its
 * own support (linear in the levels for a wide alphabet); λ is inverted
 * by linear interpolation of its trapezoid cumulative, with a thousandth
 * of a uniform density mixed in so that it is strictly increasing. */
static qc_status companded_start(const lloyd *L, size_t nt, double *t)
{
    const qc_model_type *ty = qc_model_get_type(L->m);
    size_t m = START_PER_CELL * (nt + 1);
    m = m < START_MIN ? START_MIN : m;
    const double lo = L->lo, hi = L->hi, step = (hi - lo) / (double)(m - 1);
    double *lam = calloc(m, sizeof *lam), *cum = qc_malloc_array(m, sizeof *cum);
    if (!lam || !cum) {
        free(lam);
        free(cum);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    for (size_t x = 0; x < L->nlevels; x++) {
        if (!(L->input[x] > 0.0))
            continue;
        double a, b;
        ty->support(L->m, L->levels[x], &a, &b);
        size_t k0 = a > lo ? (size_t)floor((a - lo) / step) : 0;
        for (size_t k = k0; k < m && lo + step * (double)k <= b; k++)
            lam[k] += L->input[x] * ty->density(L->m, L->levels[x], lo + step * (double)k);
    }
    for (size_t k = 0; k < m; k++)
        lam[k] = isfinite(lam[k]) && lam[k] > 0.0 ? cbrt(lam[k]) : 0.0;
    qc_status st = qc_density_quantiles(lam, cum, m, lo, step, nt, "Lloyd-Max", t);
    free(lam);
    free(cum);
    return st;
}

/* Whether t holds strictly increasing finite values. */
static int increasing(const double *t, size_t nt)
{
    for (size_t j = 0; j < nt; j++)
        if (!isfinite(t[j]) || (j > 0 && !(t[j] > t[j - 1])))
            return 0;
    return 1;
}

qc_status qc_lloyd_max(const qc_model *model, const double *levels,
                       const double *input, size_t nlevels, size_t nt,
                       int warm_start, size_t max_rounds, double *t, double *recon,
                       qc_lloyd_report *rep)
{
    qc_gsl_init();
    const size_t K = nt + 1;
    lloyd L = {.m = model, .levels = levels, .input = input, .nlevels = nlevels, .power = 1};
    const qc_model_type *type = qc_model_get_type(model);
    const int counts = type->output == QC_OUTPUT_COUNTS;
    qc_lloyd_report local;
    if (!rep)
        rep = &local;
    *rep = (qc_lloyd_report){0, 0, 0, NAN, NAN, NAN};
    if (max_rounds == 0)
        max_rounds = QC_LLOYD_MAX_ROUNDS;
    double *trial = NULL, *trecon = NULL, *r = NULL, *delta = NULL;
    qc_levels_support(model, levels, nlevels, &L.lo, &L.hi);
    qc_status st = qc_dmc_alloc(nlevels, K, &L.cells);
    if (st != QC_OK)
        return st;
    L.lo_s = qc_malloc_array(K, sizeof *L.lo_s);
    L.hi_s = qc_malloc_array(K, sizeof *L.hi_s);
    L.w = gsl_integration_workspace_alloc(QUAD_LIMIT);
    L.fmix = qc_malloc_array(K, sizeof *L.fmix);
    L.mass = qc_malloc_array(K, sizeof *L.mass);
    L.work = qc_malloc_array(4 * K, sizeof *L.work);
    trial = qc_malloc_array(K, sizeof *trial);
    trecon = qc_malloc_array(K, sizeof *trecon);
    r = qc_malloc_array(K, sizeof *r);
    delta = qc_malloc_array(K, sizeof *delta);
    if (!L.lo_s || !L.hi_s || !L.w || !L.fmix || !L.mass || !L.work || !trial || !trecon ||
        !r || !delta) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    if ((type->properties & QC_MODEL_GAUSSIAN_LAW) && type->moments && !counts) {
        L.gaussian = 1;
        L.mu = qc_malloc_array(nlevels, sizeof *L.mu);
        L.var = qc_malloc_array(nlevels, sizeof *L.var);
        L.fdens = qc_malloc_array(nt > 0 ? nt * nlevels : 1, sizeof *L.fdens);
        if (!L.mu || !L.var || !L.fdens) {
            st = qc_fail(QC_ENOMEM, "out of memory");
            goto done;
        }
        for (size_t x = 0; x < nlevels; x++) {
            st = type->moments(model, levels[x], &L.mu[x], &L.var[x]);
            if (st != QC_OK)
                goto done;
        }
    }
    /* Start: the caller's thresholds; for counts the rounded quantiles of
     * ½·mixture + ½·uniform (fine_grid.c), so that every cell starts with
     * mass; else the companded start. */
    if (warm_start) {
        /* the caller's thresholds */
    } else if (counts) {
        double top = fmax(ceil(L.hi), (double)nt);
        size_t nb = 0;
        st = qc_count_quantiles(model, levels, input, nlevels, top, K, K, t, &nb);
        if (st != QC_OK)
            goto done;
        for (size_t j = nb; j < nt; j++) /* more cells than counts: empty */
            t[j] = (j > 0 ? t[j - 1] : 0.0) + 1.0;
    } else {
        st = companded_start(&L, nt, t);
        if (st != QC_OK)
            goto done;
    }
    for (size_t c = 0; c < K; c++)
        recon[c] = NAN;
    rep->tolerance = LLOYD_TOL * (L.hi - L.lo);
    double mse = NAN;
    size_t rounds = 1;
    st = centroids(&L, t, nt, recon, &mse);
    if (st != QC_OK)
        goto done;
    double res = residual(t, recon, nt, r);
    if (counts) {
        /* Lloyd's iteration on integer thresholds: done when no threshold
         * moves (the residual is then below one count). */
        while (rounds < max_rounds) {
            if (midpoints(&L, recon, nt, t) == 0.0) {
                rep->converged = 1;
                break;
            }
            rounds++;
            if ((st = centroids(&L, t, nt, recon, &mse)) != QC_OK)
                goto done;
        }
        res = residual(t, recon, nt, r);
        if (!rep->converged) { /* stopped by the cap: would t still move? */
            memcpy(trial, t, nt * sizeof *t);
            rep->converged = midpoints(&L, recon, nt, trial) == 0.0;
        }
    } else {
        /* Damped Newton on the residual, a Lloyd step where Newton fails
         * to lower the distortion. */
        while (!(res <= rep->tolerance) && rounds < max_rounds) {
            int moved = 0;
            if (newton_step(&L, t, recon, r, nt, delta)) {
                double lambda = 1.0;
                for (int h = 0; h < NEWTON_HALVINGS && rounds < max_rounds; h++, lambda *= 0.5) {
                    for (size_t j = 0; j < nt; j++)
                        trial[j] = t[j] + lambda * delta[j];
                    if (!increasing(trial, nt))
                        continue;
                    memcpy(trecon, recon, K * sizeof *recon);
                    double tmse;
                    rounds++;
                    if ((st = centroids(&L, trial, nt, trecon, &tmse)) != QC_OK)
                        goto done;
                    if (tmse <= mse + MSE_SLACK * fabs(mse)) {
                        memcpy(t, trial, nt * sizeof *t);
                        memcpy(recon, trecon, K * sizeof *recon);
                        mse = tmse;
                        moved = 1;
                        rep->newton++;
                        break;
                    }
                }
            }
            if (!moved && rounds < max_rounds) {
                midpoints(&L, recon, nt, t);
                rounds++;
                if ((st = centroids(&L, t, nt, recon, &mse)) != QC_OK)
                    goto done;
            }
            res = residual(t, recon, nt, r);
        }
        rep->converged = res <= rep->tolerance;
    }
    rep->rounds = rounds;
    rep->residual = res;
    rep->mse = mse;
done:
    qc_dmc_free(L.cells);
    free(L.lo_s);
    free(L.hi_s);
    gsl_integration_workspace_free(L.w);
    free(L.mu);
    free(L.var);
    free(L.fdens);
    free(L.fmix);
    free(L.mass);
    free(L.work);
    free(trial);
    free(trecon);
    free(r);
    free(delta);
    return st;
}

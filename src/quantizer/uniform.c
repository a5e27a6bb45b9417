/* uniform.c — the uniform (mid-rise ADC) quantizer with an optimized
 * full-scale range: K cells of equal width 2h/K on [c − h, c + h], the
 * two outer cells open (clipping). The objective is any rate of the
 * thresholds (MI or capacity of the quantized channel).
 *
 * Continuous outputs, K ≥ 3: c is the middle of the span of the mean
 * outputs of the levels (in the output's own units: electrons for the
 * APD models); h is scanned over 64 values up to the output support.
 * From a strict maximum of the scan, damped Newton steps on the exact
 * gradient and curvature move both ends c − h and c + h at once
 * (uniform_newton.c), which matters for asymmetric noise or level sets.
 * At an end of the scan, on a plateau (a saturated rate), or where Newton
 * cannot settle, the Nelder–Mead simplex adjusts both ends instead (GSL
 * nmsimplex2; Nelder & Mead, Computer Journal 7, 1965). A density with
 * kinks (measured tables: QC_MODEL_KINKED_DENSITY) gives a rate with
 * local maxima Newton would settle in; there GSL's Brent minimizer
 * refines h first and the simplex, whose first steps of 5 % of h explore
 * around it, follows.
 * K = 2: one threshold, whose position is scanned, then refined by
 * Newton steps (by GSL's Brent minimizer, Brent, Algorithms for
 * Minimization without Derivatives, 1973, for a density with kinks or
 * where Newton cannot settle).
 * Count outputs: integer thresholds t_1 + (j − 1)·Δ, searched over the
 * integers t_1 ≥ 1 and Δ ≥ 1 (exhaustively when small, else on a lattice
 * refined around its best point).
 * qc_uniform_tidy then chooses among equally good ranges: the half-width
 * and then the centre, each only where a step of 1/100 of a cell keeps
 * the rate within ε, moves to the rounded middle of its flat interval
 * (docs/methods.md §4, "Equally good thresholds"). */
#include "quantizer/quantizer.h"

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_min.h>
#include <gsl/gsl_multimin.h>

#define SCAN_POINTS 64
#define CENTRE_POINTS 33 /* centres scanned for a density with kinks */
#define BRENT_MAX_ITER 100
#define SIMPLEX_MAX_ITER 400
#define SIMPLEX_WORK ((size_t)1 << 22) /* iterations × thresholds × levels */
#define COUNT_BUDGET 20000 /* exhaustive integer search up to this many */
#define SEEN_SLOTS 8        /* rated thresholds remembered by a search */
#define BISECT_STEPS 200   /* halvings of an end of the flat interval (tidy) */
#define FLAT_PROBE 1e-2    /* flatness probe of the tidy: this share of a cell */
#define ROUND_SHARE 1e-4   /* its middle is rounded within this share of its
                              width (qc_simplest_within) */

typedef struct {
    qc_threshold_objective f;
    void *ctx;
    size_t nt;
    double *t;
    double best;
    double *best_t;
    size_t evals;
    qc_status st;
    double *seen_t;             /* SEEN_SLOTS × nt: thresholds rated last */
    double seen_v[SEEN_SLOTS];  /* their rates                            */
    size_t nseen, next_seen;
} search;

/* The rate of thresholds rated among the last SEEN_SLOTS, bit for bit
 * (1), or 0. Once Brent's bracket or the simplex has shrunk to a few ulps
 * they keep landing on points they have rated: over half of a sweep's
 * rate evaluations were such repeats. The objective is a function of the
 * thresholds alone, so the stored rate is the one it would give again. */
static int seen_rate(const search *s, double *value)
{
    for (size_t k = 0; k < s->nseen; k++)
        if (memcmp(s->seen_t + k * s->nt, s->t, s->nt * sizeof *s->t) == 0) {
            *value = s->seen_v[k];
            return 1;
        }
    return 0;
}

/* Rate of the thresholds in s->t; records the best seen. */
static qc_status eval_current(search *s, double *value)
{
    s->evals++;
    if (seen_rate(s, value))
        return QC_OK; /* already weighed against the best */
    qc_status st = s->f(s->ctx, s->t, s->nt, value);
    if (st != QC_OK)
        return st;
    memcpy(s->seen_t + s->next_seen * s->nt, s->t, s->nt * sizeof *s->t);
    s->seen_v[s->next_seen] = *value;
    s->next_seen = (s->next_seen + 1) % SEEN_SLOTS;
    if (s->nseen < SEEN_SLOTS)
        s->nseen++;
    if (*value > s->best) {
        s->best = *value;
        for (size_t j = 0; j < s->nt; j++)
            s->best_t[j] = s->t[j];
    }
    return QC_OK;
}

/* Rate of the uniform quantizer on [a, b]; -INFINITY for a range too
 * narrow to hold distinct thresholds. */
static qc_status eval_range(search *s, double a, double b, double *value)
{
    *value = -INFINITY;
    if (!(b > a))
        return QC_OK;
    qc_uniform_thresholds(a, b, s->nt, s->t);
    for (size_t j = 1; j < s->nt; j++)
        if (!(s->t[j] > s->t[j - 1]))
            return QC_OK;
    return eval_current(s, value);
}

typedef struct {
    search *s;
    double c;     /* centre (K ≥ 3) */
    int position; /* K = 2: the argument is the threshold itself */
} line;

/* −rate along the line: half-width h (K ≥ 3) or the threshold (K = 2).
 * A failure is recorded in s->st and reads as a bad point. */
static double line_neg(double x, void *p)
{
    line *l = p;
    double v;
    qc_status st;
    if (l->position) {
        l->s->t[0] = x;
        st = eval_current(l->s, &v);
    } else {
        st = eval_range(l->s, l->c - x, l->c + x, &v);
    }
    if (st != QC_OK) {
        if (l->s->st == QC_OK)
            l->s->st = st;
        return 1.0;
    }
    return isfinite(v) ? -v : 1.0;
}

/* Scans x over [x0, x1]: SCAN_POINTS + 1 evenly spaced points into xs,
 * vs (−rate) and the best one's index *ib. Returns 1 when the best is
 * interior and strictly better than both neighbours (a maximum to refine),
 * 0 when it is at an end or on a plateau (the scan decides). */
static int scan_line(line *l, double x0, double x1, double *xs, double *vs, size_t *ib)
{
    *ib = 0;
    for (size_t i = 0; i <= SCAN_POINTS; i++) {
        xs[i] = x0 + (x1 - x0) * (double)i / SCAN_POINTS;
        vs[i] = line_neg(xs[i], l);
        if (l->s->st != QC_OK)
            return 0;
        if (vs[i] < vs[*ib])
            *ib = i;
    }
    const size_t i = *ib;
    return i > 0 && i < SCAN_POINTS && vs[i] < vs[i - 1] && vs[i] < vs[i + 1];
}

/* Brent's minimizer of −rate along the line, bracketed by the scan's best
 * point ib and its neighbours. */
static qc_status brent_line(line *l, const double *xs, const double *vs, size_t ib,
                            double x0, double x1)
{
    gsl_min_fminimizer *m = gsl_min_fminimizer_alloc(gsl_min_fminimizer_brent);
    if (!m)
        return qc_fail(QC_ENOMEM, "out of memory");
    gsl_function fn = {line_neg, l};
    int rc = gsl_min_fminimizer_set_with_values(m, &fn, xs[ib], vs[ib], xs[ib - 1],
                                                vs[ib - 1], xs[ib + 1], vs[ib + 1]);
    for (int it = 0; rc == GSL_SUCCESS && it < BRENT_MAX_ITER; it++) {
        rc = gsl_min_fminimizer_iterate(m);
        if (rc != GSL_SUCCESS || l->s->st != QC_OK)
            break;
        double a = gsl_min_fminimizer_x_lower(m), b = gsl_min_fminimizer_x_upper(m);
        if (gsl_min_test_interval(a, b, 1e-11 * (x1 - x0), 0.0) == GSL_SUCCESS)
            break;
    }
    gsl_min_fminimizer_free(m);
    return l->s->st; /* a Brent failure leaves the scan's best, not an error */
}

static double ends_neg(const gsl_vector *v, void *p)
{
    search *s = p;
    double val;
    qc_status st = eval_range(s, gsl_vector_get(v, 0), gsl_vector_get(v, 1), &val);
    if (st != QC_OK) {
        if (s->st == QC_OK)
            s->st = st;
        return 1.0;
    }
    return isfinite(val) ? -val : 1.0;
}

/* Nelder–Mead on both ends of the range, from the best range found;
 * at most SIMPLEX_MAX_ITER iterations, fewer for very many thresholds. */
static qc_status adjust_ends(search *s, double a, double b, size_t nlevels)
{
    size_t maxit = SIMPLEX_WORK / (s->nt * nlevels);
    maxit = maxit < 10 ? 10 : maxit > SIMPLEX_MAX_ITER ? SIMPLEX_MAX_ITER : maxit;
    const double h = 0.5 * (b - a);
    gsl_multimin_fminimizer *m =
        gsl_multimin_fminimizer_alloc(gsl_multimin_fminimizer_nmsimplex2, 2);
    gsl_vector *x = gsl_vector_alloc(2), *step = gsl_vector_alloc(2);
    qc_status st = QC_OK;
    if (!m || !x || !step) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    gsl_vector_set(x, 0, a);
    gsl_vector_set(x, 1, b);
    gsl_vector_set_all(step, 0.05 * h);
    gsl_multimin_function fn = {ends_neg, 2, s};
    if (gsl_multimin_fminimizer_set(m, &fn, x, step) != GSL_SUCCESS)
        goto done;
    for (size_t it = 0; it < maxit && s->st == QC_OK; it++) {
        if (gsl_multimin_fminimizer_iterate(m) != GSL_SUCCESS)
            break;
        if (gsl_multimin_test_size(gsl_multimin_fminimizer_size(m), 1e-10 * h) ==
            GSL_SUCCESS)
            break;
    }
    st = s->st;
done:
    gsl_vector_free(x);
    gsl_vector_free(step);
    gsl_multimin_fminimizer_free(m);
    return st;
}

/* ---- count outputs -------------------------------------------------- */

static qc_status eval_lattice(search *s, double t1, double d)
{
    double v;
    for (size_t j = 0; j < s->nt; j++)
        s->t[j] = t1 + d * (double)j;
    return eval_current(s, &v);
}

/* t_1 ∈ [1, top], Δ ∈ [1, ⌈top/(nt − 1)⌉]: every pair when there are at most
 * COUNT_BUDGET, else a lattice of about that many pairs whose strides are
 * halved around the best point until they reach 1. */
static qc_status count_search(search *s, double top)
{
    const double n1 = top;
    const double n2 = s->nt >= 2 ? fmax(1.0, ceil(top / (double)(s->nt - 1))) : 1.0;
    double p1 = fmin(n1, fmin(COUNT_BUDGET, fmax(1.0, sqrt(COUNT_BUDGET * n1 / n2))));
    double p2 = fmin(n2, fmax(1.0, floor(COUNT_BUDGET / p1)));
    double st1 = ceil(n1 / p1), st2 = ceil(n2 / p2);
    qc_status st;
    for (double t1 = 1.0; t1 <= n1; t1 += st1)
        for (double d = 1.0; d <= n2; d += st2)
            if ((st = eval_lattice(s, t1, d)) != QC_OK)
                return st;
    while (st1 > 1.0 || st2 > 1.0) {
        double b1 = s->best_t[0];
        double b2 = s->nt >= 2 ? s->best_t[1] - s->best_t[0] : 1.0;
        double h1 = fmax(1.0, floor(st1 / 2.0)), h2 = fmax(1.0, floor(st2 / 2.0));
        for (double t1 = fmax(1.0, b1 - st1); t1 <= b1 + st1; t1 += h1)
            for (double d = fmax(1.0, b2 - st2); d <= fmin(n2, b2 + st2); d += h2)
                if ((st = eval_lattice(s, t1, d)) != QC_OK)
                    return st;
        st1 = h1;
        st2 = h2;
    }
    return QC_OK;
}

/* Smallest and largest mean output over the levels: the span the range is
 * centred on. The output may be in other units than the levels (electrons
 * for the APD models, counts), so the model's means are used; a model
 * without moments is taken to have mean output = level. */
static void output_span(const qc_model *model, const double *levels,
                        size_t nlevels, double *lo, double *hi)
{
    *lo = INFINITY;
    *hi = -INFINITY;
    for (size_t i = 0; i < nlevels; i++) {
        double mean = levels[i], var;
        if (qc_model_get_type(model)->moments &&
            (qc_model_get_type(model)->moments(model, levels[i], &mean, &var) != QC_OK ||
             !isfinite(mean)))
            mean = levels[i];
        *lo = fmin(*lo, mean);
        *hi = fmax(*hi, mean);
    }
}

/* Newton steps on the range [a, b] (qc_uniform_newton; one threshold:
 * a = b), the result kept as the search's best when it is better. */
static qc_status newton_from(search *s, qc_cell_mi *w, const qc_model *model,
                             const double *levels, size_t nlevels, double a, double b,
                             int *converged)
{
    const double scale = qc_noise_scale(model, levels, w->input, nlevels);
    double v;
    qc_status st = qc_uniform_newton(w, scale, &a, &b, &v, &s->evals, converged);
    if (st == QC_OK && v > s->best) {
        s->best = v;
        qc_uniform_thresholds(a, b, s->nt, s->best_t);
    }
    return st;
}

qc_status qc_uniform_search(const qc_model *model, const double *levels,
                            size_t nlevels, size_t nt, qc_cell_mi *w, double *t_out,
                            double *value_out, size_t *evals)
{
    qc_gsl_init();
    search s = {.f = qc_cell_mi_objective, .ctx = w, .nt = nt, .best = -INFINITY, .best_t = t_out,
                .st = QC_OK};
    s.t = qc_malloc_array(nt, sizeof *s.t);
    s.seen_t = qc_malloc_array(nt * SEEN_SLOTS, sizeof *s.seen_t);
    if (!s.t || !s.seen_t) {
        free(s.t);
        free(s.seen_t);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    double lo, hi;
    qc_levels_support(model, levels, nlevels, &lo, &hi);
    /* a density with kinks (measured tables): no Newton steps */
    const int kinked = (qc_model_get_type(model)->properties & QC_MODEL_KINKED_DENSITY) != 0;
    qc_status st;
    if (qc_model_get_type(model)->output == QC_OUTPUT_COUNTS) {
        /* first threshold and step within the support: thresholds above
         * it only add empty cells */
        st = count_search(&s, fmax(ceil(hi), 1.0));
    } else if (nt == 1) {
        line l = {&s, 0.0, 1};
        double xs[SCAN_POINTS + 1], vs[SCAN_POINTS + 1];
        size_t ib;
        int converged = 0;
        if (!scan_line(&l, lo, hi, xs, vs, &ib)) {
            st = s.st; /* best at an end of the scan or on a plateau */
        } else if (kinked) {
            st = brent_line(&l, xs, vs, ib, lo, hi);
        } else {
            /* a maximum: Newton steps on the threshold from it */
            st = newton_from(&s, w, model, levels, nlevels, xs[ib], xs[ib], &converged);
            if (st == QC_OK && !converged)
                st = brent_line(&l, xs, vs, ib, lo, hi);
        }
    } else {
        double mean_lo, mean_hi;
        output_span(model, levels, nlevels, &mean_lo, &mean_hi);
        double c = 0.5 * (mean_lo + mean_hi);
        double hmax = fmax(hi - c, c - lo);
        line l = {&s, c, 0};
        double xs[SCAN_POINTS + 1], vs[SCAN_POINTS + 1];
        size_t ib;
        int converged = 0;
        if (!scan_line(&l, 0.0, hmax, xs, vs, &ib)) {
            st = s.st; /* best at an end of the scan or on a plateau */
        } else if (kinked) {
            /* a density with kinks: the rate has local maxima that a local
             * search settles in. The scan is repeated with the centre at
             * CENTRE_POINTS places over the span of the mean outputs; Brent
             * along h at the best centre, then the simplex explores. */
            double best_c = c, best_v = vs[ib];
            size_t best_ib = ib;
            st = QC_OK;
            for (size_t k = 0; k < CENTRE_POINTS && st == QC_OK; k++) {
                const double ck =
                    mean_lo + (mean_hi - mean_lo) * (double)k / (CENTRE_POINTS - 1);
                line lk = {&s, ck, 0};
                double hk = fmax(hi - ck, ck - lo);
                double xk[SCAN_POINTS + 1], vk[SCAN_POINTS + 1];
                size_t ik;
                if (scan_line(&lk, 0.0, hk, xk, vk, &ik) && vk[ik] < best_v) {
                    best_c = lk.c;
                    best_v = vk[ik];
                    best_ib = ik;
                    memcpy(xs, xk, sizeof xk);
                    memcpy(vs, vk, sizeof vk);
                    hmax = hk;
                }
                st = s.st;
            }
            l.c = best_c;
            if (st == QC_OK)
                st = brent_line(&l, xs, vs, best_ib, 0.0, hmax);
        } else {
            /* a maximum in h: Newton on both ends from it */
            st = newton_from(&s, w, model, levels, nlevels, c - xs[ib], c + xs[ib],
                             &converged);
        }
        /* at an end of the scan, on a plateau, for a density with kinks,
         * or where Newton could not settle (no finite curvature): the
         * simplex on both ends from the best range seen */
        if (st == QC_OK && !converged && isfinite(s.best)) {
            double cw = s.best_t[1] - s.best_t[0]; /* cell width */
            double a = s.best_t[0] - cw;
            st = adjust_ends(&s, a, a + (double)(nt + 1) * cw, nlevels);
        }
    }
    free(s.t);
    free(s.seen_t);
    if (st != QC_OK)
        return st;
    if (!isfinite(s.best))
        return qc_fail(QC_ENUMERIC,
                       "uniform quantizer: no range gave a finite rate (model '%s')",
                       qc_model_get_type(model)->name);
    if (value_out)
        *value_out = s.best;
    if (evals)
        *evals = s.evals;
    return QC_OK;
}

/* Thresholds of the range with centre c and half-width h into t. */
static void range_thresholds(double c, double h, size_t nt, double *t)
{
    const double K = (double)(nt + 1);
    for (size_t j = 0; j < nt; j++)
        t[j] = c - h + 2.0 * h * (double)(j + 1) / K;
}

/* One end of the interval over which the rate stays ≥ floor: bisection
 * from `good` (inside) toward `bad` (the bound, tried first), down to the
 * resolution of doubles. Kept as a state so that the two ends can be
 * narrowed in turns and left as soon as the rounded middle is known. */
typedef struct {
    double good, bad;
    int k;    /* steps taken (the bound is step 0)                */
    int done; /* good is final                                    */
} bisection;

/* Rate of the range (c, h); -INFINITY when its thresholds are not
 * increasing. */
static qc_status range_rate(qc_threshold_objective f, void *ctx, size_t nt, double c,
                            double h, double *t, double *v)
{
    range_thresholds(c, h, nt, t);
    int ordered = h > 0.0;
    for (size_t j = 1; ordered && j < nt; j++)
        ordered = t[j] > t[j - 1];
    *v = -INFINITY;
    return ordered ? f(ctx, t, nt, v) : QC_OK;
}

/* One step of a bisection: the coordinate *p is set to the trial value. */
static qc_status bisection_step(bisection *b, qc_threshold_objective f, void *ctx, size_t nt,
                                double *c, double *h, double *p, double floor_v, double *t)
{
    double x = b->k == 0 ? b->bad : 0.5 * (b->good + b->bad);
    if (b->k > 0 && (x == b->good || x == b->bad)) {
        b->done = 1;
        return QC_OK;
    }
    *p = x;
    double v;
    qc_status st = range_rate(f, ctx, nt, *c, *h, t, &v);
    if (st != QC_OK)
        return st;
    if (v >= floor_v) {
        b->good = x;
        if (b->k == 0)
            b->done = 1;
    } else {
        b->bad = x;
    }
    if (++b->k >= BISECT_STEPS)
        b->done = 1;
    return QC_OK;
}

/* The rounded middle qc_simplest_within(0.5·(e0 + e1), ROUND_SHARE·(e1 − e0))
 * of ends that are known to lie in [a0, b0] and [a1, b1], when every such
 * pair gives the same value (then *r = that value, return 1). The value is
 * the point of coarsest binary grid in the interval I = [m − τ, m + τ]
 * (0 when I holds 0), which is the same for every I that holds it and lies
 * in an interval holding that point as its coarsest: so the coarsest point
 * of the widest possible I is computed and checked to lie in the narrowest
 * one, with a margin of many ulps for the rounding of m, τ and the test. */
static int settled_middle(double a0, double b0, double a1, double b1, double *r)
{
    const double scale = fmax(fmax(fabs(a0), fabs(b0)), fmax(fabs(a1), fabs(b1)));
    const double slack = 64.0 * DBL_EPSILON * scale + DBL_MIN;
    const double m_lo = 0.5 * (a0 + a1), m_hi = 0.5 * (b0 + b1);
    const double tau_lo = ROUND_SHARE * (a1 - b0), tau_hi = ROUND_SHARE * (b1 - a0);
    if (!(tau_lo > 4.0 * slack))
        return 0;
    const double in_lo = m_hi - tau_lo + slack, in_hi = m_lo + tau_lo - slack;
    const double out_lo = m_lo - tau_hi - slack, out_hi = m_hi + tau_hi + slack;
    if (!(in_lo < in_hi))
        return 0;
    double x = qc_simplest_within(0.5 * (out_lo + out_hi), 0.5 * (out_hi - out_lo));
    if (!(x >= in_lo && x <= in_hi))
        return 0;
    *r = x;
    return 1;
}

/* Move coordinate *p (the centre or the half-width) to the middle of the
 * interval [lo_p, hi_p] ∋ *p over which the rate stays ≥ floor_v, rounded
 * to the simplest value within ROUND_SHARE of the interval's width. The
 * two ends are bisected in turns, each step as a bisection of that end
 * alone would take it, and the bisections stop once the rounded middle no
 * longer depends on where in their brackets the ends fall; the result is
 * the one full bisections give, with fewer rate evaluations. */
static qc_status center_coordinate(qc_threshold_objective f, void *ctx, size_t nt,
                                   double *c, double *h, int which, double lo_p,
                                   double hi_p, double floor_v, double *t)
{
    double *p = which ? h : c;
    const double p0 = *p;
    bisection end[2] = {{p0, lo_p, 0, 0}, {p0, hi_p, 0, 0}};
    double mid = NAN;
    int known = 0;
    qc_status st = QC_OK;
    while (!(end[0].done && end[1].done)) {
        for (int side = 0; side < 2 && st == QC_OK; side++)
            if (!end[side].done)
                st = bisection_step(&end[side], f, ctx, nt, c, h, p, floor_v, t);
        if (st != QC_OK) {
            *p = p0;
            return st;
        }
        double a0 = end[0].done ? end[0].good : end[0].bad;
        double b1 = end[1].done ? end[1].good : end[1].bad;
        if (end[0].k > 0 && end[1].k > 0 &&
            (known = settled_middle(a0, end[0].good, end[1].good, b1, &mid)))
            break;
    }
    *p = known ? mid
               : qc_simplest_within(0.5 * (end[0].good + end[1].good),
                                    ROUND_SHARE * (end[1].good - end[0].good));
    range_thresholds(*c, *h, nt, t);
    double v;
    st = f(ctx, t, nt, &v);
    if (st != QC_OK || !(v >= floor_v))
        *p = p0;
    return st;
}

/* The rates of the tidy: f, its value v0 at the search's thresholds t0
 * (rated when first needed), and the screen with its value s0 there. */
typedef struct {
    qc_threshold_objective f;
    void *ctx;
    const qc_rate_screen *screen; /* NULL: every step rated by f */
    const double *t0;
    size_t nt;
    double eps, v0, s0;
    int have_v0;
} tidy_rates;

/* r->v0, once. */
static qc_status start_rate(tidy_rates *r)
{
    if (r->have_v0)
        return QC_OK;
    qc_status st = r->f(r->ctx, r->t0, r->nt, &r->v0);
    r->have_v0 = st == QC_OK;
    return st;
}

/* Whether coordinate *p (the centre or the half-width) is flat: a step of
 * `step` to either side keeps the rate ≥ v0 − eps (as for the thresholds
 * of the other strategies, tidy.c). A step the screen puts more than
 * eps + 2·err below its own start is not flat without rating it by f.
 * *p is left as it was. */
static qc_status coordinate_flat(tidy_rates *r, double *c, double *h, int which,
                                 double step, double *t, int *flat)
{
    double *p = which ? h : c;
    const double p0 = *p;
    qc_status st = QC_OK;
    *flat = 1;
    for (int side = 0; side < 2 && *flat && st == QC_OK; side++) {
        double v;
        *p = side ? p0 + step : p0 - step;
        if (r->screen) {
            if ((st = range_rate(r->screen->f, r->screen->ctx, r->nt, *c, *h, t, &v)) !=
                QC_OK)
                break;
            if (v < r->s0 - r->eps - 2.0 * r->screen->err) {
                *flat = 0;
                break;
            }
        }
        if ((st = start_rate(r)) != QC_OK)
            break;
        st = range_rate(r->f, r->ctx, r->nt, *c, *h, t, &v);
        *flat = v >= r->v0 - r->eps;
    }
    *p = p0;
    return st;
}

qc_status qc_uniform_tidy(const qc_model *model, const double *levels, size_t nlevels,
                          size_t nt, qc_threshold_objective f, void *ctx,
                          const qc_rate_screen *screen, double eps, double *t)
{
    if (qc_model_get_type(model)->output == QC_OUTPUT_COUNTS || nt < 2 || !(eps > 0.0))
        return QC_OK;
    double *u = qc_malloc_array(nt, sizeof *u);
    if (!u)
        return qc_fail(QC_ENOMEM, "out of memory");
    tidy_rates r = {f, ctx, screen, t, nt, eps, NAN, NAN, 0};
    qc_status st = screen ? screen->f(screen->ctx, t, nt, &r.s0) : start_rate(&r);
    if (st == QC_OK && screen && !isfinite(r.s0))
        r.screen = NULL; /* nothing to screen against */
    const double w = t[1] - t[0], K = (double)(nt + 1);
    double h = 0.5 * K * w, c = t[0] - w + h;
    double lo, hi;
    qc_levels_support(model, levels, nlevels, &lo, &hi);
    const double hmax = fmax(fmax(hi - c, c - lo), h);
    /* a coordinate the rate pins down (a step of 1/100 of a cell costs more
     * than eps) stays where the search put it */
    int moved = 0;
    for (int which = 1; which >= 0 && st == QC_OK; which--) { /* h, then c */
        int flat = 0;
        st = coordinate_flat(&r, &c, &h, which, FLAT_PROBE * w, u, &flat);
        if (st == QC_OK && flat) { /* flat: f has rated v0 */
            const double floor_v = r.v0 - eps;
            st = which ? center_coordinate(f, ctx, nt, &c, &h, 1, 0.0, hmax, floor_v, u)
                       : center_coordinate(f, ctx, nt, &c, &h, 0, fmin(lo, c), fmax(hi, c),
                                           floor_v, u);
            moved = 1;
        }
    }
    if (st == QC_OK && moved) {
        double v;
        range_thresholds(c, h, nt, u);
        int ordered = 1;
        for (size_t j = 1; j < nt; j++)
            ordered = ordered && u[j] > u[j - 1];
        if (ordered && (st = f(ctx, u, nt, &v)) == QC_OK && v >= r.v0 - eps)
            for (size_t j = 0; j < nt; j++)
                t[j] = u[j];
    }
    free(u);
    return st;
}

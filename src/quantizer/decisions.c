/* decisions.c — the decision boundaries of the unquantized MAP hard
 * decision, and a quantizer that keeps them.
 *
 * The MAP receiver decides x̂(y) = argmax_x p(x) f(y|x). Its boundaries
 * are where the argmax changes: found by scanning the outputs' support on
 * a fine grid and refining each change by Brent's method on
 * log p(a)f(y|a) − log p(b)f(y|b) (R. P. Brent, Algorithms for
 * Minimization without Derivatives, 1973, ch. 4); for count outputs they
 * are the counts at which the decision changes, exactly. When the output
 * given each level is Gaussian, each score is a quadratic in y, so the
 * decision can change only where two scores cross: the crossings of
 * every pair of levels (closed form) cut the support into intervals of
 * one decision each, and each change between neighbouring intervals is
 * refined by the same Brent search on the model's own densities, which
 * finds every region the scan would and costs a few hundred densities
 * instead of the scan's one per grid point and level (the upper envelope
 * of the scores; the scan remains for other models and for more than
 * ENVELOPE_MAX_LEVELS levels). A quantizer
 * whose thresholds include every boundary loses nothing in hard
 * decisions (the MAP decision per cell then equals the unquantized one),
 * so moving the thresholds nearest to the boundaries onto them turns a
 * quantizer designed for the information rate into one that is also
 * lossless for a hard-decision FEC whenever it has enough cells. The
 * nearest thresholds are chosen by a dynamic program over order-
 * preserving assignments that minimizes the total distance moved. */
#include "quantizer/quantizer.h"

#include <float.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_roots.h>

#define SCAN_POINTS 16384 /* grid of the scan over the support             */
#define ROOT_MAX_ITER 200
#define COUNT_SPAN_MAX 1e7 /* counts scanned one by one up to this range  */
#define ENVELOPE_MAX_LEVELS 64 /* pairs of levels crossed: at most 2016     */
/* decision intervals narrower than this share of the support are taken
 * as rounding between near-equal scores, not as a region of their own
 * (the scan's points are 6·10⁻⁵ of it apart) */
#define ENVELOPE_MIN_WIDTH 1e-9

typedef struct {
    const qc_model *m;
    double la, lb; /* log p(a), log p(b) */
    double xa, xb; /* the two levels */
} pair;

static double log_score(const qc_model *m, double logp, double x, double y)
{
    double f = qc_model_get_type(m)->density(m, x, y);
    return f > 0.0 ? logp + log(f) : -INFINITY;
}

/* The MAP decision at y (index of the level), or SIZE_MAX where every
 * density underflows. Ties go to the lower index. */
static size_t decide(const qc_model *m, const double *levels, const double *logp, size_t n,
                     double y)
{
    size_t best = SIZE_MAX;
    double bs = -INFINITY;
    for (size_t i = 0; i < n; i++) {
        if (logp[i] == -INFINITY)
            continue;
        double s = log_score(m, logp[i], levels[i], y);
        if (s > bs) {
            bs = s;
            best = i;
        }
    }
    return best;
}

static double score_gap(double y, void *p)
{
    const pair *c = p;
    double a = log_score(c->m, c->la, c->xa, y), b = log_score(c->m, c->lb, c->xb, y);
    if (a == -INFINITY && b == -INFINITY)
        return 0.0;
    if (a == -INFINITY)
        return -1e300;
    if (b == -INFINITY)
        return 1e300;
    return a - b;
}

/* The boundary between decisions a (left of lo) and b (right of hi).
 * *clean (if given) says whether the scores changed sign cleanly between
 * lo and hi; where they do not, the middle of [lo, hi] is returned. */
static double refine(const qc_model *m, const double *levels, const double *logp, size_t a,
                     size_t b, double lo, double hi, int *clean)
{
    pair c = {m, logp[a], logp[b], levels[a], levels[b]};
    gsl_function fn = {score_gap, &c};
    double flo = score_gap(lo, &c), fhi = score_gap(hi, &c);
    if (clean)
        *clean = flo > 0.0 && fhi < 0.0;
    if (!(flo > 0.0 && fhi < 0.0))
        return 0.5 * (lo + hi); /* not a clean sign change: the grid's middle */
    gsl_root_fsolver *sv = gsl_root_fsolver_alloc(gsl_root_fsolver_brent);
    if (!sv) {
        if (clean)
            *clean = 0;
        return 0.5 * (lo + hi);
    }
    double root = 0.5 * (lo + hi);
    gsl_error_handler_t *old = gsl_set_error_handler_off();
    if (gsl_root_fsolver_set(sv, &fn, lo, hi) == GSL_SUCCESS) {
        for (int it = 0; it < ROOT_MAX_ITER; it++) {
            if (gsl_root_fsolver_iterate(sv) != GSL_SUCCESS)
                break;
            root = gsl_root_fsolver_root(sv);
            double xl = gsl_root_fsolver_x_lower(sv), xu = gsl_root_fsolver_x_upper(sv);
            if (gsl_root_test_interval(xl, xu, 0.0, 4.0 * DBL_EPSILON) == GSL_SUCCESS)
                break;
        }
    }
    gsl_set_error_handler(old);
    gsl_root_fsolver_free(sv);
    return root;
}

/* ---- Gaussian-law models: the upper envelope of quadratic scores ---- */

/* One level's score where the output given it is Gaussian:
 * log p − ½·log v − (y − μ)²/(2v) (the common −½·log 2π left out). */
typedef struct {
    size_t index; /* in the caller's levels */
    double logp, mean, var, half_log_var;
} gauss_score;

static double gauss_score_at(const gauss_score *g, double y)
{
    const double z = y - g->mean;
    return g->logp - g->half_log_var - 0.5 * z * z / g->var;
}

/* Where the scores of a and b cross inside (lo, hi), into y[] (0 to 2 of
 * them): the roots of A·z² + B·z + C, z = y − μ_a, in the form that
 * avoids cancellation (W. H. Press et al., Numerical Recipes, 3rd ed.,
 * 2007, §5.6, section from memory). A double root is a touch, not a
 * change, and is left out. */
static size_t crossings(const gauss_score *a, const gauss_score *b, double lo, double hi,
                        double y[2])
{
    const double d = b->mean - a->mean;
    const double A = 0.5 * (1.0 / b->var - 1.0 / a->var);
    const double B = -d / b->var;
    const double C = 0.5 * d * d / b->var + (a->logp - a->half_log_var) -
                     (b->logp - b->half_log_var);
    double z[2];
    size_t nz = 0, ny = 0;
    if (A == 0.0) { /* equal variances: one crossing, or none */
        if (B != 0.0)
            z[nz++] = -C / B;
    } else {
        const double disc = B * B - 4.0 * A * C;
        if (disc > 0.0) {
            const double q = -0.5 * (B + copysign(sqrt(disc), B));
            z[nz++] = q / A;
            z[nz++] = C / q;
        }
    }
    for (size_t i = 0; i < nz; i++) {
        const double at = a->mean + z[i];
        if (isfinite(at) && at > lo && at < hi)
            y[ny++] = at;
    }
    return ny;
}

static int compare_doubles(const void *pa, const void *pb)
{
    const double a = *(const double *)pa, b = *(const double *)pb;
    return (a > b) - (a < b);
}

/* The boundaries of a Gaussian-law model over [lo, hi] (the header's
 * second method) into *out, *nout, with *done = 1; *done = 0 where the
 * method does not apply — another model, more than ENVELOPE_MAX_LEVELS
 * levels sent, a level without finite moments, or a change the model's
 * densities do not confirm with a clean sign change — and the caller
 * scans instead. */
static qc_status envelope_boundaries(const qc_model *model, const double *levels,
                                     const double *logp, size_t n, double lo, double hi,
                                     double **out, size_t *nout, int *done)
{
    *done = 0;
    if (!(qc_model_get_type(model)->properties & QC_MODEL_GAUSSIAN_LAW))
        return QC_OK;
    size_t ng = 0;
    for (size_t i = 0; i < n; i++)
        ng += logp[i] > -INFINITY;
    if (ng == 0 || ng > ENVELOPE_MAX_LEVELS)
        return QC_OK;
    const size_t npts_max = 2 + ng * (ng - 1);
    gauss_score *g = qc_malloc_array(ng, sizeof *g);
    double *pts = qc_malloc_array(npts_max, sizeof *pts);
    /* per interval of one decision: the decision, the middles of its
     * first and last piece (Brent's brackets), and the boundaries */
    size_t *win = qc_malloc_array(npts_max, sizeof *win);
    double *first = qc_malloc_array(npts_max, sizeof *first);
    double *last = qc_malloc_array(npts_max, sizeof *last);
    double *b = qc_malloc_array(npts_max, sizeof *b);
    qc_status st = QC_OK;
    if (!g || !pts || !win || !first || !last || !b) {
        st = qc_fail(QC_ENOMEM, "out of memory for the decision boundaries of %zu levels", n);
        goto done;
    }
    for (size_t i = 0, j = 0; i < n; i++) {
        if (!(logp[i] > -INFINITY))
            continue;
        double mean, var;
        if (qc_model_moments(model, levels[i], &mean, &var) != QC_OK || !isfinite(mean) ||
            !(var > 0.0) || !isfinite(var))
            goto done; /* not done: the scan decides */
        g[j++] = (gauss_score){i, logp[i], mean, var, 0.5 * log(var)};
    }
    size_t np = 0;
    pts[np++] = lo;
    pts[np++] = hi;
    for (size_t i = 0; i < ng; i++)
        for (size_t j = i + 1; j < ng; j++)
            np += crossings(&g[i], &g[j], lo, hi, pts + np);
    qsort(pts, np, sizeof *pts, compare_doubles);
    /* one decision between neighbouring crossings: the best score at the
     * middle (ties to the lower level, as the scan decides) */
    const double min_width = ENVELOPE_MIN_WIDTH * (hi - lo);
    size_t nint = 0;
    for (size_t k = 0; k + 1 < np; k++) {
        const double w = pts[k + 1] - pts[k];
        if (!(w > min_width))
            continue;
        const double y = pts[k] + 0.5 * w;
        size_t best = 0;
        double bs = gauss_score_at(&g[0], y);
        for (size_t i = 1; i < ng; i++) {
            const double sc = gauss_score_at(&g[i], y);
            if (sc > bs) {
                bs = sc;
                best = i;
            }
        }
        if (nint > 0 && win[nint - 1] == best) {
            last[nint - 1] = y;
            continue;
        }
        win[nint] = best;
        first[nint] = last[nint] = y;
        nint++;
    }
    size_t nb = 0;
    for (size_t i = 1; i < nint; i++) {
        int clean;
        const double at = refine(model, levels, logp, g[win[i - 1]].index, g[win[i]].index,
                                 last[i - 1], first[i], &clean);
        if (!clean)
            goto done; /* not done: the scan decides */
        if (nb == 0 || at > b[nb - 1])
            b[nb++] = at;
    }
    *out = b;
    *nout = nb;
    b = NULL;
    *done = 1;
done:
    free(g);
    free(pts);
    free(win);
    free(first);
    free(last);
    free(b);
    return st;
}

/* ---- the scan, and the boundaries of any model --------------------- */

static qc_status map_boundaries(const qc_model *model, const double *levels, const double *law,
                                size_t n, int envelope, double **out, size_t *nout)
{
    *out = NULL;
    *nout = 0;
    double lo = INFINITY, hi = -INFINITY;
    double *logp = qc_malloc_array(n, sizeof *logp);
    if (!logp)
        return qc_fail(QC_ENOMEM, "out of memory");
    for (size_t i = 0; i < n; i++) {
        logp[i] = law[i] > 0.0 ? log(law[i]) : -INFINITY;
        double a, b;
        qc_model_get_type(model)->support(model, levels[i], &a, &b);
        lo = fmin(lo, a);
        hi = fmax(hi, b);
    }
    const int counts = qc_model_get_type(model)->output == QC_OUTPUT_COUNTS;
    if (counts) {
        lo = fmax(0.0, floor(lo));
        hi = ceil(hi);
        if (hi - lo > COUNT_SPAN_MAX) {
            free(logp);
            return qc_fail(QC_ENUMERIC,
                           "decision boundaries: count range %g..%g too wide to scan", lo, hi);
        }
    } else if (envelope && lo < hi) {
        int done;
        qc_status st = envelope_boundaries(model, levels, logp, n, lo, hi, out, nout, &done);
        if (st != QC_OK || done) {
            free(logp);
            return st;
        }
    }
    size_t cap = 16, nb = 0;
    double *b = qc_malloc_array(cap, sizeof *b);
    if (!b) {
        free(logp);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    qc_status st = QC_OK;
    size_t prev = SIZE_MAX;
    double prev_y = lo;
    const size_t steps = counts ? (size_t)(hi - lo) + 1 : SCAN_POINTS;
    for (size_t k = 0; k < steps; k++) {
        double y = counts ? lo + (double)k : lo + (hi - lo) * ((double)k + 0.5) / SCAN_POINTS;
        size_t d = decide(model, levels, logp, n, y);
        if (d == SIZE_MAX)
            continue;
        if (prev != SIZE_MAX && d != prev) {
            double at = counts ? y : refine(model, levels, logp, prev, d, prev_y, y, NULL);
            if (counts && at < 1.0)
                at = 1.0;
            if (nb == cap) {
                double *nbuf = realloc(b, 2 * cap * sizeof *b);
                if (!nbuf) {
                    st = qc_fail(QC_ENOMEM, "out of memory");
                    break;
                }
                b = nbuf;
                cap *= 2;
            }
            if (nb == 0 || at > b[nb - 1])
                b[nb++] = at;
        }
        prev = d;
        prev_y = y;
    }
    free(logp);
    if (st != QC_OK) {
        free(b);
        return st;
    }
    *out = b;
    *nout = nb;
    return QC_OK;
}

qc_status qc_map_boundaries(const qc_model *model, const double *levels, const double *law,
                            size_t n, double **out, size_t *nout)
{
    return map_boundaries(model, levels, law, n, 1, out, nout);
}

qc_status qc_map_boundaries_scanned(const qc_model *model, const double *levels,
                                    const double *law, size_t n, double **out, size_t *nout)
{
    return map_boundaries(model, levels, law, n, 0, out, nout);
}

size_t qc_keep_boundaries(const qc_model *model, const double *b, size_t nb, double *t,
                          size_t nt)
{
    if (nb == 0 || nb > nt)
        return 0;
    /* cost[i][j]: least total move placing boundaries 0..i−1 on distinct
     * thresholds among 0..j−1, in order. */
    const size_t w = nt + 1;
    double *cost = qc_malloc_array((nb + 1) * w, sizeof *cost);
    if (!cost)
        return 0;
    for (size_t j = 0; j <= nt; j++)
        cost[j] = 0.0;
    for (size_t i = 1; i <= nb; i++)
        for (size_t j = 0; j <= nt; j++) {
            double c = INFINITY;
            if (j >= i) {
                c = cost[i * w + j - 1]; /* threshold j−1 unused */
                double take = cost[(i - 1) * w + j - 1] + fabs(t[j - 1] - b[i - 1]);
                if (take < c)
                    c = take;
            }
            cost[i * w + j] = c;
        }
    double *moved = qc_malloc_array(nt, sizeof *moved);
    unsigned char *fixed = calloc(nt, 1);
    if (!moved || !fixed) {
        free(cost);
        free(moved);
        free(fixed);
        return 0;
    }
    memcpy(moved, t, nt * sizeof *moved);
    for (size_t i = nb, j = nt; i > 0; j--) {
        double take = cost[(i - 1) * w + j - 1] + fabs(t[j - 1] - b[i - 1]);
        if (j == i || take <= cost[i * w + j - 1]) {
            moved[j - 1] = b[i - 1];
            fixed[j - 1] = 1;
            i--;
        }
    }
    free(cost);
    /* the thresholds left free must stay strictly between their fixed
     * neighbours: a free one that a move passed goes to the middle of its
     * gap (counts: to a free whole count, or the move is abandoned) */
    const int counts = qc_model_get_type(model)->output == QC_OUTPUT_COUNTS;
    size_t ok = 1;
    for (size_t j = 0; j < nt && ok; j++) {
        if (fixed[j])
            continue;
        size_t l = j, r = j;
        while (l > 0 && !fixed[l - 1])
            l--;
        while (r + 1 < nt && !fixed[r + 1])
            r++;
        double left = l > 0 ? moved[l - 1] : -INFINITY;
        double right = r + 1 < nt ? moved[r + 1] : INFINITY;
        int in_order = 1;
        for (size_t k = l; k <= r; k++)
            if (!(moved[k] > (k > l ? moved[k - 1] : left) && moved[k] < right))
                in_order = 0;
        if (!in_order) {
            /* spread the run l..r evenly over its gap */
            double a = isfinite(left) ? left : moved[l] - 1.0;
            double z = isfinite(right) ? right : moved[r] + 1.0;
            if (!isfinite(left) && isfinite(right))
                a = fmin(moved[l], right - 1.0) - (double)(r - l);
            if (!isfinite(right) && isfinite(left))
                z = fmax(moved[r], left + 1.0) + (double)(r - l);
            for (size_t k = l; k <= r; k++) {
                double v = a + (z - a) * (double)(k - l + 1) / (double)(r - l + 2);
                moved[k] = counts ? round(v) : v;
            }
            for (size_t k = l; k <= r + 1 && k < nt; k++)
                if (k > 0 && !(moved[k] > moved[k - 1]))
                    ok = 0;
            if (l > 0 && !(moved[l] > moved[l - 1]))
                ok = 0;
            if (counts && moved[l] < 1.0)
                ok = 0;
        }
        j = r;
    }
    if (ok)
        memcpy(t, moved, nt * sizeof *t);
    free(moved);
    free(fixed);
    return ok ? nb : 0;
}

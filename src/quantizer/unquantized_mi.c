/* unquantized_mi.c — the mutual information of the unquantized channel,
 * I(X;Y) = Σ_i p_i D(f_i ‖ Σ_j p_j f_j), that every quantized rate is
 * compared with.
 *
 * Continuous outputs: one integral over the output axis of the level-
 * summed integrand
 *   g(y) = Σ_{i: y ∈ S_i} p_i f_i(y) log(f_i(y) / m(y)),
 *   m(y) = Σ_{j: y ∈ S_j} p_j f_j(y),
 * where S_i is level i's support (the model's interval holding all but
 * ~1e-15 of its mass), by adaptive Gauss–Kronrod quadrature (GSL QAGS;
 * Piessens et al., QUADPACK, Springer 1983) on panels no wider than a
 * sixteenth of the narrowest support that starts or ends in them. A
 * point y costs the levels whose support holds it, and the panels cover
 * the union of the supports once, so the cost grows linearly with the
 * number of levels at every SNR (integrating level by level over its own
 * support costs that times the number of overlapping levels: quadratic
 * for a large alphabet at low SNR).
 *
 * Truncation bound. Let ε_i = P(Y ∉ S_i | x_i) (from the model's tail-
 * accurate CDFs). Leaving level j out of m where y ∉ S_j can only lower
 * m; with log(1 + u) ≤ u and Σ_{i: y ∈ S_i} p_i f_i = m', the computed
 * rate exceeds the exact one on the supports by at most
 *   ∫ (m − m') dy = Σ_j p_j ε_j,
 * and the part of D(f_i ‖ m) outside S_i lies in [ε_i log ε_i, −ε_i log p_i]
 * (the log-sum inequality below, m ≥ p_i f_i above). Both are added to
 * the error estimate:
 *   E_trunc = Σ_i p_i ε_i (1 + |log ε_i| − log p_i).
 *
 * A level whose output support meets no other level's is perfectly
 * distinguishable: its term is −log p_i, summed exactly. A level whose
 * output is narrower than the resolution of doubles is taken in the
 * noiseless limit (a point mass, distinguishable from every other level),
 * which is flagged. Count outputs: a sum over the counts of each
 * overlapping level's support. */
#include "quantizer/quantizer.h"

#include <math.h>
#include <stdlib.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_integration.h>

#define UNQ_EPSABS 1e-13
#define UNQ_EPSREL 1e-11
#define UNQ_LIMIT 2000
#define PANEL_DIVS 16        /* panels per narrowest support width */
#define SUPPORT_TAIL 1e-15   /* mass a support may leave out: floor of ε_i */
#define MAX_COUNT_SPAN 1e8

typedef struct {
    const qc_model *m;
    const double *levels, *input;
    size_t n;
    double x;                /* counts: the level being summed */
    const double *lo, *hi;   /* each level's support */
    const size_t *order;     /* levels by increasing lo (ties: by index) */
    const double *lo_sorted; /* lo[order[k]] */
    double width;            /* largest hi − lo */
    double *f;               /* scratch: densities of the levels holding y */
} mi_ctx;

size_t qc_first_at_or_above(const double *sorted, size_t n, double v)
{
    size_t a = 0, b = n;
    while (a < b) {
        size_t mid = a + (b - a) / 2;
        if (sorted[mid] < v)
            a = mid + 1;
        else
            b = mid;
    }
    return a;
}

/* Whether level i's continuous output is narrower than the resolution of
 * doubles (its support rounds to a point); counts are never such. */
static int point_mass(const mi_ctx *c, size_t i)
{
    return qc_model_get_type(c->m)->output == QC_OUTPUT_REAL && !(c->hi[i] > c->lo[i]);
}

/* Whether level j takes part in the mixture at y. */
static int holds(const mi_ctx *c, size_t j, double y)
{
    return c->input[j] > 0.0 && y <= c->hi[j] && !point_mass(c, j);
}

/* g(y): every level whose support holds y, against their mixture. A
 * support holding y starts in [y − width, y], so with the levels sorted by
 * the start of their support a point costs O(log levels + levels there). */
static double summed_term(const mi_ctx *c, double y)
{
    const qc_model_type *ty = qc_model_get_type(c->m);
    size_t k0 = qc_first_at_or_above(c->lo_sorted, c->n, y - c->width), na = 0;
    double mix = 0.0;
    for (size_t k = k0; k < c->n && c->lo_sorted[k] <= y; k++) {
        size_t j = c->order[k];
        if (!holds(c, j, y))
            continue;
        double f = ty->density(c->m, c->levels[j], y);
        c->f[na++] = f;
        mix += c->input[j] * f;
    }
    if (!(mix > 0.0))
        return 0.0;
    const double lm = log(mix);
    double s = 0.0;
    na = 0;
    for (size_t k = k0; k < c->n && c->lo_sorted[k] <= y; k++) {
        size_t j = c->order[k];
        if (!holds(c, j, y))
            continue;
        double f = c->f[na++];
        if (f > 0.0)
            s += c->input[j] * f * (log(f) - lm);
    }
    return s;
}

static double summed_integrand(double y, void *p) { return summed_term(p, y); }

/* Counts: f(y|x) log(f(y|x) / m(y)) for the level c->x. */
static double count_term(const mi_ctx *c, double y)
{
    const qc_model_type *ty = qc_model_get_type(c->m);
    double f = ty->density(c->m, c->x, y);
    if (!(f > 0.0))
        return 0.0;
    double mix = 0.0;
    for (size_t k = qc_first_at_or_above(c->lo_sorted, c->n, y - c->width);
         k < c->n && c->lo_sorted[k] <= y; k++) {
        size_t i = c->order[k];
        if (holds(c, i, y))
            mix += c->input[i] * ty->density(c->m, c->levels[i], y);
    }
    if (!(mix > 0.0))
        return 0.0;
    return f * log(f / mix);
}

/* Probability of the point mass at level i's output: the levels whose
 * output rounds to that same point (repeated levels share it). */
static double point_share(const mi_ctx *c, size_t i)
{
    double m = 0.0;
    for (size_t k = qc_first_at_or_above(c->lo_sorted, c->n, c->lo[i]);
         k < c->n && c->lo_sorted[k] <= c->lo[i]; k++) {
        size_t j = c->order[k];
        if (point_mass(c, j) && c->hi[j] == c->hi[i] && c->input[j] > 0.0)
            m += c->input[j];
    }
    return m;
}

/* Whether level i's support meets the support of another level of
 * positive probability. */
static int overlaps_other(const mi_ctx *c, size_t i)
{
    const double lo = c->lo[i], hi = c->hi[i];
    for (size_t k = qc_first_at_or_above(c->lo_sorted, c->n, lo - c->width);
         k < c->n && c->lo_sorted[k] <= hi; k++) {
        size_t j = c->order[k];
        if (j != i && c->input[j] > 0.0 && c->hi[j] >= lo)
            return 1;
    }
    return 0;
}

/* Level i's share of the truncation bound (see the header): p ε (1 +
 * |log ε| − log p), ε the mass outside its support (at least SUPPORT_TAIL,
 * what the support's contract allows). */
double qc_support_tail(const qc_model *model, double level, double lo, double hi)
{
    const qc_model_type *ty = qc_model_get_type(model);
    double eps = ty->below(model, level, lo) + ty->above(model, level, hi);
    if (!(eps >= SUPPORT_TAIL) || !isfinite(eps))
        eps = SUPPORT_TAIL;
    return eps > 1.0 ? 1.0 : eps;
}

static double truncation(const mi_ctx *c, size_t i)
{
    double p = c->input[i];
    double eps = qc_support_tail(c->m, c->levels[i], c->lo[i], c->hi[i]);
    return p * eps * (1.0 + fabs(log(eps)) - log(p));
}

qc_status qc_integrate_union(const double *lo, const double *hi, const size_t *ov,
                             size_t nov, double (*integrand)(double, void *), void *ctx,
                             const char *what, double *val, double *err)
{
    *val = *err = 0.0;
    if (nov == 0)
        return QC_OK;
    double *pos = qc_malloc_array(2 * nov, sizeof *pos);
    double *wid = qc_malloc_array(2 * nov, sizeof *wid);
    size_t *ord = qc_malloc_array(2 * nov, sizeof *ord);
    gsl_integration_workspace *w = gsl_integration_workspace_alloc(UNQ_LIMIT);
    qc_status st =
        !pos || !wid || !ord || !w ? qc_fail(QC_ENOMEM, "out of memory") : QC_OK;
    if (st == QC_OK) {
        for (size_t k = 0; k < nov; k++) {
            size_t i = ov[k];
            pos[2 * k] = lo[i];
            pos[2 * k + 1] = hi[i];
            wid[2 * k] = wid[2 * k + 1] = hi[i] - lo[i];
        }
        st = qc_sort_order(pos, 2 * nov, ord);
    }
    /* Walk the ends in order; `open` counts the supports open after the
     * current end; a panel closes where a stretch of the union ends or
     * once it is a sixteenth of the narrowest support met in it wide. */
    size_t open = 0;
    double start = NAN, narrow = INFINITY;
    gsl_function fn = {integrand, ctx};
    for (size_t e = 0; e < 2 * nov && st == QC_OK; e++) {
        size_t k = ord[e];
        double y = pos[k];
        int is_start = (k % 2) == 0;
        if (open == 0) { /* a new stretch of the union */
            start = y;
            narrow = wid[k];
        } else {
            narrow = fmin(narrow, wid[k]);
        }
        if (is_start)
            open++;
        else
            open--;
        if (open > 0 && !(y - start >= narrow / PANEL_DIVS))
            continue;
        if (y > start) {
            double v = 0.0, ve = 0.0;
            int rc = gsl_integration_qags(&fn, start, y, UNQ_EPSABS, UNQ_EPSREL, UNQ_LIMIT,
                                          w, &v, &ve);
            if (rc != GSL_SUCCESS && rc != GSL_EROUND) {
                st = qc_fail(QC_ENUMERIC, "quadrature of %s failed on [%g, %g]: %s", what,
                             start, y, gsl_strerror(rc));
                break;
            }
            *val += v;
            *err += ve;
        }
        start = y;
        narrow = INFINITY;
    }
    free(pos);
    free(wid);
    free(ord);
    gsl_integration_workspace_free(w);
    return st;
}

qc_status qc_supports_sorted(const qc_model *model, const double *levels, size_t n,
                             double *lo, double *hi, size_t *order, double *lo_sorted,
                             double *width)
{
    *width = 0.0;
    for (size_t i = 0; i < n; i++) {
        qc_model_get_type(model)->support(model, levels[i], &lo[i], &hi[i]);
        *width = fmax(*width, hi[i] - lo[i]);
    }
    qc_status st = qc_sort_order(lo, n, order); /* by where each support starts */
    if (st == QC_OK)
        for (size_t k = 0; k < n; k++)
            lo_sorted[k] = lo[order[k]];
    return st;
}

qc_status qc_unquantized_mi(const qc_model *model, const double *levels,
                            const double *input, size_t nlevels, double *mi_nats,
                            double *abserr_nats)
{
    return qc_unquantized_mi_detail(model, levels, input, nlevels, mi_nats, abserr_nats,
                                    NULL);
}

qc_status qc_unquantized_mi_detail(const qc_model *model, const double *levels,
                                   const double *input, size_t nlevels, double *mi_nats,
                                   double *abserr_nats, int *noiseless)
{
    qc_gsl_init();
    if (noiseless)
        *noiseless = 0;
    qc_status st = qc_model_check_levels(model, levels, nlevels);
    if (st != QC_OK)
        return st;
    const qc_model_type *ty = qc_model_get_type(model);
    double *sup = qc_malloc_array(4 * nlevels, sizeof *sup);
    size_t *order = qc_malloc_array(2 * nlevels, sizeof *order);
    if (!sup || !order) {
        free(sup);
        free(order);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    double width;
    st = qc_supports_sorted(model, levels, nlevels, sup, sup + nlevels, order,
                            sup + 2 * nlevels, &width);
    if (st != QC_OK)
        goto done;
    mi_ctx c = {model, levels, input, nlevels, 0.0, sup, sup + nlevels,
                order, sup + 2 * nlevels, width, sup + 3 * nlevels};
    size_t *ov = order + nlevels, nov = 0; /* overlapping levels */
    double total = 0.0, err = 0.0;
    for (size_t i = 0; i < nlevels && st == QC_OK; i++) {
        if (input[i] <= 0.0)
            continue;
        double lo = c.lo[i], hi = c.hi[i], val = 0.0, e = 0.0;
        if (point_mass(&c, i)) {
            /* x ± the spread rounds to x: the noiseless limit, a point
             * mass that only repeats of the level share (a continuous
             * output puts no mass on it), so D(f_i ‖ mixture) = −log of
             * the point's probability. */
            val = -log(point_share(&c, i));
            if (noiseless)
                *noiseless = 1;
        } else if (!overlaps_other(&c, i)) {
            val = -log(input[i]); /* perfectly distinguishable */
            e = truncation(&c, i) / input[i];
        } else if (ty->output == QC_OUTPUT_COUNTS) {
            double a = fmax(0.0, floor(lo)), b = ceil(hi);
            if (b - a > MAX_COUNT_SPAN) {
                st = qc_fail(QC_ENUMERIC, "count range %g..%g too wide to sum", a, b);
                break;
            }
            c.x = levels[i];
            for (double y = a; y <= b; y += 1.0)
                val += count_term(&c, y);
            e = 1e-15 * (b - a + 1.0);
        } else {
            ov[nov++] = i; /* integrated together below */
            err += truncation(&c, i);
            continue;
        }
        total += input[i] * val;
        err += input[i] * e;
    }
    if (st == QC_OK && nov > 0) {
        double val, e;
        st = qc_integrate_union(c.lo, c.hi, ov, nov, summed_integrand, &c,
                                "the unquantized rate", &val, &e);
        total += val;
        err += e;
    }
    if (st == QC_OK && !isfinite(total))
        st = qc_fail(QC_ENUMERIC, "unquantized rate is not finite");
    if (st == QC_OK) {
        *mi_nats = total > 0.0 ? total : 0.0;
        if (abserr_nats)
            *abserr_nats = err;
    }
done:
    free(sup);
    free(order);
    return st;
}

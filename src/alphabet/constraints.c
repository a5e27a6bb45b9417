/* constraints.c — peak, average-power and average-level (mean optical
 * power) constraints on the input: their feasibility on a set of levels,
 * the per-level costs handed to the capacity engine (Blahut, IEEE Trans.
 * IT 18(4), 1972, capacity–cost via a Lagrange multiplier), and the
 * projection that keeps moving levels inside the constraint set during
 * level optimization (a radial map toward a strictly feasible point of a
 * convex set, the gauge-function construction of Rockafellar, Convex
 * Analysis, 1970, §15). */
#include "alphabet/alphabet.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

void qc_constraints_none(qc_constraints *c)
{
    c->peak = NAN;
    c->power = NAN;
    c->mean = NAN;
    c->intensity = 0;
}

int qc_constraints_any(const qc_constraints *c)
{
    return c && (!isnan(c->peak) || !isnan(c->power) || !isnan(c->mean));
}

qc_status qc_constraints_validate(const qc_constraints *c, unsigned dimensions)
{
    if (!c)
        return QC_OK;
    if (!isnan(c->peak) && (!(c->peak > 0.0) || !isfinite(c->peak)))
        return qc_fail(QC_EINVAL, "peak-limit: must be a positive number (got %g)", c->peak);
    if (!isnan(c->power) && (!(c->power > 0.0) || !isfinite(c->power)))
        return qc_fail(QC_EINVAL, "power-limit: must be a positive number (got %g)", c->power);
    if (!isnan(c->mean) && !isfinite(c->mean))
        return qc_fail(QC_EINVAL, "mean-limit: must be a finite number (got %g)", c->mean);
    if (!isnan(c->mean) && dimensions == 2)
        return qc_fail(QC_EINVAL, "mean-limit: an average-level constraint applies to real "
                                  "alphabets, not to QAM");
    return QC_OK;
}

int qc_two_cost_witness(const double *a, const double *b, size_t n, size_t *wi, size_t *wj,
                        double *lambda)
{
    for (size_t i = 0; i < n; i++)
        if (a[i] <= 0.0 && b[i] <= 0.0) {
            *wi = *wj = i;
            *lambda = 1.0;
            return 1;
        }
    for (size_t i = 0; i < n; i++) {
        if (!(a[i] <= 0.0)) /* i meets a, misses b */
            continue;
        for (size_t j = 0; j < n; j++) {
            if (!(b[j] <= 0.0)) /* j meets b, misses a */
                continue;
            /* λ a_i + (1−λ) a_j ≤ 0 ⇔ λ ≥ a_j/(a_j − a_i);
             * λ b_i + (1−λ) b_j ≤ 0 ⇔ λ ≤ −b_j/(b_i − b_j) */
            double lo = a[j] / (a[j] - a[i]), hi = -b[j] / (b[i] - b[j]);
            if (lo <= hi) {
                *wi = i;
                *wj = j;
                *lambda = 0.5 * (lo + hi);
                return 1;
            }
        }
    }
    return 0;
}

qc_status qc_constraints_check(const qc_constraints *c, const double *levels, size_t nlevels,
                               unsigned dimensions)
{
    if (!c)
        return QC_OK;
    qc_status st = qc_constraints_validate(c, dimensions);
    if (st != QC_OK)
        return st;
    if (nlevels == 0)
        return qc_fail(QC_EINVAL, "no levels given");
    double d = dimensions == 2 ? 2.0 : 1.0;
    if (!isnan(c->peak))
        for (size_t i = 0; i < nlevels; i++)
            if (!qc_within_peak(levels[i], c->peak, c->intensity))
                return qc_fail(QC_EINVAL, "peak-limit: level %zu (%g) lies outside [%g, %g]", i + 1,
                               levels[i], c->intensity ? 0.0 : -c->peak, c->peak);
    size_t imin = 0;
    for (size_t i = 1; i < nlevels; i++)
        if (fabs(levels[i]) < fabs(levels[imin]))
            imin = i;
    if (!isnan(c->power) && d * levels[imin] * levels[imin] > c->power)
        return qc_fail(QC_EINFEASIBLE,
                       "power-limit: %g is below the smallest %s of any level (%g, at level %g)",
                       c->power, dimensions == 2 ? "E|x|^2" : "E[x^2]",
                       d * levels[imin] * levels[imin], levels[imin]);
    size_t ilow = 0;
    for (size_t i = 1; i < nlevels; i++)
        if (levels[i] < levels[ilow])
            ilow = i;
    if (!isnan(c->mean) && levels[ilow] > c->mean)
        return qc_fail(QC_EINFEASIBLE, "mean-limit: %g is below the smallest level (%g)", c->mean,
                       levels[ilow]);
    if (!isnan(c->power) && !isnan(c->mean)) {
        double *a = qc_malloc_array(nlevels, sizeof *a);
        double *b = qc_malloc_array(nlevels, sizeof *b);
        if (!a || !b) {
            free(a);
            free(b);
            return qc_fail(QC_ENOMEM, "out of memory");
        }
        for (size_t i = 0; i < nlevels; i++) {
            a[i] = levels[i] * levels[i] - c->power;
            b[i] = levels[i] - c->mean;
        }
        size_t wi, wj;
        double lambda;
        int ok = qc_two_cost_witness(a, b, nlevels, &wi, &wj, &lambda);
        free(a);
        free(b);
        if (!ok)
            return qc_fail(QC_EINFEASIBLE,
                           "power-limit and mean-limit: no input law on these levels has both "
                           "E[x^2] <= %g and E[x] <= %g",
                           c->power, c->mean);
    }
    return QC_OK;
}

qc_status qc_constraints_check_law(const qc_constraints *c, const double *levels,
                                   const double *law, size_t nlevels, unsigned dimensions)
{
    if (!c)
        return QC_OK;
    double e1 = 0.0, e2 = 0.0, d = dimensions == 2 ? 2.0 : 1.0;
    for (size_t i = 0; i < nlevels; i++) {
        double r = law ? law[i] : 1.0 / (double)nlevels;
        e1 += r * levels[i];
        e2 += r * levels[i] * levels[i];
    }
    e2 *= d;
    const char *which = law ? "the given law" : "the uniform law";
    if (!isnan(c->power) && e2 > c->power * (1.0 + QC_BUDGET_SLACK))
        return qc_fail(QC_EINFEASIBLE,
                       "power-limit: %s has %s = %g > %g (use objective capacity to choose the "
                       "law, or optimize-levels to move the levels)",
                       which, dimensions == 2 ? "E|x|^2" : "E[x^2]", e2, c->power);
    if (!isnan(c->mean) && e1 > c->mean + QC_BUDGET_SLACK * fmax(1.0, fabs(c->mean)))
        return qc_fail(QC_EINFEASIBLE,
                       "mean-limit: %s has E[x] = %g > %g (use objective capacity to choose the "
                       "law, or optimize-levels to move the levels)",
                       which, e1, c->mean);
    return QC_OK;
}

size_t qc_constraint_costs(const qc_constraints *c, const double *levels, size_t nlevels,
                           unsigned dimensions, double *power_cost, double *mean_cost,
                           qc_cost costs[2])
{
    size_t k = 0;
    if (!c)
        return 0;
    /* QAM: the per-quadrature channel carries half the symbol's power
     * budget (exact: docs/alphabets.md) */
    double share = dimensions == 2 ? 0.5 : 1.0;
    if (!isnan(c->power)) {
        for (size_t i = 0; i < nlevels; i++)
            power_cost[i] = levels[i] * levels[i];
        costs[k++] = (qc_cost){power_cost, share * c->power};
    }
    if (!isnan(c->mean)) {
        /* E[x] ≤ M ⇔ E[x − x_min] ≤ M − x_min: a cost ≥ 0, as the engine
         * requires, for bipolar levels too */
        double least = INFINITY;
        for (size_t i = 0; i < nlevels; i++)
            least = fmin(least, levels[i]);
        for (size_t i = 0; i < nlevels; i++)
            mean_cost[i] = levels[i] - least;
        costs[k++] = (qc_cost){mean_cost, c->mean - least};
    }
    return k;
}

/* ---- projection of moving levels into the constraint set ------------ */

/* The interval [lo, hi] every level must lie in. */
static void level_box(const qc_constraints *c, double *lo, double *hi)
{
    *lo = -INFINITY;
    *hi = INFINITY;
    if (c && c->intensity)
        *lo = 0.0;
    if (c && !isnan(c->peak)) {
        *hi = c->peak;
        if (!c->intensity)
            *lo = -c->peak;
    }
}

/* A point strictly inside (a, b), as central as the ends allow. */
static double inside(double a, double b)
{
    if (isfinite(a) && isfinite(b))
        return 0.5 * (a + b);
    if (isfinite(a))
        return a + fmax(1.0, fabs(a));
    if (isfinite(b))
        return b - fmax(1.0, fabs(b));
    return 0.0;
}

static int strictly_feasible(const qc_level_set *s, const double *x)
{
    double e1 = 0.0, e2 = 0.0;
    for (size_t i = 0; i < s->n; i++) {
        if (!(x[i] > s->lo && x[i] < s->hi))
            return 0;
        if (s->law) {
            e1 += s->law[i] * x[i];
            e2 += s->law[i] * x[i] * x[i];
        }
    }
    return !(s->law && ((!isnan(s->power) && !(e2 < s->power)) ||
                        (!isnan(s->mean) && !(e1 < s->mean))));
}

static int by_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

qc_status qc_level_set_init(qc_level_set *s, const qc_constraints *c, const double *law,
                            const double *pattern, size_t n, unsigned dimensions)
{
    memset(s, 0, sizeof *s);
    s->n = n;
    s->law = law;
    s->power = NAN;
    s->mean = NAN;
    level_box(c, &s->lo, &s->hi);
    if (law && c) {
        /* per-quadrature budget for QAM */
        s->power = isnan(c->power) ? NAN : (dimensions == 2 ? 0.5 : 1.0) * c->power;
        s->mean = c->mean;
    }
    s->bounded = isfinite(s->lo) && isfinite(s->hi);
    if (!isnan(s->power))
        s->bounded = 1;
    if (!isnan(s->mean) && isfinite(s->lo))
        s->bounded = 1; /* x ≥ lo and E[x] ≤ mean bound every level in use */
    /* the centre a: strictly inside the box, below the mean, a² < power */
    double lo = s->lo, hi = s->hi;
    if (!isnan(s->power)) {
        lo = fmax(lo, -sqrt(s->power));
        hi = fmin(hi, sqrt(s->power));
    }
    if (!isnan(s->mean))
        hi = fmin(hi, s->mean);
    if (!(lo < hi))
        return qc_fail(QC_EINFEASIBLE,
                       "no placement of the levels meets the constraints together (the "
                       "levels must lie in [%g, %g]%s%s)",
                       s->lo, s->hi, isnan(s->power) ? "" : " with the power budget",
                       isnan(s->mean) ? "" : " and the mean budget");
    double a = inside(lo, hi);
    s->centre = qc_malloc_array(n, sizeof *s->centre);
    double *v = qc_malloc_array(n, sizeof *v);
    if (!s->centre || !v) {
        free(v);
        qc_level_set_clear(s);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    memcpy(v, pattern, n * sizeof *v);
    qsort(v, n, sizeof *v, by_double);
    double mu = 0.0, spread = v[n - 1] - v[0];
    for (size_t i = 0; i < n; i++)
        mu += (law ? law[i] : 1.0 / (double)n) * v[i];
    double b = spread > 0.0 ? 1.0 / spread : 1.0;
    int ok = 0;
    for (int k = 0; k < 200 && !ok; k++, b *= 0.5) {
        for (size_t i = 0; i < n; i++)
            s->centre[i] = a + b * (v[i] - mu);
        ok = strictly_feasible(s, s->centre);
    }
    free(v);
    if (!ok) {
        qc_level_set_clear(s);
        return qc_fail(QC_ENUMERIC, "no strictly feasible starting levels found");
    }
    return QC_OK;
}

void qc_level_set_clear(qc_level_set *s)
{
    free(s->centre);
    s->centre = NULL;
}

void qc_level_set_project(const qc_level_set *s, double *x)
{
    const double *c = s->centre;
    qsort(x, s->n, sizeof *x, by_double);
    double t = 1.0;
    for (size_t i = 0; i < s->n; i++) {
        if (x[i] > s->hi)
            t = fmin(t, (s->hi - c[i]) / (x[i] - c[i]));
        if (x[i] < s->lo)
            t = fmin(t, (s->lo - c[i]) / (x[i] - c[i]));
    }
    if (s->law) {
        double ex = 0.0, ec = 0.0, a = 0.0, b = 0.0, cc = 0.0;
        for (size_t i = 0; i < s->n; i++) {
            double d = x[i] - c[i];
            ex += s->law[i] * x[i];
            ec += s->law[i] * c[i];
            a += s->law[i] * d * d;
            b += s->law[i] * c[i] * d;
            cc += s->law[i] * c[i] * c[i];
        }
        if (!isnan(s->mean) && ex > s->mean)
            t = fmin(t, (s->mean - ec) / (ex - ec));
        if (!isnan(s->power) && a > 0.0) {
            /* E[(c + t d)²] = cc + 2bt + at² ≤ power: the larger root */
            double cm = cc - s->power; /* < 0 */
            double root = (-b + sqrt(b * b - a * cm)) / a;
            t = fmin(t, root);
        }
    }
    if (t < 1.0) {
        t = fmax(t, 0.0);
        for (size_t i = 0; i < s->n; i++)
            x[i] = c[i] + t * (x[i] - c[i]);
        /* rounding must not leave the box */
        for (size_t i = 0; i < s->n; i++)
            x[i] = fmin(fmax(x[i], s->lo), s->hi);
    }
}

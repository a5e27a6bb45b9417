/* level_set.c — the set of allowed level vectors while level optimization
 * moves the levels, and the projection that keeps a moving vector inside
 * it: a radial map toward a strictly feasible point of a convex set, the
 * gauge-function construction of Rockafellar, Convex Analysis, 1970, §15. */
#include "design/design_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

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

/* table.c — measured or simulated output densities per input level read
 * from a text file (format in docs/formats.md). Each level's samples are
 * joined by straight lines (a piecewise-linear density, zero outside the
 * sampled range) and normalized to integrate to 1; the CDF is its exact
 * integral, piecewise quadratic and monotone, accumulated from the left
 * for P(Y < t) and from the right for P(Y ≥ t) so that both tails keep
 * their relative accuracy. */
#include "core/internal.h"
#include "models/model_internal.h"

#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

typedef struct {
    size_t nl, ny;
    double *levels; /* nl                                     */
    double *y;      /* ny sample points, strictly increasing  */
    double *f;      /* ny × nl normalized densities, row-major */
    double *cl;     /* ny × nl: ∫_{y_0}^{y_i} f               */
    double *cr;     /* ny × nl: ∫_{y_i}^{y_last} f            */
} table_state;

static void table_destroy(void *state)
{
    table_state *s = state;
    if (!s)
        return;
    free(s->levels);
    free(s->y);
    free(s->f);
    free(s->cl);
    free(s->cr);
    free(s);
}

static qc_status table_check(const double *params)
{
    (void)params;
    return qc_fail(QC_EINVAL, "model 'table' is made from a table file "
                              "(qc_model_table_load), not from parameters");
}

#define LEVEL_RTOL 1e-12

/* Column of level x, or −1. */
static long column(const table_state *s, double x)
{
    for (size_t k = 0; k < s->nl; k++)
        if (fabs(s->levels[k] - x) <= LEVEL_RTOL * fmax(1.0, fabs(x)))
            return (long)k;
    return -1;
}

/* Segment i with y_i ≤ t < y_{i+1}, or −1 below y_0, ny−1 at or above the end. */
static long segment(const table_state *s, double t)
{
    if (t < s->y[0])
        return -1;
    if (t >= s->y[s->ny - 1])
        return (long)s->ny - 1;
    size_t lo = 0, hi = s->ny - 1; /* y[lo] ≤ t < y[hi] */
    while (hi - lo > 1) {
        size_t mid = lo + (hi - lo) / 2;
        if (s->y[mid] <= t)
            lo = mid;
        else
            hi = mid;
    }
    return (long)lo;
}

/* Linear interpolation of column k at t in segment i (y_i ≤ t < y_{i+1}),
 * written as a convex combination so that rounding can never make it
 * negative, even when the segment spans hundreds of orders of magnitude. */
static double interpolate(const table_state *s, long i, long k, double t)
{
    double y0 = s->y[i], y1 = s->y[i + 1];
    double f0 = s->f[i * s->nl + k], f1 = s->f[(i + 1) * s->nl + k];
    double w = (t - y0) / (y1 - y0); /* in [0, 1]: the roundings are monotone */
    return f0 * (1.0 - w) + f1 * w;
}

static double cdf(const qc_model *m, double x, double t, int upper)
{
    const table_state *s = m->state;
    long k = column(s, x);
    if (k < 0)
        return NAN;
    long i = segment(s, t);
    size_t nl = s->nl;
    if (i < 0)
        return upper ? 1.0 : 0.0;
    if (i == (long)s->ny - 1)
        return upper ? 0.0 : 1.0;
    double y0 = s->y[i], y1 = s->y[i + 1];
    double f0 = s->f[i * nl + k], f1 = s->f[(i + 1) * nl + k];
    double ft = interpolate(s, i, k, t);
    /* halves first: the sum of two densities near DBL_MAX must not overflow */
    if (!upper)
        return s->cl[i * nl + k] + (t - y0) * (0.5 * f0 + 0.5 * ft);
    return s->cr[(i + 1) * nl + k] + (y1 - t) * (0.5 * ft + 0.5 * f1);
}

static double table_below(const qc_model *m, double x, double t)
{
    return cdf(m, x, t, 0);
}

static double table_above(const qc_model *m, double x, double t)
{
    return cdf(m, x, t, 1);
}

static double table_density(const qc_model *m, double x, double y)
{
    const table_state *s = m->state;
    long k = column(s, x);
    if (k < 0)
        return NAN;
    long i = segment(s, y);
    if (i < 0 || i == (long)s->ny - 1)
        return 0.0;
    return interpolate(s, i, k, y);
}

static void table_support(const qc_model *m, double x, double *lo, double *hi)
{
    (void)x;
    const table_state *s = m->state;
    *lo = s->y[0];
    *hi = s->y[s->ny - 1];
}

static qc_status table_check_level(const qc_model *m, double x)
{
    const table_state *s = m->state;
    if (column(s, x) >= 0)
        return QC_OK;
    char list[256];
    size_t used = 0;
    for (size_t k = 0; k < s->nl && used + 32 < sizeof list; k++)
        used += (size_t)snprintf(list + used, sizeof list - used, "%s%g",
                                 k ? ", " : "", s->levels[k]);
    return qc_fail(QC_EINVAL, "%g is not one of the table's levels (%s)", x, list);
}

/* Exact moments of the piecewise-linear density: the mean, then the
 * variance as the second moment about that mean (two passes, so that a
 * narrow density far from 0 does not lose its variance to cancellation). */
static qc_status table_moments(const qc_model *m, double x, double *mean,
                               double *var)
{
    const table_state *s = m->state;
    long k = column(s, x);
    if (k < 0)
        return table_check_level(m, x);
    double m1 = 0.0, m2 = 0.0;
    for (size_t i = 0; i + 1 < s->ny; i++) {
        double a = s->y[i], b = s->y[i + 1], d = b - a;
        double fa = s->f[i * s->nl + k], fb = s->f[(i + 1) * s->nl + k];
        m1 += d / 6.0 * (fa * (2 * a + b) + fb * (a + 2 * b));
    }
    for (size_t i = 0; i + 1 < s->ny; i++) {
        double a = s->y[i] - m1, b = s->y[i + 1] - m1, d = b - a;
        double fa = s->f[i * s->nl + k], fb = s->f[(i + 1) * s->nl + k];
        m2 += d / 12.0 * (fa * (3 * a * a + 2 * a * b + b * b) +
                          fb * (a * a + 2 * a * b + 3 * b * b));
    }
    if (!isfinite(m1) || !isfinite(m2))
        return qc_fail(QC_ENUMERIC,
                       "table: the variance of level %g overflows a double "
                       "(output values too large)",
                       x);
    *mean = m1;
    *var = m2; /* a sum of non-negative terms */
    return QC_OK;
}

qc_status qc_model_table_levels(const qc_model *model, const double **levels,
                                size_t *nlevels)
{
    if (!model || model->type != &qc_model_table)
        return qc_fail(QC_EINVAL, "not a 'table' model");
    const table_state *s = model->state;
    *levels = s->levels;
    *nlevels = s->nl;
    return QC_OK;
}

static const char *const table_keys[] = {"table", NULL};

const qc_model_type qc_model_table = {
    .name = "table",
    .summary = "measured densities per level from a table file (piecewise linear)",
    .output = QC_OUTPUT_REAL,
    .properties = QC_MODEL_FROM_FILE | QC_MODEL_KINKED_DENSITY,
    .nparams = 0,
    .params = NULL,
    .check = table_check,
    .destroy = table_destroy,
    .below = table_below,
    .above = table_above,
    .density = table_density,
    .support = table_support,
    .check_level = table_check_level,
    .moments = table_moments,
    .keys = table_keys,
    .level_unit = "table level units",
    .output_unit = "table y units",
};

/* ---- reader ---------------------------------------------------------- */

/* Growable array of doubles. */
typedef struct {
    double *v;
    size_t n, cap;
} vec;

static int vec_push(vec *a, double x)
{
    if (a->n == a->cap) {
        size_t cap = a->cap ? 2 * a->cap : 64;
        double *v = realloc(a->v, cap * sizeof *v);
        if (!v)
            return -1;
        a->v = v;
        a->cap = cap;
    }
    a->v[a->n++] = x;
    return 0;
}

/* Split one line (without its comment) into numbers separated by
 * whitespace and/or single commas; `first` = 1 allows a leading word
 * (returned in *word). Errors name name:line and the field. */
static qc_status split_numbers(const char *line, const char *name, size_t lineno,
                               vec *out, char *word, size_t wordlen)
{
    out->n = 0;
    const char *p = line;
    size_t field = 0;
    int comma = 0;
    if (word)
        word[0] = '\0';
    for (;;) {
        while (*p == ' ' || *p == '\t' || *p == '\r')
            p++;
        if (*p == ',') {
            if (comma || field == 0)
                return qc_fail(QC_EFORMAT, "%s:%zu: empty field", name, lineno);
            comma = 1;
            p++;
            continue;
        }
        if (*p == '\0') {
            if (comma)
                return qc_fail(QC_EFORMAT, "%s:%zu: trailing ','", name, lineno);
            return QC_OK;
        }
        const char *start = p;
        while (*p && *p != ' ' && *p != '\t' && *p != '\r' && *p != ',')
            p++;
        size_t len = (size_t)(p - start);
        char tok[128];
        if (len >= sizeof tok)
            return qc_fail(QC_EFORMAT, "%s:%zu: field %zu is too long", name,
                           lineno, field + 1);
        memcpy(tok, start, len);
        tok[len] = '\0';
        comma = 0;
        if (word && field == 0 && out->n == 0 && word[0] == '\0' &&
            ((tok[0] >= 'a' && tok[0] <= 'z') || (tok[0] >= 'A' && tok[0] <= 'Z')) &&
            strcmp(tok, "nan") != 0 && strcmp(tok, "inf") != 0 &&
            strcmp(tok, "NAN") != 0 && strcmp(tok, "INF") != 0) {
            snprintf(word, wordlen, "%s", tok);
            field++;
            continue;
        }
        errno = 0;
        char *end;
        char shown[4 * QC_QUOTE_CHARS + 8];
        double v = strtod(tok, &end);
        if (end == tok || *end != '\0')
            return qc_fail(QC_EFORMAT, "%s:%zu: field %zu '%s' is not a number", name,
                           lineno, field + 1, qc_quote(tok, strlen(tok), QC_QUOTE_CHARS, shown, sizeof shown));
        if (!isfinite(v)) /* nan, inf, or overflow to inf */
            return qc_fail(QC_EFORMAT, "%s:%zu: field %zu '%s' is not a finite number",
                           name, lineno, field + 1, qc_quote(tok, strlen(tok), QC_QUOTE_CHARS, shown, sizeof shown));
        if (vec_push(out, v) != 0)
            return qc_fail(QC_ENOMEM, "out of memory");
        field++;
    }
}

static qc_status finish(table_state *s, const char *name)
{
    size_t nl = s->nl, ny = s->ny;
    s->cl = qc_malloc_array(ny * nl, sizeof *s->cl);
    s->cr = qc_malloc_array(ny * nl, sizeof *s->cr);
    if (!s->cl || !s->cr)
        return qc_fail(QC_ENOMEM, "out of memory");
    for (size_t k = 0; k < nl; k++) {
        /* Scale the column to a peak of 1 first: values near the ends of
         * the double range (subnormal or huge) would otherwise make the
         * area inexact or infinite. */
        double peak = 0.0;
        for (size_t i = 0; i < ny; i++)
            peak = fmax(peak, s->f[i * nl + k]);
        if (peak > 0.0)
            for (size_t i = 0; i < ny; i++)
                s->f[i * nl + k] /= peak;
        s->cl[k] = 0.0;
        for (size_t i = 1; i < ny; i++)
            s->cl[i * nl + k] = s->cl[(i - 1) * nl + k] +
                                0.5 * (s->y[i] - s->y[i - 1]) *
                                    (s->f[(i - 1) * nl + k] + s->f[i * nl + k]);
        double total = s->cl[(ny - 1) * nl + k];
        if (!(total > 0.0) || !isfinite(total))
            return qc_fail(QC_EFORMAT,
                           "%s: the density of level %g integrates to %g "
                           "(needs a positive finite area)",
                           name, s->levels[k], total);
        s->cr[(ny - 1) * nl + k] = 0.0;
        for (size_t i = ny - 1; i-- > 0;)
            s->cr[i * nl + k] = s->cr[(i + 1) * nl + k] +
                                0.5 * (s->y[i + 1] - s->y[i]) *
                                    (s->f[i * nl + k] + s->f[(i + 1) * nl + k]);
        for (size_t i = 0; i < ny; i++) {
            s->f[i * nl + k] /= total;
            s->cl[i * nl + k] /= total;
            s->cr[i * nl + k] /= total;
            if (!isfinite(s->f[i * nl + k]))
                return qc_fail(QC_EFORMAT,
                               "%s: the density of level %g integrates to only %g, "
                               "too little to normalize in double precision "
                               "(rows too close together?)",
                               name, s->levels[k], total);
        }
    }
    return QC_OK;
}

qc_status qc_model_table_parse(const char *text, size_t len, const char *name,
                               qc_model **out)
{
    *out = NULL;
    qc_gsl_init();
    if (!name)
        name = "table";
    qc_status st = QC_OK;
    table_state *s = calloc(1, sizeof *s);
    vec nums = {0}, ys = {0}, vals = {0};
    char *line = malloc(len + 1);
    if (!s || !line) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto fail;
    }
    size_t pos = 0, lineno = 0;
    int have_levels = 0;
    while (pos < len) {
        size_t end = pos;
        while (end < len && text[end] != '\n')
            end++;
        lineno++;
        size_t n = end - pos;
        memcpy(line, text + pos, n);
        line[n] = '\0';
        pos = end + 1;
        if (memchr(line, '\0', n)) {
            st = qc_fail(QC_EFORMAT, "%s:%zu: NUL byte in the text", name, lineno);
            goto fail;
        }
        char *hash = strchr(line, '#');
        if (hash)
            *hash = '\0';
        char word[128];
        st = split_numbers(line, name, lineno, &nums, word, sizeof word);
        if (st != QC_OK)
            goto fail;
        if (nums.n == 0 && word[0] == '\0')
            continue; /* blank or comment */
        if (!have_levels) {
            if (strcmp(word, "levels") != 0) {
                st = qc_fail(QC_EFORMAT,
                             "%s:%zu: expected the header 'levels x1 x2 ...' "
                             "before the data rows",
                             name, lineno);
                goto fail;
            }
            if (nums.n == 0) {
                st = qc_fail(QC_EFORMAT, "%s:%zu: the 'levels' header lists no levels",
                             name, lineno);
                goto fail;
            }
            s->nl = nums.n;
            s->levels = qc_malloc_array(nums.n, sizeof *s->levels);
            if (!s->levels) {
                st = qc_fail(QC_ENOMEM, "out of memory");
                goto fail;
            }
            for (size_t k = 0; k < nums.n; k++) {
                for (size_t j = 0; j < k; j++)
                    if (s->levels[j] == nums.v[k]) {
                        st = qc_fail(QC_EFORMAT, "%s:%zu: level %g is listed twice",
                                     name, lineno, nums.v[k]);
                        goto fail;
                    }
                s->levels[k] = nums.v[k];
            }
            have_levels = 1;
            continue;
        }
        if (word[0] != '\0') {
            char shown[4 * QC_QUOTE_CHARS + 8];
            st = qc_fail(QC_EFORMAT, "%s:%zu: field 1 '%s' is not a number", name,
                         lineno, qc_quote(word, strlen(word), QC_QUOTE_CHARS, shown, sizeof shown));
            goto fail;
        }
        if (nums.n != s->nl + 1) {
            st = qc_fail(QC_EFORMAT,
                         "%s:%zu: row has %zu fields, expected %zu (y and one "
                         "density per level)",
                         name, lineno, nums.n, s->nl + 1);
            goto fail;
        }
        if (ys.n > 0 && !(nums.v[0] > ys.v[ys.n - 1])) {
            st = qc_fail(QC_EFORMAT,
                         "%s:%zu: y = %g is not above the previous row's y = %g",
                         name, lineno, nums.v[0], ys.v[ys.n - 1]);
            goto fail;
        }
        for (size_t k = 1; k <= s->nl; k++)
            if (nums.v[k] < 0.0) {
                st = qc_fail(QC_EFORMAT,
                             "%s:%zu: negative density %g for level %g (field %zu)",
                             name, lineno, nums.v[k], s->levels[k - 1], k + 1);
                goto fail;
            }
        if (vec_push(&ys, nums.v[0]) != 0) {
            st = qc_fail(QC_ENOMEM, "out of memory");
            goto fail;
        }
        for (size_t k = 1; k <= s->nl; k++)
            if (vec_push(&vals, nums.v[k]) != 0) {
                st = qc_fail(QC_ENOMEM, "out of memory");
                goto fail;
            }
    }
    if (!have_levels) {
        st = qc_fail(QC_EFORMAT, "%s: empty table (no 'levels' header)", name);
        goto fail;
    }
    if (ys.n < 2) {
        st = qc_fail(QC_EFORMAT, "%s: needs at least 2 data rows (has %zu)", name,
                     ys.n);
        goto fail;
    }
    s->ny = ys.n;
    s->y = ys.v;
    s->f = vals.v;
    ys.v = vals.v = NULL;
    st = finish(s, name);
    if (st != QC_OK)
        goto fail;
    qc_model *m = calloc(1, sizeof *m);
    if (!m) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto fail;
    }
    m->type = &qc_model_table;
    m->state = s;
    free(nums.v);
    free(line);
    *out = m;
    return QC_OK;
fail:
    table_destroy(s);
    free(nums.v);
    free(ys.v);
    free(vals.v);
    free(line);
    return st;
}

qc_status qc_model_table_load(const char *path, qc_model **out)
{
    *out = NULL;
    char *buf;
    size_t len;
    qc_status st = qc_read_file(path, (size_t)1 << 30, "1 GiB", &buf, &len);
    if (st == QC_OK)
        st = qc_model_table_parse(buf, len, path, out);
    free(buf);
    return st;
}

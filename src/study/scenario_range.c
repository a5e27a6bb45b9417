/* scenario_range.c — the range items of a scenario's sweep axes:
 * `FROM to TO step STEP` (FROM, FROM + STEP, ..., TO) and `FROM to TO
 * count N` (N equally spaced values, both ends included). A range goes up
 * and always ends on TO; the exact rules are in docs/formats.md ("Sweep
 * axes"). The colon form of earlier versions (start:step:stop) is refused
 * with the equivalent range in the message. */
#include "study/scenario.h"

#include "core/internal.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* TO ends a `step` range when it lies within this fraction of a step of
 * FROM + k·STEP for a whole k (absorbs the rounding of decimal steps such
 * as 0.1). */
#define RANGE_LAND_TOL 1e-9
/* A computed value this small against the spacing is a rounded 0. */
#define RANGE_ZERO_TOL 1e-12
#define RANGE_MAX_TOKENS 6
#define RANGE_MSG_MAX 768

static int is_blank(char c) { return c == ' ' || c == '\t'; }

static int is_word(const char *t)
{
    return strcmp(t, "to") == 0 || strcmp(t, "step") == 0 || strcmp(t, "count") == 0;
}

/* Split `copy` in place at blanks; returns the number of tokens (at most
 * RANGE_MAX_TOKENS are stored, the count goes on). */
static size_t split(char *copy, char *tok[RANGE_MAX_TOKENS])
{
    size_t n = 0;
    char *p = copy;
    for (;;) {
        while (is_blank(*p))
            p++;
        if (!*p)
            return n;
        if (n < RANGE_MAX_TOKENS)
            tok[n] = p;
        n++;
        while (*p && !is_blank(*p))
            p++;
        if (*p)
            *p++ = '\0';
    }
}

static double snap_zero(double x, double spacing)
{
    return fabs(x) < RANGE_ZERO_TOL * fabs(spacing) ? 0.0 : x;
}

/* "start:step:stop" with three numbers: the form of earlier versions. */
static int old_form(const char *item, double v[3])
{
    const char *c1 = strchr(item, ':');
    const char *c2 = c1 ? strchr(c1 + 1, ':') : NULL;
    if (!c1 || !c2 || strchr(c2 + 1, ':'))
        return 0;
    const char *from[3] = {item, c1 + 1, c2 + 1};
    size_t len[3] = {(size_t)(c1 - item), (size_t)(c2 - c1 - 1), strlen(c2 + 1)};
    for (int i = 0; i < 3; i++) {
        char part[128];
        if (len[i] >= sizeof part)
            return 0;
        memcpy(part, from[i], len[i]);
        part[len[i]] = '\0';
        if (qc_parse_double(part, &v[i]) != QC_OK)
            return 0;
    }
    return 1;
}

/* The message for start:step:stop: the same values as a range of ours
 * (ascending), or the general form when there is none. */
static qc_status refuse_old_form(const double v[3], const char *loc, const char *key)
{
    double start = v[0], step = v[1], stop = v[2];
    double span = (stop - start) / step;
    char write[160] = "FROM to TO step STEP' or 'FROM to TO count N";
    if (step != 0.0 && isfinite(span) && span > -RANGE_LAND_TOL &&
        span < QC_SCENARIO_MAX_AXIS_VALUES) {
        double k = floor(span + RANGE_LAND_TOL);
        double last = fabs(span - k) <= RANGE_LAND_TOL ? stop : start + k * step;
        last = snap_zero(last, step);
        double lo = step > 0 ? start : last, hi = step > 0 ? last : start;
        if (k >= 1.0)
            snprintf(write, sizeof write, "%.15g to %.15g step %.15g", lo, hi, fabs(step));
        else
            snprintf(write, sizeof write, "%.15g", start);
    }
    return qc_fail(QC_EINVAL, "%s: '%s': the range form a:b:c is not accepted; write '%s'", loc,
                   key, write);
}

/* A number of the range, or a message naming the range. */
static qc_status range_number(const char *tok, const char *what, const char *item,
                              const char *loc, const char *key, double *out)
{
    if (qc_parse_double(tok, out) == QC_OK)
        return QC_OK;
    char msg[RANGE_MSG_MAX];
    snprintf(msg, sizeof msg, "%s", qc_last_error());
    return qc_fail(QC_EINVAL, "%s: '%s': %s of '%s': %s", loc, key, what, item, msg);
}

static qc_status expand_step(double from, double to, const char *tok, const char *item,
                             const char *loc, const char *key, double **out, size_t *n)
{
    double step;
    qc_status st = range_number(tok, "the step", item, loc, key, &step);
    if (st != QC_OK)
        return st;
    if (step == 0.0)
        return qc_fail(QC_EINVAL, "%s: '%s': the step of '%s' must not be 0", loc, key, item);
    if (step < 0.0)
        return qc_fail(QC_EINVAL,
                       "%s: '%s': the step of '%s' must be > 0 (a range goes up from FROM to "
                       "TO)",
                       loc, key, item);
    double span = (to - from) / step;
    if (!(span < QC_SCENARIO_MAX_AXIS_VALUES))
        return qc_fail(QC_EINVAL, "%s: '%s': '%s' has more than %d values", loc, key, item,
                       QC_SCENARIO_MAX_AXIS_VALUES);
    double k = round(span);
    if (fabs(span - k) > RANGE_LAND_TOL) {
        double below = floor(span), above = below + 1.0;
        double lo = snap_zero(from + below * step, step);
        double hi = snap_zero(from + above * step, step);
        char lower[96] = "";
        if (below >= 1.0)
            snprintf(lower, sizeof lower, "'%.15g to %.15g step %.15g' or ", from, lo, step);
        return qc_fail(QC_EINVAL,
                       "%s: '%s': '%s' does not end on %.15g (the steps give %.15g, then "
                       "%.15g); write %s'%.15g to %.15g step %.15g', or use 'count'",
                       loc, key, item, to, lo, hi, lower, from, hi, step);
    }
    *n = (size_t)k + 1;
    *out = malloc(*n * sizeof **out);
    if (!*out)
        return qc_fail(QC_ENOMEM, "out of memory");
    for (size_t i = 0; i + 1 < *n; i++)
        (*out)[i] = snap_zero(from + (double)i * step, step);
    (*out)[*n - 1] = to;
    return QC_OK;
}

static qc_status expand_count(double from, double to, const char *tok, const char *item,
                              const char *loc, const char *key, double **out, size_t *n)
{
    size_t count;
    if (qc_parse_size(tok, 2, QC_SCENARIO_MAX_AXIS_VALUES, &count) != QC_OK)
        return qc_fail(QC_EINVAL,
                       "%s: '%s': the count of '%s' must be a whole number from 2 to %d (got "
                       "'%s')",
                       loc, key, item, QC_SCENARIO_MAX_AXIS_VALUES, tok);
    *out = malloc(count * sizeof **out);
    if (!*out)
        return qc_fail(QC_ENOMEM, "out of memory");
    /* (1 − t)·FROM + t·TO: exact at both ends, no overflow for wide ranges */
    double last = (double)(count - 1);
    double spacing = to / last - from / last;
    for (size_t i = 0; i < count; i++) {
        double t = (double)i / last;
        (*out)[i] = snap_zero((1.0 - t) * from + t * to, spacing);
    }
    (*out)[0] = from;
    (*out)[count - 1] = to;
    *n = count;
    return QC_OK;
}

/* FROM to TO step|count X, as five tokens. */
static qc_status expand_tokens(char *const tok[5], const char *item, const char *loc,
                               const char *key, double **out, size_t *n)
{
    double from, to;
    qc_status st = range_number(tok[0], "FROM", item, loc, key, &from);
    if (st == QC_OK)
        st = range_number(tok[2], "TO", item, loc, key, &to);
    if (st != QC_OK)
        return st;
    if (from > to)
        return qc_fail(QC_EINVAL,
                       "%s: '%s': '%s' goes down; a range goes up from FROM to TO: write "
                       "'%s to %s %s %s'",
                       loc, key, item, tok[2], tok[0], tok[3], tok[4]);
    if (from == to)
        return qc_fail(QC_EINVAL,
                       "%s: '%s': '%s' starts and ends at %s; write the single value", loc,
                       key, item, tok[0]);
    if (strcmp(tok[3], "step") == 0)
        return expand_step(from, to, tok[4], item, loc, key, out, n);
    return expand_count(from, to, tok[4], item, loc, key, out, n);
}

/* Written as a range: a number followed by a range word ("0 to 5", "0 step
 * 1"), or the five words of one ("x to 5 step 1", a bad FROM). A text such
 * as a file name with " to " in it is not. */
static int range_like(char *const tok[RANGE_MAX_TOKENS], size_t ntok)
{
    if (ntok == 5 && strcmp(tok[1], "to") == 0 &&
        (strcmp(tok[3], "step") == 0 || strcmp(tok[3], "count") == 0))
        return 1;
    double x;
    if (ntok < 2 || qc_parse_double(tok[0], &x) != QC_OK)
        return 0;
    for (size_t i = 1; i < ntok && i < RANGE_MAX_TOKENS; i++)
        if (is_word(tok[i]))
            return 1;
    return 0;
}

int sc_range_is(const char *value)
{
    for (const char *p = value;;) {
        const char *comma = strchr(p, ',');
        size_t len = comma ? (size_t)(comma - p) : strlen(p);
        char copy[256];
        snprintf(copy, sizeof copy, "%.*s", (int)(len < sizeof copy ? len : sizeof copy - 1),
                 p);
        char *tok[RANGE_MAX_TOKENS];
        if (range_like(tok, split(copy, tok)))
            return 1;
        if (!comma)
            return 0;
        p = comma + 1;
    }
}

qc_status sc_range_expand(const char *item, const char *loc, const char *key, double **out,
                          size_t *n)
{
    *out = NULL;
    *n = 0;
    double v[3];
    if (old_form(item, v))
        return refuse_old_form(v, loc, key);
    char *copy = strdup(item);
    if (!copy)
        return qc_fail(QC_ENOMEM, "out of memory");
    char *tok[RANGE_MAX_TOKENS];
    size_t ntok = split(copy, tok);
    qc_status st = QC_OK; /* not a range: a single value */
    if (!range_like(tok, ntok))
        st = QC_OK;
    else if (ntok != 5 || strcmp(tok[1], "to") != 0 ||
             (strcmp(tok[3], "step") != 0 && strcmp(tok[3], "count") != 0))
        st = qc_fail(QC_EINVAL,
                     "%s: '%s': '%s' is not a range; write 'FROM to TO step STEP' or 'FROM to "
                     "TO count N'",
                     loc, key, item);
    else
        st = expand_tokens(tok, item, loc, key, out, n);
    free(copy);
    return st;
}

/* parse.c — strict parsing of numbers and number lists from text: the
 * whole field must be a finite number (no atof, no silent clamps); and the
 * edit distance behind "did you mean" hints; the JSON/CSV spelling of a key. */
#include "core/internal.h"
#include "core/parse.h"

#include <errno.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#define FIELD_MAX 128

static int is_blank(char c) { return c == ' ' || c == '\t'; }

/* Copy text[0..len) without surrounding blanks into buf; 0 if it fits. */
static int trimmed(const char *text, size_t len, char *buf, size_t cap)
{
    while (len > 0 && is_blank(*text)) {
        text++;
        len--;
    }
    while (len > 0 && is_blank(text[len - 1]))
        len--;
    if (len >= cap)
        return -1;
    memcpy(buf, text, len);
    buf[len] = '\0';
    return 0;
}

/* The one number grammar of every option and key: a decimal number,
 * [+-]digits[.digits][(e|E)[+-]digits] (a leading or trailing point is
 * allowed: ".5", "5."). Hexadecimal, inf and nan, which strtod would
 * take, are not numbers here. */
static int is_decimal(const char *s)
{
    size_t digits = 0;
    if (*s == '+' || *s == '-')
        s++;
    for (; *s >= '0' && *s <= '9'; s++)
        digits++;
    if (*s == '.')
        for (s++; *s >= '0' && *s <= '9'; s++)
            digits++;
    if (digits == 0)
        return 0;
    if (*s == 'e' || *s == 'E') {
        s++;
        if (*s == '+' || *s == '-')
            s++;
        if (!(*s >= '0' && *s <= '9'))
            return 0;
        while (*s >= '0' && *s <= '9')
            s++;
    }
    return *s == '\0';
}

static qc_status parse_field(const char *field, double *out)
{
    if (field[0] == '\0')
        return qc_fail(QC_EINVAL, "empty value where a number was expected");
    char shown[4 * QC_QUOTE_CHARS + 8];
    if (!is_decimal(field))
        return qc_fail(QC_EINVAL, "'%s' is not a decimal number (expected e.g. 12, -0.5, 3e-9)",
                       qc_quote(field, strlen(field), QC_QUOTE_CHARS, shown, sizeof shown));
    char *end;
    errno = 0;
    double v = strtod(field, &end);
    if (end == field || *end != '\0')
        return qc_fail(QC_EINVAL, "'%s' is not a decimal number",
                       qc_quote(field, strlen(field), QC_QUOTE_CHARS, shown, sizeof shown));
    if (!isfinite(v) || (errno == ERANGE && fabs(v) > 1.0))
        return qc_fail(QC_EINVAL, "'%s' is not a finite number in range", qc_quote(field, strlen(field), QC_QUOTE_CHARS, shown, sizeof shown));
    *out = v; /* on underflow strtod gives the nearest subnormal or 0 */
    return QC_OK;
}

qc_status qc_parse_double(const char *text, double *out)
{
    char buf[FIELD_MAX];
    if (!text || trimmed(text, strlen(text), buf, sizeof buf) != 0)
        return qc_fail(QC_EINVAL, "value is too long to be a number");
    return parse_field(buf, out);
}

qc_status qc_parse_size(const char *text, size_t lo, size_t hi, size_t *out)
{
    char buf[FIELD_MAX];
    if (!text || trimmed(text, strlen(text), buf, sizeof buf) != 0)
        return qc_fail(QC_EINVAL, "value is too long to be a whole number");
    char *end;
    errno = 0;
    unsigned long long v = 0;
    int ok = buf[0] >= '0' && buf[0] <= '9';
    if (ok) {
        v = strtoull(buf, &end, 10);
        ok = *end == '\0' && errno != ERANGE && v >= lo && v <= hi;
    }
    char shown[4 * QC_QUOTE_CHARS + 8];
    if (!ok)
        return qc_fail(QC_EINVAL, "'%s' is not a whole number from %zu to %zu", qc_quote(buf, strlen(buf), QC_QUOTE_CHARS, shown, sizeof shown), lo, hi);
    *out = (size_t)v;
    return QC_OK;
}

qc_status qc_parse_list(const char *text, double **out, size_t *n)
{
    *out = NULL;
    *n = 0;
    if (!text)
        return qc_fail(QC_EINVAL, "no values given");
    size_t cap = 1;
    for (const char *p = text; *p; p++)
        cap += *p == ',';
    if (cap > QC_DMC_MAX_DIM)
        return qc_fail(QC_EINVAL, "too many values (%zu, at most %zu)", cap,
                       (size_t)QC_DMC_MAX_DIM);
    double *v = qc_malloc_array(cap, sizeof *v);
    if (!v)
        return qc_fail(QC_ENOMEM, "out of memory");
    const char *p = text;
    size_t k = 0;
    for (;;) {
        const char *comma = strchr(p, ',');
        size_t len = comma ? (size_t)(comma - p) : strlen(p);
        char buf[FIELD_MAX];
        if (trimmed(p, len, buf, sizeof buf) != 0) {
            free(v);
            return qc_fail(QC_EINVAL, "value %zu is too long to be a number", k + 1);
        }
        if (buf[0] == '\0') {
            free(v);
            char shown[4 * QC_QUOTE_CHARS + 8];
            return qc_fail(QC_EINVAL, "value %zu is empty in '%s'", k + 1, qc_quote(text, strlen(text), QC_QUOTE_CHARS, shown, sizeof shown));
        }
        if (parse_field(buf, &v[k]) != QC_OK) {
            free(v);
            return qc_fail(QC_EINVAL, "value %zu: %s", k + 1, qc_last_error());
        }
        k++;
        if (!comma)
            break;
        p = comma + 1;
    }
    *out = v;
    *n = k;
    return QC_OK;
}

size_t qc_edit_distance(const char *s, const char *t)
{
    size_t m = strlen(s), n = strlen(t);
    if (m > 63 || n > 63)
        return 99;
    size_t d[64][64];
    for (size_t i = 0; i <= m; i++)
        d[i][0] = i;
    for (size_t j = 0; j <= n; j++)
        d[0][j] = j;
    for (size_t i = 1; i <= m; i++)
        for (size_t j = 1; j <= n; j++) {
            size_t best = d[i - 1][j - 1] + (s[i - 1] != t[j - 1]);
            if (d[i - 1][j] + 1 < best)
                best = d[i - 1][j] + 1;
            if (d[i][j - 1] + 1 < best)
                best = d[i][j - 1] + 1;
            d[i][j] = best;
        }
    return d[m][n];
}

void qc_field_name(const char *key, char *buf, size_t cap)
{
    if (cap == 0)
        return;
    size_t i = 0;
    for (; key[i] && i + 1 < cap; i++)
        buf[i] = key[i] == '-' ? '_' : key[i];
    buf[i] = '\0';
}

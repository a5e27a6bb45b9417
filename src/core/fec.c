/* fec.c — forward error correction codes as planners describe them: an
 * overhead and a threshold, either a pre-FEC bit error rate (hard
 * decision: the code closes the link at or below it) or a normalized GMI
 * (soft decision: at or above it; J. Cho, L. Schmalen, P. Winzer, ECOC
 * 2017). The table of common classes (data/fec.tsv) is compiled in. The
 * net rate of a closing point is H(X) − (1 − R_c)·m bits per symbol
 * (probabilistic amplitude shaping bookkeeping: G. Böcherer, F. Steiner,
 * P. Schulte, "Bandwidth efficient and rate-matched low-density
 * parity-check coded modulation", IEEE Trans. Commun. 63(12), 2015),
 * which is R_c·m for a uniform law. */
#include "core/internal.h"
#include "core/parse.h"
#include "quantcap/figures.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <threads.h>

#include "fec_table.h" /* fec_tsv: data/fec.tsv as a string */

#define FEC_TABLE_MAX 64
#define LINE_MAX_CHARS 1024

static int valid_threshold(qc_fec_kind kind, double v)
{
    return kind == QC_FEC_HARD ? v > 0.0 && v < 0.5 : v > 0.0 && v <= 1.0;
}

static const char *threshold_range(qc_fec_kind kind)
{
    return kind == QC_FEC_HARD ? "a bit error rate in (0, 0.5)" : "an NGMI in (0, 1]";
}

/* One table line: name, overhead %, kind, value, note (tabs). */
static qc_status parse_line(char *line, const char *name, size_t lineno, qc_fec *f)
{
    char *field[5] = {0};
    size_t nf = 0;
    for (char *p = line; nf < 5;) {
        field[nf++] = p;
        char *tab = strchr(p, '\t');
        if (!tab)
            break;
        *tab = '\0';
        p = tab + 1;
    }
    if (nf < 4)
        return qc_fail(QC_EFORMAT, "%s:%zu: expected name, overhead %%, ber|ngmi, value and a "
                                   "note separated by tabs (got %zu fields)",
                       name, lineno, nf);
    if (field[0][0] == '\0' || strlen(field[0]) >= QC_FEC_NAME_MAX)
        return qc_fail(QC_EFORMAT, "%s:%zu: the name must have 1 to %d characters", name,
                       lineno, QC_FEC_NAME_MAX - 1);
    memset(f, 0, sizeof *f);
    snprintf(f->name, sizeof f->name, "%s", field[0]);
    double oh, v;
    if (qc_parse_double(field[1], &oh) != QC_OK || !(oh >= 0.0) || !isfinite(oh))
        return qc_fail(QC_EFORMAT, "%s:%zu: overhead '%s' is not a percentage >= 0", name,
                       lineno, field[1]);
    if (strcmp(field[2], "ber") == 0)
        f->kind = QC_FEC_HARD;
    else if (strcmp(field[2], "ngmi") == 0)
        f->kind = QC_FEC_SOFT;
    else
        return qc_fail(QC_EFORMAT, "%s:%zu: threshold kind '%s' is not ber or ngmi", name,
                       lineno, field[2]);
    if (qc_parse_double(field[3], &v) != QC_OK || !valid_threshold(f->kind, v))
        return qc_fail(QC_EFORMAT, "%s:%zu: threshold '%s' is not %s", name, lineno, field[3],
                       threshold_range(f->kind));
    f->overhead = oh / 100.0;
    f->threshold = v;
    return QC_OK;
}

qc_status qc_fec_table_parse(const char *text, size_t len, const char *name, qc_fec **out,
                             size_t *n)
{
    *out = NULL;
    *n = 0;
    qc_fec *t = qc_malloc_array(FEC_TABLE_MAX, sizeof *t);
    if (!t)
        return qc_fail(QC_ENOMEM, "out of memory");
    size_t count = 0, lineno = 0;
    qc_status st = QC_OK;
    for (size_t pos = 0; pos < len && st == QC_OK;) {
        size_t end = pos;
        while (end < len && text[end] != '\n')
            end++;
        lineno++;
        char line[LINE_MAX_CHARS];
        size_t ll = end - pos;
        if (ll >= sizeof line) {
            st = qc_fail(QC_EFORMAT, "%s:%zu: line longer than %d characters", name, lineno,
                         LINE_MAX_CHARS - 1);
            break;
        }
        memcpy(line, text + pos, ll);
        line[ll] = '\0';
        if (ll && line[ll - 1] == '\r')
            line[--ll] = '\0';
        pos = end + 1;
        if (ll == 0 || line[0] == '#')
            continue;
        if (count == FEC_TABLE_MAX) {
            st = qc_fail(QC_EFORMAT, "%s:%zu: more than %d codes", name, lineno, FEC_TABLE_MAX);
            break;
        }
        if ((st = parse_line(line, name, lineno, &t[count])) != QC_OK)
            break;
        for (size_t i = 0; i < count && st == QC_OK; i++)
            if (strcmp(t[i].name, t[count].name) == 0)
                st = qc_fail(QC_EFORMAT, "%s:%zu: code '%s' is listed twice", name, lineno,
                             t[count].name);
        count++;
    }
    if (st != QC_OK) {
        free(t);
        return st;
    }
    *out = t;
    *n = count;
    return QC_OK;
}

static qc_fec builtin[FEC_TABLE_MAX];
static size_t nbuiltin;
static int builtin_state; /* 0: not parsed, 1: parsed, -1: broken */
static once_flag builtin_once = ONCE_FLAG_INIT;

static void parse_builtin(void)
{
    qc_fec *t;
    size_t n;
    if (qc_fec_table_parse(fec_tsv, sizeof fec_tsv - 1, "data/fec.tsv", &t, &n) != QC_OK) {
        builtin_state = -1;
        return;
    }
    memcpy(builtin, t, n * sizeof *t);
    nbuiltin = n;
    free(t);
    builtin_state = 1;
}

const qc_fec *qc_fec_table(size_t *n)
{
    call_once(&builtin_once, parse_builtin);
    *n = builtin_state == 1 ? nbuiltin : 0;
    return builtin;
}

/* "overhead=PCT,ber=X" and the like: a user code. */
static qc_status parse_user(const char *spec, qc_fec *out)
{
    memset(out, 0, sizeof *out);
    snprintf(out->name, sizeof out->name, "user");
    double oh = NAN, rate = NAN, ber = NAN, ngmi = NAN;
    char buf[256];
    if (strlen(spec) >= sizeof buf)
        return qc_fail(QC_EINVAL, "FEC code: '%.40s...' is too long", spec);
    snprintf(buf, sizeof buf, "%s", spec);
    for (char *save = NULL, *item = strtok_r(buf, ",", &save); item;
         item = strtok_r(NULL, ",", &save)) {
        char *eq = strchr(item, '=');
        if (!eq)
            return qc_fail(QC_EINVAL, "FEC code: '%s' is not KEY=VALUE", item);
        *eq = '\0';
        double v;
        if (qc_parse_double(eq + 1, &v) != QC_OK)
            return qc_fail(QC_EINVAL, "FEC code: %s: '%s' is not a number", item, eq + 1);
        double *slot = strcmp(item, "overhead") == 0 ? &oh
                       : strcmp(item, "rate") == 0   ? &rate
                       : strcmp(item, "ber") == 0    ? &ber
                       : strcmp(item, "ngmi") == 0   ? &ngmi
                                                     : NULL;
        if (!slot)
            return qc_fail(QC_EINVAL, "FEC code: unknown key '%s' (expected overhead or rate, and "
                                      "ber or ngmi)",
                           item);
        if (!isnan(*slot))
            return qc_fail(QC_EINVAL, "FEC code: '%s' given twice", item);
        *slot = v;
    }
    if (isnan(oh) == isnan(rate))
        return qc_fail(QC_EINVAL, "FEC code: give the overhead (%%) or the code rate, exactly one");
    if (isnan(ber) == isnan(ngmi))
        return qc_fail(QC_EINVAL, "FEC code: give one threshold, ber=X (hard decision) or ngmi=X "
                                  "(soft decision)");
    if (!isnan(oh) && !(oh >= 0.0 && isfinite(oh)))
        return qc_fail(QC_EINVAL, "FEC code: overhead must be a percentage >= 0 (got %g)", oh);
    if (!isnan(rate) && !(rate > 0.0 && rate <= 1.0))
        return qc_fail(QC_EINVAL, "FEC code: code rate must lie in (0, 1] (got %g)", rate);
    out->overhead = isnan(oh) ? 1.0 / rate - 1.0 : oh / 100.0;
    out->kind = isnan(ber) ? QC_FEC_SOFT : QC_FEC_HARD;
    out->threshold = isnan(ber) ? ngmi : ber;
    if (!valid_threshold(out->kind, out->threshold))
        return qc_fail(QC_EINVAL, "FEC code: threshold %g is not %s", out->threshold,
                       threshold_range(out->kind));
    return QC_OK;
}

qc_status qc_fec_parse(const char *spec, qc_fec *out)
{
    if (!spec || !spec[0])
        return qc_fail(QC_EINVAL, "empty FEC code description");
    if (strchr(spec, '='))
        return parse_user(spec, out);
    size_t n;
    const qc_fec *t = qc_fec_table(&n);
    if (n == 0)
        return qc_fail(QC_EFORMAT, "the compiled-in FEC table is unreadable");
    char known[512] = "";
    for (size_t i = 0; i < n; i++) {
        if (strcmp(t[i].name, spec) == 0) {
            *out = t[i];
            return QC_OK;
        }
        strncat(known, i ? ", " : "", sizeof known - strlen(known) - 1);
        strncat(known, t[i].name, sizeof known - strlen(known) - 1);
    }
    return qc_fail(QC_EINVAL, "unknown FEC code '%s' (known: %s; or overhead=PCT,ber=X | "
                              "ngmi=X)",
                   spec, known);
}

qc_status qc_fec_evaluate(const qc_fec *fec, double pre_fec_ber, double ngmi,
                          double entropy_bits, double m_bits, qc_fec_outcome *out)
{
    out->closes = 0;
    out->margin = NAN;
    out->net_bits = NAN;
    if (!fec)
        return qc_fail(QC_EINVAL, "FEC code: no code given");
    if (!(fec->overhead >= 0.0) || !isfinite(fec->overhead) ||
        !valid_threshold(fec->kind, fec->threshold))
        return qc_fail(QC_EINVAL, "fec '%s': overhead %g or threshold %g out of range",
                       fec->name, fec->overhead, fec->threshold);
    if (fec->kind == QC_FEC_HARD) {
        if (isnan(pre_fec_ber))
            return qc_fail(QC_EINVAL, "fec '%s' needs the pre-FEC bit error rate, which is "
                                      "undefined here (bit labels need a power of 2 levels)",
                           fec->name);
        out->closes = pre_fec_ber <= fec->threshold;
        out->margin = pre_fec_ber > 0.0
                          ? qc_q_factor_db(pre_fec_ber) - qc_q_factor_db(fec->threshold)
                          : INFINITY;
    } else {
        if (isnan(ngmi))
            return qc_fail(QC_EINVAL, "fec '%s' needs the NGMI, which is undefined here (bit "
                                      "labels need a power of 2 levels)",
                           fec->name);
        out->closes = ngmi >= fec->threshold;
        out->margin = ngmi - fec->threshold;
    }
    double rc = 1.0 / (1.0 + fec->overhead);
    out->net_bits = out->closes ? fmax(0.0, entropy_bits - (1.0 - rc) * m_bits) : 0.0;
    return QC_OK;
}

/* unquantized_gmi.c — the bit-metric GMI (see src/core/gmi.c) with the
 * unquantized receiver output: adaptive quadrature per level (GSL QAGS),
 * or a sum over counts, as qc_unquantized_mi. */
#include "quantizer/quantizer.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_integration.h>

typedef struct {
    const qc_model *m;
    const double *levels, *input;
    const size_t *labels;
    size_t n;
    unsigned nbits;
    size_t x;   /* the level being integrated */
    double *g;  /* scratch: 2·nbits bit-value masses */
} gmi_ctx;

/* f(y|x)·Σ_b log(1 + g_{b,¬v}(y)/g_{b,v}(y)), v = bit b of x: level x's
 * share of Σ_b H(B_b|Y) at y. */
static double gmi_term(const gmi_ctx *c, double y)
{
    double f = qc_model_get_type(c->m)->density(c->m, c->levels[c->x], y);
    if (!(f > 0.0))
        return 0.0;
    memset(c->g, 0, 2 * (size_t)c->nbits * sizeof *c->g);
    for (size_t i = 0; i < c->n; i++) {
        if (!(c->input[i] > 0.0))
            continue;
        double p = c->input[i] * qc_model_get_type(c->m)->density(c->m, c->levels[i], y);
        if (!(p > 0.0))
            continue;
        for (unsigned b = 0; b < c->nbits; b++)
            c->g[2 * b + ((c->labels[i] >> b) & 1)] += p;
    }
    double s = 0.0;
    for (unsigned b = 0; b < c->nbits; b++) {
        unsigned v = (c->labels[c->x] >> b) & 1;
        double own = c->g[2 * b + v], other = c->g[2 * b + (v ^ 1u)];
        if (own > 0.0)
            s += qc_log1p_ratio(other, own);
    }
    return f * s;
}

static double gmi_integrand(double y, void *p) { return gmi_term(p, y); }

#define UNQ_EPSABS 1e-13
#define UNQ_EPSREL 1e-11
#define UNQ_LIMIT 2000
#define MAX_COUNT_SPAN 1e8

qc_status qc_unquantized_gmi(const qc_model *model, const double *levels,
                             const double *input, size_t nlevels, const size_t *labels,
                             unsigned nbits, double *gmi_nats, double *abserr_nats)
{
    qc_gsl_init();
    qc_status st = qc_model_check_levels(model, levels, nlevels);
    if (st == QC_OK)
        st = qc_check_labels(input, nlevels, labels, nbits);
    if (st != QC_OK)
        return st;
    gmi_ctx c = {model, levels, input, labels, nlevels, nbits, 0, NULL};
    c.g = qc_malloc_array(2 * (size_t)nbits, sizeof *c.g);
    gsl_integration_workspace *w = NULL;
    if (c.g && qc_model_get_type(model)->output == QC_OUTPUT_REAL)
        w = gsl_integration_workspace_alloc(UNQ_LIMIT);
    if (!c.g || (qc_model_get_type(model)->output == QC_OUTPUT_REAL && !w)) {
        free(c.g);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    double hb = 0.0, err = 0.0;
    for (size_t i = 0; i < nlevels && st == QC_OK; i++) {
        if (input[i] <= 0.0)
            continue;
        c.x = i;
        double lo, hi, val = 0.0, e = 0.0;
        qc_model_get_type(model)->support(model, levels[i], &lo, &hi);
        if (qc_model_get_type(model)->output == QC_OUTPUT_COUNTS) {
            double a = fmax(0.0, floor(lo)), b = ceil(hi);
            if (b - a > MAX_COUNT_SPAN) {
                st = qc_fail(QC_ENUMERIC, "count range %g..%g too wide to sum", a, b);
                break;
            }
            for (double y = a; y <= b; y += 1.0)
                val += gmi_term(&c, y);
            e = 1e-15 * (b - a + 1.0);
        } else {
            gsl_function fn = {gmi_integrand, &c};
            int rc = gsl_integration_qags(&fn, lo, hi, UNQ_EPSABS, UNQ_EPSREL, UNQ_LIMIT, w,
                                          &val, &e);
            if (rc != GSL_SUCCESS && rc != GSL_EROUND)
                st = qc_fail(QC_ENUMERIC,
                             "quadrature of the unquantized GMI failed at level %g: %s",
                             levels[i], gsl_strerror(rc));
        }
        hb += input[i] * val;
        err += input[i] * e;
    }
    gsl_integration_workspace_free(w);
    free(c.g);
    if (st != QC_OK)
        return st;
    double g = qc_entropy(input, nlevels) - hb;
    if (!isfinite(g))
        return qc_fail(QC_ENUMERIC, "unquantized GMI is not finite");
    *gmi_nats = g > 0.0 ? g : 0.0;
    if (abserr_nats)
        *abserr_nats = err;
    return QC_OK;
}

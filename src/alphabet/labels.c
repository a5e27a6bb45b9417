/* labels.c — binary-reflected Gray labels (F. Gray, US patent 2,632,058,
 * 1953) and the bit-metric generalized mutual information of bit-
 * interleaved coded modulation (Caire, Taricco, Biglieri, IEEE Trans. IT
 * 44(3), 1998; shown to be the GMI of the bit-metric decoder by Martinez,
 * Guillén i Fàbregas, Caire, Willems, IEEE Trans. IT 55(6), 2009):
 * GMI = Σ_b I(B_b; Y) for independent uniform bits. For a general law the
 * bit-metric decoding rate [H(X) − Σ_b H(B_b|Y)]⁺ (Böcherer, "Achievable
 * rates for shaped bit-metric decoding", arXiv 1410.8075, ISIT 2014) is
 * used: it equals the sum above when the bits are independent and never
 * exceeds I(X;Y), since Σ_b H(B_b|Y) ≥ H(X|Y).
 * Both the quantized channel (a finite sum) and the unquantized output
 * (adaptive quadrature per level, as qc_unquantized_mi) are provided. */
#include "alphabet/alphabet.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_integration.h>

#define MAX_LABEL_BITS 30
#define LAW_TOL 1e-9

size_t qc_gray_code(size_t i) { return i ^ (i >> 1); }

qc_status qc_gray_labels(const double *levels, size_t n, size_t *labels, unsigned *nbits)
{
    if (!qc_is_power_of_two(n))
        return qc_fail(QC_EINVAL,
                       "Gray labels need a power of 2 levels (got %zu levels)", n);
    size_t *order = qc_malloc_array(n, sizeof *order);
    if (!order)
        return qc_fail(QC_ENOMEM, "out of memory");
    qc_status st = qc_sort_order(levels, n, order);
    if (st != QC_OK) {
        free(order);
        return st;
    }
    for (size_t k = 0; k < n; k++)
        labels[order[k]] = qc_gray_code(k); /* Gray code in level order */
    free(order);
    unsigned b = 0;
    while (((size_t)1 << b) < n)
        b++;
    *nbits = b;
    return QC_OK;
}

static int by_size(const void *a, const void *b)
{
    size_t x = *(const size_t *)a, y = *(const size_t *)b;
    return (x > y) - (x < y);
}

/* Labels fit in nbits and are distinct among inputs with r(x) > 0; the
 * law sums to 1. */
static qc_status check_labels(const double *input, size_t nx, const size_t *labels,
                              unsigned nbits)
{
    if (nbits < 1 || nbits > MAX_LABEL_BITS)
        return qc_fail(QC_EINVAL, "label bits must be from 1 to %d (got %u)",
                       MAX_LABEL_BITS, nbits);
    double s = 0.0;
    size_t *used = qc_malloc_array(nx, sizeof *used), nu = 0;
    if (!used)
        return qc_fail(QC_ENOMEM, "out of memory");
    qc_status st = QC_OK;
    for (size_t x = 0; x < nx && st == QC_OK; x++) {
        if (!(input[x] >= 0.0) || !isfinite(input[x]))
            st = qc_fail(QC_EINVAL, "input probability %zu is %g, expected >= 0", x + 1,
                         input[x]);
        else if (labels[x] >> nbits)
            st = qc_fail(QC_EINVAL, "label %zu (%zu) does not fit in %u bits", x + 1,
                         labels[x], nbits);
        s += input[x];
        if (input[x] > 0.0)
            used[nu++] = labels[x];
    }
    if (st == QC_OK && fabs(s - 1.0) > LAW_TOL)
        st = qc_fail(QC_EINVAL, "input probabilities sum to %.17g, expected 1", s);
    if (st == QC_OK) {
        qsort(used, nu, sizeof *used, by_size);
        for (size_t k = 1; k < nu; k++)
            if (used[k] == used[k - 1]) {
                st = qc_fail(QC_EINVAL, "label %zu is given to two inputs in use",
                             used[k]);
                break;
            }
    }
    free(used);
    return st;
}

/* Σ_v p_v log(1 + p_v̄/p_v) for the joint masses of the two bit values at
 * one output: that output's share of H(B|Y), accurate when one value
 * dominates. */
static double bit_term(double p0, double p1)
{
    double h = 0.0;
    if (p0 > 0.0)
        h += p0 * log1p(p1 / p0);
    if (p1 > 0.0)
        h += p1 * log1p(p0 / p1);
    return h;
}

qc_status qc_gmi(const qc_dmc *dmc, const double *input, const size_t *labels,
                 unsigned nbits, double *gmi_nats)
{
    qc_status st = check_labels(input, dmc->nx, labels, nbits);
    if (st != QC_OK)
        return st;
    double *joint = qc_malloc_array(2 * (size_t)nbits, sizeof *joint);
    if (!joint)
        return qc_fail(QC_ENOMEM, "out of memory");
    double hx = qc_entropy(input, dmc->nx), hb = 0.0;
    for (size_t y = 0; y < dmc->ny; y++) {
        memset(joint, 0, 2 * (size_t)nbits * sizeof *joint);
        for (size_t x = 0; x < dmc->nx; x++) {
            double p = input[x] * dmc->p[x * dmc->ny + y];
            if (!(p > 0.0))
                continue;
            for (unsigned b = 0; b < nbits; b++)
                joint[2 * b + ((labels[x] >> b) & 1)] += p;
        }
        for (unsigned b = 0; b < nbits; b++)
            hb += bit_term(joint[2 * b], joint[2 * b + 1]);
    }
    free(joint);
    double g = hx - hb;
    *gmi_nats = g > 0.0 ? g : 0.0;
    return QC_OK;
}

/* ---- unquantized output ------------------------------------------- */

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
    double f = c->m->type->density(c->m, c->levels[c->x], y);
    if (!(f > 0.0))
        return 0.0;
    memset(c->g, 0, 2 * (size_t)c->nbits * sizeof *c->g);
    for (size_t i = 0; i < c->n; i++) {
        if (!(c->input[i] > 0.0))
            continue;
        double p = c->input[i] * c->m->type->density(c->m, c->levels[i], y);
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
            s += log1p(other / own);
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
        st = check_labels(input, nlevels, labels, nbits);
    if (st != QC_OK)
        return st;
    gmi_ctx c = {model, levels, input, labels, nlevels, nbits, 0, NULL};
    c.g = qc_malloc_array(2 * (size_t)nbits, sizeof *c.g);
    gsl_integration_workspace *w = NULL;
    if (c.g && model->type->output == QC_OUTPUT_REAL)
        w = gsl_integration_workspace_alloc(UNQ_LIMIT);
    if (!c.g || (model->type->output == QC_OUTPUT_REAL && !w)) {
        free(c.g);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    double hb = 0.0, err = 0.0;
    for (size_t i = 0; i < nlevels && st == QC_OK; i++) {
        if (input[i] <= 0.0)
            continue;
        c.x = i;
        double lo, hi, val = 0.0, e = 0.0;
        model->type->support(model, levels[i], &lo, &hi);
        if (model->type->output == QC_OUTPUT_COUNTS) {
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

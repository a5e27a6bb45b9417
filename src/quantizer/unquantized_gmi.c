/* unquantized_gmi.c — the bit-metric GMI (see src/core/gmi.c) with the
 * unquantized receiver output: GMI = H(X) − Σ_b H(B_b|Y), with
 *   Σ_b H(B_b|Y) = ∫ Σ_b h(g_{b,0}(y), g_{b,1}(y)) dy,
 * g_{b,v}(y) = Σ_{x: bit b of x is v} r(x) f(y|x) and h(p0, p1) =
 * p0 log(1 + p1/p0) + p1 log(1 + p0/p1) (qc_bit_term), one integral (or
 * sum over counts) over the union of the level supports, as
 * qc_unquantized_mi takes I(X;Y): a point costs the levels whose support
 * holds it, so the cost grows linearly with the number of levels.
 *
 * Truncation bound. Leaving out of g the levels whose support S_j does not
 * hold y removes δ(y) = Σ_{j: y ∉ S_j} r_j f_j(y) ≥ 0, of total mass
 * E = Σ_j r_j ε_j (ε_j the mass of level j outside S_j). h is the
 * perspective of the binary entropy, so it is superadditive and
 * h(g̃ + δ) ≥ h(g̃); and with Z the indicator of the left-out part,
 * H(B|Y) ≤ H(Z|Y) + H(B|Y,Z) gives h(g̃ + δ) ≤ h(g̃) + |δ| log 2 +
 * |δ|(1 + log(1 + |g̃|/|δ|)). By Jensen ∫ |δ| log(1 + |g̃|/|δ|) ≤
 * E log(1 + 1/E), and outside the union each bit adds at most E log 2, so
 * per bit the computed H(B_b|Y) is below the exact one by at most
 * E (1 + 2 log 2 + log(1 + 1/E)): added to the error estimate for every
 * label bit. */
#include "quantizer/quantizer.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_math.h> /* M_LN2 */

#define MAX_COUNT_SPAN 1e8

typedef struct {
    const qc_model *m;
    const double *levels, *input;
    const size_t *labels;
    size_t n;
    unsigned nbits;
    const double *lo, *hi;   /* each level's support */
    const size_t *order;     /* levels by where their support starts */
    const double *lo_sorted; /* lo[order[k]] */
    double width;            /* widest support */
    double *g;               /* scratch: 2·nbits bit-value masses */
} gmi_ctx;

/* Σ_b h(g_{b,0}(y), g_{b,1}(y)) over the levels whose support holds y:
 * the integrand of Σ_b H(B_b|Y). */
static double bits_term(const gmi_ctx *c, double y)
{
    const qc_model_type *ty = qc_model_get_type(c->m);
    memset(c->g, 0, 2 * (size_t)c->nbits * sizeof *c->g);
    for (size_t k = qc_first_at_or_above(c->lo_sorted, c->n, y - c->width);
         k < c->n && c->lo_sorted[k] <= y; k++) {
        size_t j = c->order[k];
        if (!(c->input[j] > 0.0) || !(y <= c->hi[j]))
            continue;
        double p = c->input[j] * ty->density(c->m, c->levels[j], y);
        if (!(p > 0.0))
            continue;
        for (unsigned b = 0; b < c->nbits; b++)
            c->g[2 * b + ((c->labels[j] >> b) & 1)] += p;
    }
    double s = 0.0;
    for (unsigned b = 0; b < c->nbits; b++)
        s += qc_bit_term(c->g[2 * b], c->g[2 * b + 1]);
    return s;
}

static double bits_integrand(double y, void *p) { return bits_term(p, y); }

/* Count outputs: the sum of the integrand over the counts [a, b] into
 * *val, keeping count of the counts summed in *summed. */
static qc_status sum_stretch(const gmi_ctx *c, double a, double b, double *summed,
                             double *val)
{
    *summed += b - a + 1.0;
    if (*summed > MAX_COUNT_SPAN)
        return qc_fail(QC_ENUMERIC, "count range %g..%g too wide to sum", a, b);
    for (double y = a; y <= b; y += 1.0)
        *val += bits_term(c, y);
    return QC_OK;
}

/* Count outputs: the sum over every count of the union of the supports,
 * stretch by stretch (levels far apart leave gaps that are not summed). */
static qc_status sum_counts(const gmi_ctx *c, double *val, double *err)
{
    double a = NAN, b = NAN, summed = 0.0;
    qc_status st = QC_OK;
    *val = *err = 0.0;
    for (size_t k = 0; k < c->n && st == QC_OK; k++) {
        size_t i = c->order[k];
        if (!(c->input[i] > 0.0))
            continue;
        double lo = fmax(0.0, floor(c->lo[i])), hi = ceil(c->hi[i]);
        if (isnan(a)) {
            a = lo;
            b = hi;
        } else if (lo <= b + 1.0) {
            b = fmax(b, hi);
        } else {
            st = sum_stretch(c, a, b, &summed, val);
            a = lo;
            b = hi;
        }
    }
    if (st == QC_OK && !isnan(a))
        st = sum_stretch(c, a, b, &summed, val);
    *err = 1e-15 * summed;
    return st;
}

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
    double *sup = qc_malloc_array(3 * nlevels + 2 * (size_t)nbits, sizeof *sup);
    size_t *order = qc_malloc_array(2 * nlevels, sizeof *order);
    if (!sup || !order) {
        free(sup);
        free(order);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    gmi_ctx c = {model, levels, input, labels, nlevels, nbits, sup, sup + nlevels,
                 order, sup + 2 * nlevels, 0.0, sup + 3 * nlevels};
    double hb = 0.0, err = 0.0;
    st = qc_supports_sorted(model, levels, nlevels, sup, sup + nlevels, order,
                            sup + 2 * nlevels, &c.width);
    if (st == QC_OK && qc_model_get_type(model)->output == QC_OUTPUT_COUNTS) {
        st = sum_counts(&c, &hb, &err);
    } else if (st == QC_OK) {
        /* levels of positive probability whose output is wider than the
         * resolution of doubles (a point mass is told apart from every
         * other level: it adds nothing to H(B|Y)) */
        size_t *ov = order + nlevels, nov = 0;
        for (size_t i = 0; i < nlevels; i++)
            if (input[i] > 0.0 && c.hi[i] > c.lo[i])
                ov[nov++] = i;
        st = qc_integrate_union(c.lo, c.hi, ov, nov, bits_integrand, &c,
                                "the unquantized GMI", &hb, &err);
    }
    if (st == QC_OK) {
        double e = 0.0; /* the truncation bound of the header */
        for (size_t i = 0; i < nlevels; i++)
            if (input[i] > 0.0)
                e += input[i] * qc_support_tail(model, levels[i], c.lo[i], c.hi[i]);
        if (e > 0.0)
            err += (double)nbits * e * (1.0 + 2.0 * M_LN2 + log1p(1.0 / e));
    }
    free(sup);
    free(order);
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

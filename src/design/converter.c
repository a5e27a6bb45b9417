/* converter.c — the design of a real converter (quantcap/quantizer.h,
 * src/quantizer/converter.c): its own input-referred noise (ENOB and
 * jitter, IEEE Std 1241's full-scale sine equivalences) is added to the
 * model's (qc_model_add_noise), and its 2^N − 1 transition levels T_k,
 * compared with gain·y + offset, become thresholds (T_k − offset)/gain on
 * the receiver output y, rated as the fixed strategy rates given
 * thresholds (MI with the law, or capacity with the law optimized). The
 * gain and offset are given, chosen for the objective (Nelder–Mead
 * simplex, GSL nmsimplex2: J. A. Nelder and R. Mead, Computer Journal
 * 7(4), 1965, from the best of a scan of the AGC rule), or set by the AGC
 * rule (gain = full-scale half-width / (K·rms of y about its mean), mean
 * at mid-scale). Random DNL/INL is rated over seeded draws: the result is
 * the first draw's, with the mean, standard deviation and 95 % Student-t
 * confidence interval of the rate over all draws. */
#include "design/design_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_multimin.h>

#define SCAN_K_MIN 0.5     /* the AGC factors scanned before the simplex    */
#define SCAN_K_MAX 8.0
#define SCAN_POINTS 13     /* geometric in K                                 */
#define SIMPLEX_LOG_GAIN 0.15 /* first simplex steps: ln gain                */
#define SIMPLEX_OFFSET 0.02   /* and offset, as a share of the full scale    */
#define SIMPLEX_SIZE 1e-5     /* stop when the simplex is this small         */
#define SIMPLEX_ITER 300
#define SIMPLEX_SNAP 1e-4    /* offsets this close (share of the full scale) */

typedef struct {
    const qc_design_request *req;
    const qc_converter *c;
    const qc_cost *costs;
    size_t ncosts;
    unsigned bits;
    size_t nt;
    double noise_sd;   /* converter noise at its input, full-scale units */
    const double *T;   /* this draw's transition levels                   */
    double *t;         /* scratch: thresholds on the receiver output      */
    double mu, sd;     /* receiver output mean and rms about it (AGC)     */
    qc_status err;     /* first failure inside the simplex                */
} conv_ctx;

/* The rated design of gain g and offset o into *out (thresholds on the
 * receiver output, as the fixed strategy; out owns them). */
static qc_status rate_at(conv_ctx *x, double g, double o, qc_design_result *out)
{
    memset(out, 0, sizeof *out); /* clearable whatever happens below */
    const qc_model *base = x->req->channel.model;
    for (size_t k = 0; k < x->nt; k++)
        x->t[k] = (x->T[k] - o) / g;
    for (size_t k = 1; k < x->nt; k++)
        if (!(x->t[k] > x->t[k - 1]))
            return qc_fail(QC_EINVAL, "converter-gain: a gain of %g merges transition levels "
                                      "%zu and %zu on the receiver output",
                           g, k, k + 1);
    qc_model *noisy = NULL;
    const int wrap = x->noise_sd > 0.0 || qc_model_get_type(base)->output == QC_OUTPUT_COUNTS;
    qc_status st = wrap ? qc_model_add_noise(base, x->noise_sd / g, &noisy) : QC_OK;
    if (st != QC_OK)
        return st;
    qc_design_request sub = *x->req;
    sub.channel.model = wrap ? noisy : base;
    sub.quantizer.kind = QC_QUANTIZER_FIXED;
    sub.quantizer.thresholds = x->t;
    sub.quantizer.nthresholds = x->nt;
    sub.quantizer.cells = x->nt + 1;
    sub.quantizer.converter = NULL;
    st = qc_design_thresholds_only(&sub, x->costs, x->ncosts, out);
    qc_model_free(noisy);
    return st;
}

static qc_status rate_only(conv_ctx *x, double g, double o, double *bits)
{
    qc_design_result r;
    qc_status st = rate_at(x, g, o, &r);
    if (st == QC_OK)
        *bits = r.rate_bits;
    qc_design_result_clear(&r);
    return st;
}

/* The AGC rule's gain and offset for factor k. */
static void agc_rule(const conv_ctx *x, double k, double *g, double *o)
{
    const qc_converter *c = x->c;
    const double half = 0.5 * (c->full_scale_hi - c->full_scale_lo);
    const double mid = 0.5 * (c->full_scale_hi + c->full_scale_lo);
    *g = half / (k * x->sd);
    *o = mid - *g * x->mu;
}

/* Receiver output mean and rms about it under the request's law. */
static qc_status output_moments(conv_ctx *x)
{
    const qc_design_request *req = x->req;
    const size_t n = req->channel.nlevels;
    double m1 = 0.0, m2 = 0.0;
    for (size_t i = 0; i < n; i++) {
        double p = req->input.probabilities ? req->input.probabilities[i] : 1.0 / (double)n;
        double mean, var;
        qc_status st = qc_model_moments(req->channel.model, req->channel.levels[i], &mean, &var);
        if (st != QC_OK)
            return qc_fail(st, "converter-gain: the AGC rule and the best gain need the "
                               "receiver output's mean and variance: %s",
                           qc_last_error());
        m1 += p * mean;
        m2 += p * (var + mean * mean);
    }
    x->mu = m1;
    x->sd = sqrt(fmax(m2 - m1 * m1, 0.0));
    if (!(x->sd > 0.0) || !isfinite(x->sd))
        return qc_fail(QC_EINVAL, "converter-gain: the receiver output has no spread to scale");
    return QC_OK;
}

/* ---- the best gain and offset: scan, then simplex ------------------------ */

typedef struct {
    conv_ctx *x;
    int free_offset;  /* 1: the offset is a coordinate                   */
    double offset;    /* else the fixed offset                           */
    double width;     /* full-scale width: the offset's unit             */
} best_ctx;

static double neg_rate(const gsl_vector *v, void *params)
{
    best_ctx *b = params;
    double g = exp(gsl_vector_get(v, 0));
    double o = b->free_offset ? b->width * gsl_vector_get(v, 1) : b->offset;
    double bits;
    qc_status st = rate_only(b->x, g, o, &bits);
    if (st != QC_OK) {
        if (b->x->err == QC_OK && st != QC_EINVAL)
            b->x->err = st;
        return GSL_POSINF; /* a gain that merges levels: outside the domain */
    }
    return -bits;
}

static qc_status best_gain(conv_ctx *x, double *g_out, double *o_out)
{
    const qc_converter *c = x->c;
    best_ctx b = {.x = x, .free_offset = c->offset_best,
                  .offset = c->offset_best ? 0.0 : c->offset,
                  .width = c->full_scale_hi - c->full_scale_lo};
    if (!b.free_offset && isnan(b.offset))
        b.offset = 0.0;
    /* a scan of the AGC rule: a start near the best */
    double best = -INFINITY, g0 = NAN, o0 = NAN;
    for (int i = 0; i < SCAN_POINTS; i++) {
        double k = SCAN_K_MIN * pow(SCAN_K_MAX / SCAN_K_MIN, (double)i / (SCAN_POINTS - 1));
        double g, o, bits;
        agc_rule(x, k, &g, &o);
        if (!b.free_offset)
            o = b.offset;
        qc_status st = rate_only(x, g, o, &bits);
        if (st == QC_EINVAL)
            continue;
        if (st != QC_OK)
            return st;
        if (bits > best) {
            best = bits;
            g0 = g;
            o0 = o;
        }
    }
    if (!isfinite(best))
        return qc_fail(QC_EINVAL, "converter-gain: no gain of the scan rates the converter");
    const size_t dim = b.free_offset ? 2 : 1;
    gsl_multimin_fminimizer *m = gsl_multimin_fminimizer_alloc(gsl_multimin_fminimizer_nmsimplex2,
                                                               dim);
    gsl_vector *v = gsl_vector_alloc(dim), *step = gsl_vector_alloc(dim);
    qc_status st = QC_OK;
    if (!m || !v || !step) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    gsl_vector_set(v, 0, log(g0));
    gsl_vector_set(step, 0, SIMPLEX_LOG_GAIN);
    if (b.free_offset) {
        gsl_vector_set(v, 1, o0 / b.width);
        gsl_vector_set(step, 1, SIMPLEX_OFFSET);
    }
    gsl_multimin_function f = {.f = neg_rate, .n = dim, .params = &b};
    x->err = QC_OK;
    if (gsl_multimin_fminimizer_set(m, &f, v, step) != GSL_SUCCESS) {
        st = x->err != QC_OK ? x->err : qc_fail(QC_ENUMERIC, "converter-gain: simplex failed");
        goto done;
    }
    for (int it = 0; it < SIMPLEX_ITER; it++) {
        int gs = gsl_multimin_fminimizer_iterate(m);
        if (x->err != QC_OK) {
            st = x->err;
            goto done;
        }
        if (gs != GSL_SUCCESS)
            break;
        if (gsl_multimin_test_size(gsl_multimin_fminimizer_size(m), SIMPLEX_SIZE) == GSL_SUCCESS)
            break;
    }
    /* the simplex keeps its best vertex: never below the scan's best */
    if (-gsl_multimin_fminimizer_minimum(m) >= best) {
        const gsl_vector *xb = gsl_multimin_fminimizer_x(m);
        g0 = exp(gsl_vector_get(xb, 0));
        o0 = b.free_offset ? b.width * gsl_vector_get(xb, 1) : b.offset;
    }
    /* the simplest offset near the simplex's (0 for a symmetric signal),
     * when it rates no lower: the same setting on every machine */
    if (b.free_offset) {
        double os = qc_simplest_within(o0, SIMPLEX_SNAP * b.width), r0, r1;
        if (os != o0 && rate_only(x, g0, o0, &r0) == QC_OK &&
            rate_only(x, g0, os, &r1) == QC_OK && r1 >= r0)
            o0 = os;
    }
    *g_out = g0;
    *o_out = o0;
done:
    gsl_multimin_fminimizer_free(m);
    gsl_vector_free(v);
    gsl_vector_free(step);
    return st;
}

/* ---- one draw, all draws -------------------------------------------------- */

static qc_status choose_gain(conv_ctx *x, double *g, double *o)
{
    const qc_converter *c = x->c;
    switch (c->gain_mode) {
    case QC_GAIN_FIXED:
        *g = c->gain;
        if (!c->offset_best) {
            *o = c->offset;
            return QC_OK;
        }
        break;
    case QC_GAIN_AGC:
        agc_rule(x, c->agc_k, g, o);
        if (!c->offset_best) {
            if (!isnan(c->offset))
                *o = c->offset;
            return QC_OK;
        }
        break;
    case QC_GAIN_BEST:
        return best_gain(x, g, o);
    }
    /* a given or AGC gain with the best offset: a one-dimensional search
     * over the offset, through the same simplex with the gain held */
    const double g_fixed = *g;
    double lo = -INFINITY, o_best = NAN;
    const double w = c->full_scale_hi - c->full_scale_lo;
    const double mid = 0.5 * (c->full_scale_hi + c->full_scale_lo);
    double bits;
    for (int i = -8; i <= 8; i++) {
        double oo = mid - g_fixed * x->mu + w * (double)i / 16.0;
        qc_status st = rate_only(x, g_fixed, oo, &bits);
        if (st != QC_OK)
            return st;
        if (bits > lo) {
            lo = bits;
            o_best = oo;
        }
    }
    /* golden-section refinement on the bracket around the scan's best */
    double a = o_best - w / 16.0, b = o_best + w / 16.0;
    const double r = 0.5 * (sqrt(5.0) - 1.0);
    double c1 = b - r * (b - a), c2 = a + r * (b - a), f1, f2;
    qc_status st;
    if ((st = rate_only(x, g_fixed, c1, &f1)) != QC_OK ||
        (st = rate_only(x, g_fixed, c2, &f2)) != QC_OK)
        return st;
    while (b - a > SIMPLEX_SIZE * w) {
        if (f1 > f2) {
            b = c2;
            c2 = c1;
            f2 = f1;
            c1 = b - r * (b - a);
            if ((st = rate_only(x, g_fixed, c1, &f1)) != QC_OK)
                return st;
        } else {
            a = c1;
            c1 = c2;
            f1 = f2;
            c2 = a + r * (b - a);
            if ((st = rate_only(x, g_fixed, c2, &f2)) != QC_OK)
                return st;
        }
    }
    double oc = f1 > f2 ? c1 : c2;
    *g = g_fixed;
    *o = fmax(f1, f2) >= lo ? oc : o_best;
    return QC_OK;
}

static unsigned bits_of_cells(size_t K)
{
    unsigned b = 0;
    while (((size_t)1 << b) < K)
        b++;
    return ((size_t)1 << b) == K ? b : 0;
}

qc_status qc_design_converter(const qc_design_request *req, const qc_cost *costs,
                              size_t ncosts, qc_design_result *res)
{
    qc_gsl_init();
    memset(res, 0, sizeof *res);
    size_t K;
    qc_status st = qc_design_check_request(req, 0, &K);
    if (st != QC_OK)
        return st;
    const qc_converter *c = req->quantizer.converter;
    if (!c)
        return qc_fail(QC_EINVAL, "quantizer converter needs a converter (full-scale, bits)");
    const unsigned bits = bits_of_cells(K);
    if (bits == 0)
        return qc_fail(QC_EINVAL, "quantizer converter: %zu cells is not 2^N codes (give bits)",
                       K);
    if ((st = qc_converter_check(c, bits)) != QC_OK)
        return st;
    conv_ctx x = {.req = req, .c = c, .costs = costs, .ncosts = ncosts, .bits = bits,
                  .nt = K - 1};
    x.noise_sd = sqrt(qc_converter_noise_var(c, bits));
    const size_t draws = c->draws > 1 ? c->draws : 1;
    double *T = qc_malloc_array(K - 1, sizeof *T), *T0 = qc_malloc_array(K - 1, sizeof *T0);
    x.t = qc_malloc_array(K - 1, sizeof *x.t);
    qc_design_result r = {0};
    double sum = 0.0, sum2 = 0.0, g0 = NAN, o0 = NAN;
    if (!T || !T0 || !x.t) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto fail;
    }
    x.T = T;
    if ((c->gain_mode != QC_GAIN_FIXED || c->offset_best) && (st = output_moments(&x)) != QC_OK)
        goto fail;
    for (size_t d = 0; d < draws; d++) {
        double g = NAN, o = NAN;
        if ((st = qc_converter_transitions(c, bits, d, T)) != QC_OK ||
            (st = choose_gain(&x, &g, &o)) != QC_OK)
            goto fail;
        qc_design_result one;
        if ((st = rate_at(&x, g, o, &one)) != QC_OK)
            goto fail;
        sum += one.rate_bits;
        sum2 += one.rate_bits * one.rate_bits;
        if (d == 0) {
            r = one;
            g0 = g;
            o0 = o;
            memcpy(T0, T, (K - 1) * sizeof *T);
        } else {
            qc_design_result_clear(&one);
        }
    }
    /* the converter's account of the first draw */
    r.quantizer = QC_QUANTIZER_CONVERTER;
    memcpy(r.thresholds, T0, (K - 1) * sizeof *T0);
    r.converter = 1;
    r.converter_bits = bits;
    r.enob = isnan(c->enob) ? (double)bits : c->enob;
    r.sinad_db = qc_enob_to_sinad_db(r.enob);
    r.gain = g0;
    r.offset = o0;
    r.converter_noise_rms = x.noise_sd;
    r.draws = draws;
    const double dn = (double)draws;
    r.draws_mean_bits = sum / dn;
    if (draws > 1) {
        double var = fmax(sum2 - sum * sum / dn, 0.0) / (dn - 1.0);
        r.draws_sd_bits = sqrt(var);
        /* Student t, draws − 1 degrees of freedom */
        r.draws_ci95_bits = gsl_cdf_tdist_Pinv(0.975, dn - 1.0) * r.draws_sd_bits / sqrt(dn);
    } else {
        r.draws_sd_bits = NAN;
        r.draws_ci95_bits = NAN;
    }
    /* the unquantized reference is the receiver's own */
    double unq, unq_err;
    if ((st = qc_unquantized_mi_memo(req->numerics.unquantized_memo, req->channel.model,
                                     r.levels, r.input, r.nlevels, &unq, &unq_err,
                                     &r.noiseless_limit)) != QC_OK)
        goto fail;
    r.unquantized_bits = unq * QC_LOG2E;
    r.unquantized_err_bits = unq_err * QC_LOG2E;
    r.loss_bits = r.unquantized_bits - r.rate_bits;
    r.snr_db = qc_model_snr_db(req->channel.model, r.levels, r.input, r.nlevels);
    free(T);
    free(T0);
    free(x.t);
    *res = r;
    return QC_OK;
fail:
    qc_design_result_clear(&r);
    free(T);
    free(T0);
    free(x.t);
    return st;
}

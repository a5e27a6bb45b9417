/* snr.c — the SNR of a model's operating point and the SNR penalty of a
 * quantizer: how much stronger the signal (weaker the noise) must be for
 * the unquantized receiver to fall to the quantized rate, i.e. the dB
 * distance between the two rate curves at equal rate. The unquantized
 * curve is walked with the model's scale_snr hook; the crossing is found
 * with GSL's Brent root finder (Brent, Algorithms for Minimization
 * without Derivatives, 1973, ch. 4) on the SNR gain in dB. */
#include "design/design_internal.h"

#include <math.h>
#include <stdlib.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_roots.h>

#define PENALTY_TOL_DB 1e-7    /* root bracket width at stop */
#define PENALTY_MAX_ITER 100
#define PENALTY_FLOOR_DB -400.0 /* give up below this gain */
#define SNR_RESCALE_DB 3000.0   /* step down an SNR that overflows doubles */
#define SNR_RESCALE_STEPS 4

double qc_model_snr_db(const qc_model *model, const double *levels,
                       const double *input, size_t nlevels)
{
    if (!model || !qc_model_get_type(model)->snr || !levels || !input)
        return NAN;
    double s = qc_model_get_type(model)->snr(model, levels, input, nlevels);
    if (s == INFINITY && qc_model_get_type(model)->scale_snr) {
        /* nearly noiseless (σ² underflows): the SNR of the model scaled
         * down by a known number of dB, plus those dB */
        double offset = 0.0;
        qc_model *m = NULL;
        for (int k = 0; k < SNR_RESCALE_STEPS && s == INFINITY; k++) {
            qc_model *next = NULL;
            if (qc_model_scale_snr(m ? m : model, pow(10.0, -SNR_RESCALE_DB / 10.0),
                                   &next) != QC_OK)
                break;
            qc_model_free(m);
            m = next;
            offset += SNR_RESCALE_DB;
            s = qc_model_get_type(m)->snr(m, levels, input, nlevels);
        }
        qc_model_free(m);
        if (!(s > 0.0) || !isfinite(s))
            return NAN;
        return 10.0 * log10(s) + offset;
    }
    if (!(s > 0.0) || !isfinite(s))
        return NAN;
    return 10.0 * log10(s);
}

qc_status qc_model_scale_snr(const qc_model *model, double gain, qc_model **out)
{
    *out = NULL;
    const qc_model_type *type = model ? qc_model_get_type(model) : NULL;
    if (!type || !type->scale_snr)
        return qc_fail(QC_EINVAL, "model '%s' defines no SNR to scale",
                       type ? type->name : "(none)");
    if (!(gain > 0.0) || !isfinite(gain))
        return qc_fail(QC_EINVAL, "SNR gain must be a positive number (got %g)",
                       gain);
    double params[QC_MODEL_MAX_PARAMS] = {0};
    const double *own = qc_model_params(model);
    for (size_t i = 0; i < type->nparams; i++)
        params[i] = own[i];
    qc_status st = type->scale_snr(model, gain, params);
    if (st != QC_OK)
        return st;
    return qc_model_alloc(type, params, out);
}

typedef struct {
    const qc_model *model;
    const double *levels, *input;
    size_t nlevels;
    double rate_nats;
    qc_unquantized_memo *memo; /* rates of the curve already computed */
    double snr_db;   /* SNR of the last scaled model */
    qc_status st;
} curve;

/* I_unquantized(gain = 10^(u/10)) − rate, in nats. */
static double curve_gap(double u, void *p)
{
    curve *c = p;
    qc_model *m = NULL;
    qc_status st = qc_model_scale_snr(c->model, pow(10.0, u / 10.0), &m);
    double mi = NAN;
    if (st == QC_OK)
        st = qc_unquantized_mi_memo(c->memo, m, c->levels, c->input, c->nlevels, &mi, NULL,
                                    NULL);
    if (st == QC_OK)
        c->snr_db = qc_model_snr_db(m, c->levels, c->input, c->nlevels);
    qc_model_free(m);
    if (st != QC_OK) {
        if (c->st == QC_OK)
            c->st = st;
        return NAN;
    }
    return mi - c->rate_nats;
}

qc_status qc_snr_penalty_db(const qc_model *model, const double *levels,
                            const double *input, size_t nlevels,
                            double rate_bits, double *penalty_db)
{
    return qc_snr_penalty_db_memo(NULL, model, levels, input, nlevels, rate_bits, penalty_db);
}

qc_status qc_snr_penalty_db_memo(qc_unquantized_memo *memo, const qc_model *model,
                                 const double *levels, const double *input, size_t nlevels,
                                 double rate_bits, double *penalty_db)
{
    qc_gsl_init();
    *penalty_db = NAN;
    double snr0 = qc_model_snr_db(model, levels, input, nlevels);
    if (isnan(snr0) || !qc_model_get_type(model)->scale_snr || !(rate_bits > 0.0))
        return QC_OK;
    curve c = {model, levels, input, nlevels, rate_bits / QC_LOG2E, memo, NAN, QC_OK};
    double mi0, err0;
    qc_status st = qc_unquantized_mi_memo(memo, model, levels, input, nlevels, &mi0, &err0, NULL);
    if (st != QC_OK)
        return st;
    if (mi0 - c.rate_nats <= fmax(err0, 1e-12 * fmax(1.0, mi0))) {
        *penalty_db = 0.0;
        return QC_OK;
    }
    /* Bracket the crossing below 0 dB of gain. */
    double hi_u = 0.0, lo_u = -1.0, lo_v;
    for (;;) {
        lo_v = curve_gap(lo_u, &c);
        if (c.st != QC_OK)
            return c.st;
        if (lo_v <= 0.0)
            break;
        hi_u = lo_u;
        lo_u *= 2.0;
        if (lo_u < PENALTY_FLOOR_DB)
            return QC_OK; /* the unquantized curve never falls to the rate */
    }
    if (lo_v == 0.0) {
        *penalty_db = snr0 - c.snr_db;
        return QC_OK;
    }
    gsl_root_fsolver *s = gsl_root_fsolver_alloc(gsl_root_fsolver_brent);
    if (!s)
        return qc_fail(QC_ENOMEM, "out of memory");
    gsl_function fn = {curve_gap, &c};
    int rc = gsl_root_fsolver_set(s, &fn, lo_u, hi_u);
    for (int it = 0; rc == GSL_SUCCESS && it < PENALTY_MAX_ITER; it++) {
        rc = gsl_root_fsolver_iterate(s);
        if (rc != GSL_SUCCESS || c.st != QC_OK)
            break;
        rc = gsl_root_test_interval(gsl_root_fsolver_x_lower(s),
                                    gsl_root_fsolver_x_upper(s), PENALTY_TOL_DB, 0.0);
        if (rc == GSL_SUCCESS)
            break;
        rc = GSL_SUCCESS;
    }
    double u = gsl_root_fsolver_root(s);
    gsl_root_fsolver_free(s);
    if (c.st != QC_OK)
        return c.st;
    if (rc != GSL_SUCCESS)
        return qc_fail(QC_ENUMERIC, "SNR penalty: root search failed: %s",
                       gsl_strerror(rc));
    /* The SNR of the scaled model at the crossing, by the model's notion. */
    curve_gap(u, &c);
    if (c.st != QC_OK)
        return c.st;
    *penalty_db = snr0 - c.snr_db;
    return QC_OK;
}

/* design_dump.c — prints, as JSON, the quantcap values that
 * tests/quantizer/quantizer_ref.py checks against scipy: unquantized BPSK rates,
 * MI-optimal and uniform BPSK quantizers, Lloyd–Max quantizers of a
 * Gaussian and of a two-component Gaussian mixture, and MI-optimal
 * quantizers of unipolar PAM-4 in signal-dependent Gaussian noise. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include <jansson.h>

#include "quantcap.h"
#include "test_helpers.h"

static int fail(const char *what)
{
    fprintf(stderr, "design_dump: %s: %s\n", what, qc_last_error());
    return 1;
}

/* One design with model `type` (parameters p); NULL on failure. */
static json_t *design_with(const qc_model_type *type, const double *p, const double *levels,
                           size_t n, size_t cells, qc_quantizer_kind kind)
{
    qc_model *m;
    if (qc_model_alloc(type, p, &m) != QC_OK)
        return NULL;
    qc_design_request r;
    qc_design_request_default(&r);
    r.channel.model = m;
    r.channel.levels = levels;
    r.channel.nlevels = n;
    r.quantizer.cells = cells;
    r.quantizer.kind = kind;
    r.numerics.skip_snr_penalty = 1;
    qc_design_result res;
    qc_status st = qc_design(&r, &res);
    qc_model_free(m);
    if (st != QC_OK)
        return NULL;
    json_t *o = json_object();
    json_object_set_new(o, "sigma", json_real(p[0]));
    if (type == &qc_model_gauss_sd) {
        json_object_set_new(o, "a", json_real(p[1]));
        json_object_set_new(o, "b", json_real(p[2]));
    }
    json_object_set_new(o, "levels", array_of(levels, n));
    json_object_set_new(o, "cells", json_integer((json_int_t)cells));
    json_object_set_new(o, "quantizer", json_string(qc_quantizer_name(kind)));
    json_object_set_new(o, "rate_bits", json_real(res.rate_bits));
    json_object_set_new(o, "unquantized_bits", json_real(res.unquantized_bits));
    json_object_set_new(o, "thresholds", array_of(res.thresholds, res.nthresholds));
    if (res.reconstruction) {
        json_object_set_new(o, "reconstruction", array_of(res.reconstruction, cells));
        json_object_set_new(o, "mse", json_real(res.mse));
    }
    qc_design_result_clear(&res);
    return o;
}

static json_t *design(double sigma, const double *levels, size_t n, size_t cells,
                      qc_quantizer_kind kind)
{
    return design_with(&qc_model_gauss, &sigma, levels, n, cells, kind);
}

int main(void)
{
    const double bpsk[2] = {-1.0, 1.0}, zero = 0.0;
    json_t *root = json_object(), *list = json_array();
    /* unquantized BPSK at several SNRs */
    const double snr_db[] = {-5.0, 0.0, 0.187, 3.0, 6.0, 10.0};
    for (size_t i = 0; i < sizeof snr_db / sizeof *snr_db; i++) {
        double sigma = 1.0 / sqrt(pow(10.0, snr_db[i] / 10.0));
        qc_model *m;
        double mi, err, r[2] = {0.5, 0.5};
        if (qc_model_alloc(&qc_model_gauss, &sigma, &m) != QC_OK ||
            qc_unquantized_mi(m, bpsk, r, 2, &mi, &err) != QC_OK)
            return fail("unquantized");
        qc_model_free(m);
        json_t *o = json_object();
        json_object_set_new(o, "snr_db", json_real(snr_db[i]));
        json_object_set_new(o, "sigma", json_real(sigma));
        json_object_set_new(o, "bits", json_real(mi * QC_LOG2E));
        json_array_append_new(list, o);
    }
    json_object_set_new(root, "unquantized", list);

    list = json_array();
    const double sigmas[] = {1.0, 0.5};
    for (size_t s = 0; s < 2; s++)
        for (size_t bits = 2; bits <= 3; bits++) {
            size_t K = (size_t)1 << bits;
            json_t *o = design(sigmas[s], bpsk, 2, K, QC_QUANTIZER_OPTIMAL);
            json_t *u = design(sigmas[s], bpsk, 2, K, QC_QUANTIZER_UNIFORM);
            if (!o || !u)
                return fail("BPSK design");
            json_array_append_new(list, o);
            json_array_append_new(list, u);
        }
    json_object_set_new(root, "bpsk", list);

    list = json_array();
    for (size_t K = 4; K <= 8; K *= 2) {
        json_t *g = design(1.0, &zero, 1, K, QC_QUANTIZER_LLOYD_MAX);
        json_t *mix = design(0.5, bpsk, 2, K, QC_QUANTIZER_LLOYD_MAX);
        if (!g || !mix)
            return fail("Lloyd-Max");
        json_array_append_new(list, g);
        json_array_append_new(list, mix);
    }
    json_object_set_new(root, "lloyd_max", list);

    /* signal-dependent noise, whose grid widens with σ (scale_grid.c):
     * unipolar PAM-4, σ0 = 0.2, a = 0.05 */
    list = json_array();
    const double upam4[4] = {0.0, 1.0, 2.0, 3.0}, sd[3] = {0.2, 0.05, 0.0};
    for (size_t K = 2; K <= 4; K *= 2) {
        json_t *o = design_with(&qc_model_gauss_sd, sd, upam4, 4, K, QC_QUANTIZER_OPTIMAL);
        if (!o)
            return fail("gauss-sd design");
        json_array_append_new(list, o);
    }
    /* uniform quantizers, whose best range is not centred on the levels
     * here: both of its ends are searched */
    for (size_t K = 4; K <= 16; K *= 2) {
        json_t *u = design_with(&qc_model_gauss_sd, sd, upam4, 4, K, QC_QUANTIZER_UNIFORM);
        if (!u)
            return fail("gauss-sd uniform design");
        json_array_append_new(list, u);
    }
    json_object_set_new(root, "gauss_sd", list);

    int rc = json_dumpf(root, stdout, JSON_INDENT(1) | JSON_REAL_PRECISION(17));
    json_decref(root);
    putchar('\n');
    return rc == 0 ? 0 : 1;
}

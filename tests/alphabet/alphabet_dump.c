/* alphabet_dump.c — prints, as JSON, the quantcap values that
 * tests/alphabet/alphabet_ref.py checks against scipy: 16-QAM (two 4-PAM
 * quadratures) with Gray labels at Es/N0 = 10 dB, unquantized and with
 * 8-bit optimal quantizers per quadrature, for the mi and gmi objectives:
 * rates per complex symbol, dispersion, the normal approximation and the
 * shaping gap; the unquantized rates of 4-PAM at two SNRs; and the
 * unquantized Gray GMI of 8-PAM under a shaped law. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include <jansson.h>

#include "quantcap.h"
#include "test_helpers.h"

static int fail(const char *what)
{
    fprintf(stderr, "alphabet_dump: %s: %s\n", what, qc_last_error());
    return 1;
}

/* One QAM design; NULL on failure. */
static json_t *design(const qc_model *m, const double *levels, size_t bits,
                      qc_objective objective, unsigned dims)
{
    qc_design_request r;
    qc_design_request_default(&r);
    r.channel.model = m;
    r.channel.levels = levels;
    r.channel.nlevels = 4;
    r.quantizer.cells = (size_t)1 << bits;
    r.input.objective = objective;
    r.channel.dimensions = dims;
    r.numerics.skip_snr_penalty = 1;
    r.numerics.blocklength = 1000;
    r.numerics.error_rate = 1e-3;
    qc_design_result res;
    if (qc_design(&r, &res) != QC_OK)
        return NULL;
    json_t *o = json_object();
    json_object_set_new(o, "objective", json_string(qc_objective_name(objective)));
    json_object_set_new(o, "dimensions", json_integer(dims));
    json_object_set_new(o, "bits", json_integer((json_int_t)bits));
    json_object_set_new(o, "thresholds", array_of(res.thresholds, res.nthresholds));
    json_object_set_new(o, "rate_bits", json_real(res.rate_bits));
    json_object_set_new(o, "mi_bits", json_real(res.mi_bits));
    json_object_set_new(o, "gmi_bits", json_real(res.gmi_bits));
    json_object_set_new(o, "unquantized_bits", json_real(res.unquantized_bits));
    json_object_set_new(o, "dispersion", json_real(res.dispersion_bits2));
    json_object_set_new(o, "blocklength", json_integer((json_int_t)res.blocklength));
    json_object_set_new(o, "error_rate", json_real(res.error_rate));
    json_object_set_new(o, "rate_at_blocklength_bits",
                        json_real(res.rate_at_blocklength_bits));
    json_object_set_new(o, "snr_db", json_real(res.snr_db));
    json_object_set_new(o, "shaping_gap_db", json_real(res.shaping_gap_db));
    qc_design_result_clear(&res);
    return o;
}

int main(void)
{
    const double pam[4] = {-3.0, -1.0, 1.0, 3.0}, uniform[4] = {0.25, 0.25, 0.25, 0.25};
    json_t *root = json_object();
    /* Es/N0 = E|x|²/(2σ²) = E[x_I²]/σ² = 5/σ² = 10 dB */
    double sigma = sqrt(5.0 / 10.0);
    qc_model *m;
    if (qc_model_alloc(&qc_model_gauss, &sigma, &m) != QC_OK)
        return fail("model");
    json_object_set_new(root, "sigma", json_real(sigma));
    json_object_set_new(root, "levels", array_of(pam, 4));
    json_t *list = json_array();
    const qc_objective objs[2] = {QC_OBJECTIVE_MI, QC_OBJECTIVE_GMI};
    for (size_t k = 0; k < 2; k++) {
        json_t *d = design(m, pam, 8, objs[k], 2);
        if (!d)
            return fail("16-QAM design");
        json_array_append_new(list, d);
    }
    json_t *d = design(m, pam, 3, QC_OBJECTIVE_GMI, 1); /* 4-PAM, 3 bits */
    if (!d)
        return fail("4-PAM design");
    json_array_append_new(list, d);
    json_object_set_new(root, "designs", list);
    qc_model_free(m);

    /* unquantized 4-PAM MI and Gray GMI per real dimension */
    json_t *unq = json_array();
    const double snr_db[2] = {3.0, 12.0};
    size_t labels[4];
    unsigned nbits;
    if (qc_gray_labels(pam, 4, labels, &nbits) != QC_OK)
        return fail("labels");
    for (size_t i = 0; i < 2; i++) {
        double s = sqrt(5.0 / pow(10.0, snr_db[i] / 10.0)), mi, gmi, err;
        if (qc_model_alloc(&qc_model_gauss, &s, &m) != QC_OK ||
            qc_unquantized_mi(m, pam, uniform, 4, &mi, NULL) != QC_OK ||
            qc_unquantized_gmi(m, pam, uniform, 4, labels, nbits, &gmi, &err) != QC_OK)
            return fail("unquantized 4-PAM");
        qc_model_free(m);
        json_t *o = json_object();
        json_object_set_new(o, "sigma", json_real(s));
        json_object_set_new(o, "mi_bits", json_real(mi * QC_LOG2E));
        json_object_set_new(o, "gmi_bits", json_real(gmi * QC_LOG2E));
        json_array_append_new(unq, o);
    }
    json_object_set_new(root, "unquantized_pam4", unq);

    /* unquantized Gray GMI of 8-PAM under a shaped (Maxwell–Boltzmann)
     * law at σ = 0.577, with its error estimate: a point of the shaping
     * study where quadrature level by level missed by 1.4e-11 bit */
    {
        const double pam8[8] = {-7.9501832082269202, -5.6787022915906569,
                                -3.4072213749543945, -1.1357404583181314,
                                1.1357404583181314,  3.4072213749543945,
                                5.6787022915906569,  7.9501832082269202};
        const double mb[8] = {0.078416785066760947, 0.11326337533711085,
                              0.14472486204338239,  0.16359497755274588,
                              0.16359497755274588,  0.14472486204338239,
                              0.11326337533711085,  0.078416785066760947};
        double s8 = 0.5769120993850223, gmi, err;
        size_t lab8[8];
        unsigned nb8;
        if (qc_gray_labels(pam8, 8, lab8, &nb8) != QC_OK ||
            qc_model_alloc(&qc_model_gauss, &s8, &m) != QC_OK ||
            qc_unquantized_gmi(m, pam8, mb, 8, lab8, nb8, &gmi, &err) != QC_OK)
            return fail("unquantized shaped 8-PAM");
        qc_model_free(m);
        json_t *o = json_object(), *lv = json_array(), *law = json_array();
        for (size_t i = 0; i < 8; i++) {
            json_array_append_new(lv, json_real(pam8[i]));
            json_array_append_new(law, json_real(mb[i]));
        }
        json_object_set_new(o, "sigma", json_real(s8));
        json_object_set_new(o, "levels", lv);
        json_object_set_new(o, "law", law);
        json_object_set_new(o, "gmi_bits", json_real(gmi * QC_LOG2E));
        json_object_set_new(o, "error_bits", json_real(err * QC_LOG2E));
        json_object_set_new(root, "unquantized_shaped_pam8", o);
    }
    json_t *lab = json_array();
    for (size_t i = 0; i < 4; i++)
        json_array_append_new(lab, json_integer((json_int_t)labels[i]));
    json_object_set_new(root, "labels", lab);
    char *text = json_dumps(root, JSON_INDENT(1) | JSON_REAL_PRECISION(17));
    json_decref(root);
    if (!text)
        return fail("json");
    puts(text);
    free(text);
    return 0;
}

/* converter_dump.c — prints, as JSON, the converter designs that
 * tests/design/converter_ref.py recomputes with scipy: Gaussian and
 * signal-dependent Gaussian channels behind converters of several nominal
 * bits, ENOB, jitter, full scales, gains and offsets (given and AGC). */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include <jansson.h>

#include "quantcap.h"
#include "test_helpers.h"

typedef struct {
    const qc_model_type *type;
    double params[3];
    unsigned bits;
    double enob, jitter_s, freq, lo, hi, gain, offset, agc_k;
} case_t;

int main(void)
{
    const double pam4[4] = {-3.0, -1.0, 1.0, 3.0}, ook[2] = {0.0, 1.0};
    const case_t cases[] = {
        {&qc_model_gauss, {0.5}, 4, 3.2, 0.0, 0.0, -4.0, 4.0, 1.0, 0.0, NAN},
        {&qc_model_gauss, {0.2}, 6, 4.5, 0.0, 0.0, -3.5, 3.5, 1.0, 0.0, NAN},
        {&qc_model_gauss, {0.2}, 6, NAN, 2e-12, 10e9, -3.5, 3.5, 1.0, 0.0, NAN},
        {&qc_model_gauss, {0.3}, 5, 3.9, 1e-12, 5e9, -1.0, 1.0, 0.25, 0.05, NAN},
        {&qc_model_gauss, {0.3}, 3, 2.5, 0.0, 0.0, -1.0, 1.0, NAN, NAN, 2.5},
        {&qc_model_gauss_sd, {0.05, 0.02, 0.01}, 4, 2.8, 0.0, 0.0, -0.2, 1.3, 1.0, 0.0, NAN},
    };
    json_t *root = json_array();
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        const case_t *c = &cases[i];
        const int sd = c->type == &qc_model_gauss_sd;
        const double *lv = sd ? ook : pam4;
        const size_t n = sd ? 2 : 4;
        qc_model *m;
        if (qc_model_alloc(c->type, c->params, &m) != QC_OK) {
            fprintf(stderr, "converter_dump: %s\n", qc_last_error());
            return 1;
        }
        qc_converter cv;
        qc_converter_default(&cv, c->lo, c->hi);
        cv.enob = c->enob;
        cv.jitter_s = c->jitter_s;
        cv.signal_freq = c->freq;
        if (isnan(c->gain)) {
            cv.gain_mode = QC_GAIN_AGC;
            cv.agc_k = c->agc_k;
            cv.offset = NAN;
        } else {
            cv.gain = c->gain;
            cv.offset = c->offset;
        }
        qc_design_request r;
        qc_design_request_default(&r);
        r.channel.model = m;
        r.channel.levels = lv;
        r.channel.nlevels = n;
        r.quantizer.kind = QC_QUANTIZER_CONVERTER;
        r.quantizer.cells = (size_t)1 << c->bits;
        r.quantizer.converter = &cv;
        r.numerics.skip_snr_penalty = 1;
        qc_design_result res;
        if (qc_design(&r, &res) != QC_OK) {
            fprintf(stderr, "converter_dump: case %zu: %s\n", i + 1, qc_last_error());
            return 1;
        }
        json_t *o = json_object();
        json_object_set_new(o, "model", json_string(c->type->name));
        json_object_set_new(o, "params", array_of(c->params, c->type->nparams));
        json_object_set_new(o, "levels", array_of(lv, n));
        json_object_set_new(o, "bits", json_integer(c->bits));
        json_object_set_new(o, "enob", json_real(isnan(c->enob) ? c->bits : c->enob));
        json_object_set_new(o, "jitter_s", json_real(c->jitter_s));
        json_object_set_new(o, "signal_freq", json_real(c->freq));
        json_object_set_new(o, "full_scale", json_pack("[f, f]", c->lo, c->hi));
        json_object_set_new(o, "agc_k", json_real(isnan(c->agc_k) ? 0.0 : c->agc_k));
        json_object_set_new(o, "gain", json_real(res.gain));
        json_object_set_new(o, "offset", json_real(res.offset));
        json_object_set_new(o, "transitions", array_of(res.thresholds, res.nthresholds));
        json_object_set_new(o, "rate_bits", json_real(res.rate_bits));
        json_array_append_new(root, o);
        qc_design_result_clear(&res);
        qc_model_free(m);
    }
    char *text = json_dumps(root, JSON_REAL_PRECISION(17));
    puts(text);
    free(text);
    json_decref(root);
    return 0;
}

/* isi_coherent_dump.c — prints, as JSON, the taps of a coherent receiver's
 * response (qc_isi_coherent_response_taps) or the rates of a coherent
 * channel with memory (qc_isi_rate: complex taps, QAM or PAM on the
 * in-phase quadrature, product quantizer), for
 * tests/capacity/check_isi_coherent.py, which computes the references
 * with numpy/scipy.
 *
 * Usage: isi_coherent_dump taps SPEC BAUD WAVELENGTH_NM MAX_TAPS
 *        isi_coherent_dump rate SIGMA TAPS THRESHOLDS LEVELS qam|pam SYMBOLS SEED
 *   TAPS: the tap grammar of --taps (a+bj); the model is gauss(SIGMA). */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <jansson.h>

#include "core/parse.h"
#include "quantcap.h"

static int print_json(json_t *o)
{
    json_dumpf(o, stdout, JSON_REAL_PRECISION(17));
    putchar('\n');
    json_decref(o);
    return 0;
}

static int taps(char **argv)
{
    double rs, lambda, re[QC_ISI_MAX_TAPS], im[QC_ISI_MAX_TAPS], trunc;
    size_t max, n;
    if (qc_parse_double(argv[3], &rs) != QC_OK || qc_parse_double(argv[4], &lambda) != QC_OK ||
        qc_parse_size(argv[5], 1, QC_ISI_MAX_TAPS, &max) != QC_OK ||
        qc_isi_coherent_response_taps(argv[2], rs, lambda, max, re, im, &n, &trunc) != QC_OK) {
        fprintf(stderr, "isi_coherent_dump: %s\n", qc_last_error());
        return 2;
    }
    json_t *r = json_array(), *i = json_array();
    for (size_t k = 0; k < n; k++) {
        json_array_append_new(r, json_real(re[k]));
        json_array_append_new(i, json_real(im[k]));
    }
    return print_json(json_pack("{s:o, s:o, s:f}", "re", r, "im", i, "truncated", trunc));
}

static int rate(char **argv)
{
    double sigma, *thr = NULL, *levels = NULL, re[QC_ISI_MAX_TAPS], im[QC_ISI_MAX_TAPS];
    size_t nt, nth, nl, symbols, seed;
    int cplx;
    if (qc_parse_double(argv[2], &sigma) != QC_OK ||
        qc_isi_taps_parse(argv[3], re, im, &nt, &cplx) != QC_OK ||
        qc_parse_list(argv[4], &thr, &nth) != QC_OK ||
        qc_parse_list(argv[5], &levels, &nl) != QC_OK ||
        qc_parse_size(argv[7], 1, (size_t)1 << 40, &symbols) != QC_OK ||
        qc_parse_size(argv[8], 0, (size_t)1 << 62, &seed) != QC_OK) {
        fprintf(stderr, "isi_coherent_dump: bad argument: %s\n", qc_last_error());
        return 2;
    }
    qc_model *m = NULL;
    if (qc_model_alloc(&qc_model_gauss, &sigma, &m) != QC_OK) {
        fprintf(stderr, "isi_coherent_dump: %s\n", qc_last_error());
        return 2;
    }
    qc_isi_request req = {.model = m, .levels = levels, .nlevels = nl, .taps = re,
                          .ntaps = nt, .thresholds = thr, .nthresholds = nth,
                          .symbols = symbols, .seed = seed, .unquantized = 1, .taps_imag = im,
                          .mode = strcmp(argv[6], "qam") == 0 ? QC_ISI_COHERENT_QAM
                                                               : QC_ISI_COHERENT_PAM};
    qc_isi_result r;
    int rc = 0;
    if (qc_isi_rate(&req, &r) != QC_OK) {
        fprintf(stderr, "isi_coherent_dump: %s\n", qc_last_error());
        rc = 1;
    } else {
        print_json(json_pack("{s:f, s:f, s:f, s:f, s:f, s:I}", "rate", r.rate_bits, "ci",
                             r.rate_ci_bits, "unquantized", r.unquantized_bits,
                             "unquantized_ci", r.unquantized_ci_bits, "symbolwise",
                             r.symbolwise_bits, "states", (json_int_t)r.states));
    }
    qc_model_free(m);
    free(thr);
    free(levels);
    return rc;
}

int main(int argc, char **argv)
{
    if (argc == 6 && strcmp(argv[1], "taps") == 0)
        return taps(argv);
    if (argc == 9 && strcmp(argv[1], "rate") == 0)
        return rate(argv);
    fprintf(stderr, "usage: isi_coherent_dump taps SPEC BAUD WAVELENGTH_NM MAX_TAPS\n"
                    "       isi_coherent_dump rate SIGMA TAPS THRESHOLDS LEVELS qam|pam "
                    "SYMBOLS SEED\n");
    return 2;
}

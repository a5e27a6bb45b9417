/* isi_dump.c — runs the memory-channel engine (simulation-based rates of
 * Arnold, Loeliger, Vontobel, Kavčić, Zeng, IEEE Trans. IT 52(8), 2006)
 * on one Gaussian ISI channel given on the command line and prints its
 * rates as JSON, for tests/capacity/check_isi.py, which computes the
 * exact references with numpy/scipy. When the number of levels is a power
 * of 2, the levels (given in increasing order) get the binary reflected
 * Gray labels i ^ (i >> 1) and the detectors' BER and GMI are printed too.
 *
 * Usage: isi_dump SIGMA TAPS THRESHOLDS LEVELS SYMBOLS SEED
 *   TAPS, THRESHOLDS, LEVELS: comma lists; the model is gauss(SIGMA). */
#include <stdio.h>
#include <stdlib.h>

#include <jansson.h>

#include "core/parse.h"
#include "quantcap.h"

int main(int argc, char **argv)
{
    if (argc != 7) {
        fprintf(stderr, "usage: isi_dump SIGMA TAPS THRESHOLDS LEVELS SYMBOLS SEED\n");
        return 2;
    }
    double sigma, *taps = NULL, *thr = NULL, *levels = NULL;
    size_t nt, nth, nl, symbols, seed;
    if (qc_parse_double(argv[1], &sigma) != QC_OK || qc_parse_list(argv[2], &taps, &nt) != QC_OK ||
        qc_parse_list(argv[3], &thr, &nth) != QC_OK ||
        qc_parse_list(argv[4], &levels, &nl) != QC_OK ||
        qc_parse_size(argv[5], 1, (size_t)1 << 40, &symbols) != QC_OK ||
        qc_parse_size(argv[6], 0, (size_t)1 << 62, &seed) != QC_OK) {
        fprintf(stderr, "isi_dump: bad argument: %s\n", qc_last_error());
        return 2;
    }
    qc_model *m = NULL;
    if (qc_model_alloc(&qc_model_gauss, &sigma, &m) != QC_OK) {
        fprintf(stderr, "isi_dump: %s\n", qc_last_error());
        return 2;
    }
    size_t labels[64];
    unsigned nbits = 0;
    while (((size_t)1 << nbits) < nl)
        nbits++;
    const int labelled = nl <= 64 && ((size_t)1 << nbits) == nl;
    for (size_t i = 0; labelled && i < nl; i++)
        labels[i] = i ^ (i >> 1);
    qc_isi_request req = {.model = m, .levels = levels, .nlevels = nl, .taps = taps,
                          .ntaps = nt, .thresholds = thr, .nthresholds = nth,
                          .symbols = symbols, .seed = seed, .unquantized = 1,
                          .labels = labelled ? labels : NULL, .label_bits = nbits};
    qc_isi_result r;
    if (qc_isi_rate(&req, &r) != QC_OK) {
        fprintf(stderr, "isi_dump: %s\n", qc_last_error());
        return 1;
    }
    json_t *o = json_pack("{s:f, s:f, s:f, s:f, s:f, s:I, s:I}", "rate", r.rate_bits, "ci",
                          r.rate_ci_bits, "unquantized", r.unquantized_bits, "unquantized_ci",
                          r.unquantized_ci_bits, "symbolwise", r.symbolwise_bits, "states",
                          (json_int_t)r.states, "symbols", (json_int_t)r.symbols);
    if (labelled) {
        json_object_set_new(o, "symbolwise_ber", json_real(r.symbolwise_ber));
        json_object_set_new(o, "symbolwise_gmi", json_real(r.symbolwise_gmi_bits));
        json_object_set_new(o, "bcjr_ber", json_real(r.bcjr_ber));
        json_object_set_new(o, "bcjr_ber_ci", json_real(r.bcjr_ber_ci));
        json_object_set_new(o, "bcjr_ber_counted", json_real(r.bcjr_ber_counted));
        json_object_set_new(o, "bcjr_ber_counted_ci", json_real(r.bcjr_ber_counted_ci));
        json_object_set_new(o, "bcjr_gmi", json_real(r.bcjr_gmi_bits));
        json_object_set_new(o, "bcjr_gmi_ci", json_real(r.bcjr_gmi_ci_bits));
        json_object_set_new(o, "unquantized_bcjr_ber", json_real(r.unquantized_bcjr_ber));
        json_object_set_new(o, "unquantized_bcjr_ber_ci", json_real(r.unquantized_bcjr_ber_ci));
        json_object_set_new(o, "unquantized_bcjr_gmi", json_real(r.unquantized_bcjr_gmi_bits));
        json_object_set_new(o, "unquantized_bcjr_gmi_ci",
                            json_real(r.unquantized_bcjr_gmi_ci_bits));
    }
    json_dumpf(o, stdout, JSON_REAL_PRECISION(17));
    putchar('\n');
    json_decref(o);
    qc_model_free(m);
    free(taps);
    free(thr);
    free(levels);
    return 0;
}

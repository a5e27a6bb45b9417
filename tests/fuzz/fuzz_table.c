/* fuzz_table.c — libFuzzer target for the measured-table reader
 * (qc_model_table_parse, format in docs/formats.md): any input must give
 * either a model whose tails are probabilities (finite, in [0, 1], P(Y < t)
 * + P(Y ≥ t) = 1), whose density and moments are finite and whose
 * transition matrix passes qc_dmc_check, or a status with a message that
 * names the text, never a crash, leak or undefined behaviour. */
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "quantcap.h"

#define SUM_TOL 1e-9 /* |below + above − 1| allowed */

static void check_point(const qc_model *m, double x, double t)
{
    double b = qc_model_get_type(m)->below(m, x, t), a = qc_model_get_type(m)->above(m, x, t);
    if (!(b >= 0.0 && b <= 1.0 + SUM_TOL && a >= 0.0 && a <= 1.0 + SUM_TOL))
        abort();
    if (fabs(a + b - 1.0) > SUM_TOL)
        abort();
    double f = qc_model_get_type(m)->density(m, x, t);
    if (!(f >= 0.0) || !isfinite(f))
        abort();
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    qc_model *m = (qc_model *)&size; /* must be reset to NULL on failure */
    qc_status st = qc_model_table_parse((const char *)data, size, "fuzz", &m);
    if (st != QC_OK) {
        if (m != NULL || strncmp(qc_last_error(), "fuzz", 4) != 0)
            abort();
        return 0;
    }
    const double *levels;
    size_t nl;
    if (qc_model_table_levels(m, &levels, &nl) != QC_OK || nl == 0)
        abort();
    if (qc_model_check_levels(m, levels, nl) != QC_OK)
        abort();
    double lo, hi;
    qc_model_get_type(m)->support(m, levels[0], &lo, &hi);
    if (!(lo < hi) || !isfinite(lo) || !isfinite(hi))
        abort();
    /* Tails at the ends, outside, and at a few inner points. */
    const double frac[] = {-0.5, 0.0, 1e-9, 0.25, 0.5, 0.75, 1.0 - 1e-9, 1.0, 1.5};
    for (size_t k = 0; k < nl && k < 8; k++) {
        for (size_t i = 0; i < sizeof frac / sizeof frac[0]; i++) {
            double t = lo + frac[i] * (hi - lo);
            if (isfinite(t))
                check_point(m, levels[k], t);
        }
        double mean, var;
        if (qc_model_moments(m, levels[k], &mean, &var) == QC_OK &&
            (isnan(mean) || isnan(var) || var < 0.0))
            abort();
    }
    /* A 4-cell quantizer over the support: a valid matrix or a message. */
    double th[3] = {lo + 0.25 * (hi - lo), lo + 0.5 * (hi - lo), lo + 0.75 * (hi - lo)};
    if (isfinite(th[0]) && isfinite(th[2]) && th[0] < th[1] && th[1] < th[2] &&
        nl <= 64) {
        qc_dmc *d = NULL;
        st = qc_discretize(m, levels, nl, th, 3, &d);
        if (st == QC_OK) {
            if (qc_dmc_check(d) != QC_OK)
                abort();
            qc_dmc_free(d);
        } else if (d != NULL || qc_last_error()[0] == '\0') {
            abort();
        }
    }
    qc_model_free(m);
    return 0;
}

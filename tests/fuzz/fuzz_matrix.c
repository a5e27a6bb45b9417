/* fuzz_matrix.c — libFuzzer target for the channel-matrix text reader:
 * any input must give either a valid row-stochastic matrix or a status with
 * a message, never a crash, leak or undefined behaviour. */
#include <math.h>
#include <stdint.h>
#include <stdlib.h>

#include "quantcap.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    qc_dmc *d = NULL;
    qc_status st = qc_dmc_parse((const char *)data, size, "fuzz", &d);
    if (st == QC_OK) {
        /* A parsed matrix must pass the checker and have finite capacity
         * bounds when small enough to rate quickly. */
        if (qc_dmc_check(d) != QC_OK)
            abort();
        if (d->nx * d->ny <= 64) {
            qc_ba_options opt;
            qc_ba_options_default(&opt);
            opt.max_iterations = 2000;
            qc_capacity_result r;
            qc_status cs = qc_capacity(d, &opt, NULL, &r, NULL);
            if ((cs == QC_OK || cs == QC_ENOCONV) &&
                (!isfinite(r.capacity_bits) || !isfinite(r.upper_bound_bits) ||
                 r.upper_bound_bits < r.capacity_bits - 1e-9))
                abort();
        }
        qc_dmc_free(d);
    } else if (d != NULL || qc_last_error()[0] == '\0') {
        abort();
    }
    return 0;
}

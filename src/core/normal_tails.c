/* normal_tails.c — both tails of the standard normal law from one
 * evaluation where that loses nothing: GSL's gsl_cdf_ugaussian_P and _Q
 * themselves take the larger tail as 1 − the smaller for |u| ≥ 0.66291,
 * so beyond one standard deviation (with a margin) the smaller tail is
 * computed and the larger is 1.0 minus it, the same operation, and the
 * values are GSL's bit for bit (tests/quantizer/test_reuse.c checks it).
 * Nearer the mean both are computed. Used by the Gaussian models' tails
 * and by the I/Q pair's cell probabilities.
 * SPDX-License-Identifier: GPL-3.0-or-later */
#include "core/internal.h"

#include <gsl/gsl_cdf.h>

#define ONE_CALL_FROM 1.0 /* |u| from which one call is enough */

void qc_normal_tails(double u, double *below, double *above)
{
    if (u >= ONE_CALL_FROM) {
        *above = gsl_cdf_ugaussian_Q(u);
        *below = 1.0 - *above;
    } else if (u <= -ONE_CALL_FROM) {
        *below = gsl_cdf_ugaussian_P(u);
        *above = 1.0 - *below;
    } else {
        *below = gsl_cdf_ugaussian_P(u);
        *above = gsl_cdf_ugaussian_Q(u);
    }
}

/* bench_ppm.c — cost of the pulse-position rates (src/capacity/ppm.c,
 * src/design/ppm_design.c), as ratios measured in one run (CPU time of
 * this single-threaded process):
 *  - the certified soft rate of M-ary PPM through a 16-cell count
 *    quantizer at M = 2^4 … 2^20, each as a multiple of the M = 256 one
 *    (the work per integrand point is O(K), independent of M);
 *  - a whole PPM design at M = 256 with 4 bits (per-slot design,
 *    refinement for the symbol rate, hard receiver, unquantized
 *    reference) against the per-slot design alone.
 *
 * Target (checked, exit status 1 if missed): the rate at M = 2^20 costs
 * at most 4 times the rate at M = 256, both to a 1e-9 bit bracket. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#include "quantcap.h"

#define TARGET_RATIO 4.0
#define REPEATS 20

static double now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static int fail(const char *what)
{
    fprintf(stderr, "bench_ppm: %s: %s\n", what, qc_last_error());
    return 1;
}

int main(void)
{
    /* photon counting, 20 signal photons, 0.5 background (invented) */
    double params[2] = {20.0, 0.5}, levels[2] = {0.0, 1.0}, t[15];
    for (int j = 0; j < 15; j++)
        t[j] = 1.0 + 2.0 * j;
    qc_model *m;
    qc_dmc *d;
    if (qc_model_alloc(&qc_model_poisson, params, &m) != QC_OK)
        return fail("model");
    if (qc_discretize(m, levels, 2, t, 15, &d) != QC_OK)
        return fail("discretize");
    double base = NAN, worst = 0.0;
    printf("soft rate, 16 cells, 1e-9 bit bracket:\n");
    for (size_t slots = 16; slots <= ((size_t)1 << 20); slots *= 4) {
        qc_ppm_bounds b;
        double t0 = now();
        for (int r = 0; r < REPEATS; r++)
            if (qc_ppm_soft_rate(d->p, d->p + 16, 16, slots, 1e-9, &b) != QC_OK)
                return fail("soft rate");
        double dt = (now() - t0) / REPEATS;
        if (slots == 256)
            base = dt;
        printf("  M = %7zu: %.9f bit/symbol, %zu evaluations, %.3g ms\n", slots, b.rate_bits,
               b.evaluations, 1e3 * dt);
        if (slots >= 256 && isfinite(base) && dt / base > worst)
            worst = dt / base;
    }
    printf("  largest cost beyond M = 256: %.2f x the M = 256 rate (target <= %.0f)\n", worst,
           TARGET_RATIO);

    qc_design_request req;
    qc_design_request_default(&req);
    req.channel.model = m;
    req.channel.levels = levels;
    req.channel.nlevels = 2;
    req.quantizer.cells = 16;
    double law[2] = {255.0 / 256.0, 1.0 / 256.0};
    req.input.probabilities = law;
    qc_design_result r;
    double t0 = now();
    if (qc_design(&req, &r) != QC_OK)
        return fail("per-slot design");
    double slot = now() - t0;
    qc_design_result_clear(&r);
    req.input.probabilities = NULL;
    req.channel.ppm_slots = 256;
    t0 = now();
    if (qc_design(&req, &r) != QC_OK)
        return fail("PPM design");
    double whole = now() - t0;
    printf("PPM design, M = 256, 4 bits: %.9f bit/symbol (hard %.9f); %.3g ms, %.1f x the "
           "per-slot design\n",
           r.rate_bits, r.hard_rate_bits, 1e3 * whole, whole / slot);
    qc_design_result_clear(&r);
    qc_dmc_free(d);
    qc_model_free(m);
    if (worst > TARGET_RATIO) {
        fprintf(stderr, "bench_ppm: the rate at large M costs %.2f x the M = 256 one (target "
                        "<= %.0f)\n",
                worst, TARGET_RATIO);
        return 1;
    }
    return 0;
}

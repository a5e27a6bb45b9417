/* bench_levelgrid.c — the capacity engine on a fine level grid (the
 * problem under `design --level-grid ... --objective capacity
 * --power-limit`): Gaussian noise, a 2-bit quantizer at fixed
 * thresholds, 1024 and 4096 candidate levels on [-1, 1], power budget
 * 0.5, tolerance 1e-9 bit; the default engine ("pruned": with one cost
 * on 32 candidates or more, the active-set Newton solve priced over every
 * candidate, cost_newton.c, then the certificate over all of them)
 * against prune = 0 (the multiplier search on all inputs; only at 1024:
 * at 4096 it takes minutes). One line per case: time, iterations (Newton
 * steps for the active-set solve), certified bounds, and the ratio in
 * this run. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#include "quantcap.h"

static double now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static int solve(size_t n, double sigma, int prune, double *seconds, qc_capacity_result *r)
{
    double p[1] = {sigma}, t[3] = {-0.6, 0.0, 0.6};
    qc_model *m = NULL;
    qc_dmc *d = NULL;
    double *lv = malloc(n * sizeof *lv), *c = malloc(n * sizeof *c);
    int ok = lv && c && qc_model_alloc(&qc_model_gauss, p, &m) == QC_OK;
    for (size_t i = 0; ok && i < n; i++) {
        lv[i] = -1.0 + 2.0 * (double)i / (double)(n - 1);
        c[i] = lv[i] * lv[i];
    }
    ok = ok && qc_discretize(m, lv, n, t, 3, &d) == QC_OK;
    if (ok) {
        qc_ba_options o;
        qc_ba_options_default(&o);
        o.costs = c;
        o.budget = 0.5;
        o.prune = prune;
        double t0 = now();
        ok = qc_capacity(d, &o, NULL, r, NULL) == QC_OK;
        *seconds = now() - t0;
    }
    if (!ok)
        fprintf(stderr, "bench_levelgrid: %s\n", qc_last_error());
    qc_dmc_free(d);
    qc_model_free(m);
    free(lv);
    free(c);
    return ok;
}

int main(void)
{
    const double sigmas[2] = {0.5, 0.2};
    int ok = 1;
    printf("engine, power budget 0.5, 2-bit quantizer, tol 1e-9 bit\n");
    for (int k = 0; k < 2; k++) {
        double tp, tu, t4;
        qc_capacity_result rp, ru, r4;
        if (!solve(1024, sigmas[k], 1, &tp, &rp) || !solve(1024, sigmas[k], 0, &tu, &ru) ||
            !solve(4096, sigmas[k], 1, &t4, &r4))
            return 1;
        printf("sigma %.2f  1024 pruned   %7.3f s  %8zu it  [%.12f, %.12f]\n", sigmas[k], tp,
               rp.iterations, rp.capacity_bits, rp.upper_bound_bits);
        printf("sigma %.2f  1024 unpruned %7.3f s  %8zu it  [%.12f, %.12f]  pruned %.1fx faster\n",
               sigmas[k], tu, ru.iterations, ru.capacity_bits, ru.upper_bound_bits, tu / tp);
        printf("sigma %.2f  4096 pruned   %7.3f s  %8zu it  [%.12f, %.12f]  %.1fx the 1024 run\n",
               sigmas[k], t4, r4.iterations, r4.capacity_bits, r4.upper_bound_bits, t4 / tp);
        /* the same capacity: the certified intervals overlap */
        if (rp.capacity_bits > ru.upper_bound_bits + 1e-12 ||
            ru.capacity_bits > rp.upper_bound_bits + 1e-12) {
            printf("MISMATCH: pruned and unpruned certified intervals are disjoint\n");
            ok = 0;
        }
    }
    return ok ? 0 : 1;
}

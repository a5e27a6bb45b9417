/* bench_alphabet.c — cost of the alphabet module's additions, as ratios
 * measured in one run (CPU time of this single-threaded process):
 *  - capacity under two average costs (qc_capacity_costs: combined-cost
 *    engine runs and a bisection on the combination weight) against one
 *    single-cost engine run (qc_capacity) on the same channel;
 *  - the BICM GMI of a channel (qc_gmi) against its mutual information
 *    (qc_mutual_information), and the dispersion (qc_dispersion).
 *
 * Target (checked, exit status 1 if missed): the two-cost capacity of a
 * 21-level intensity grid through 256 cells, with power (≤ 0.5) and mean
 * (≤ 0.4) both binding, costs at most 20 times one single-cost engine run
 * (the power-only one) to a 1e-9 bit gap. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#include "quantcap.h"

#define TARGET_RUNS 20.0
#define REPEATS 1
#define EVAL_REPEATS 200

static double now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static int fail(const char *what)
{
    fprintf(stderr, "bench_alphabet: %s: %s\n", what, qc_last_error());
    return 1;
}

int main(void)
{
    /* gauss-sd intensity channel (invented example): sigma0 0.2, a 0.05 */
    double params[3] = {0.2, 0.05, 0.0};
    enum { N = 21, CELLS = 256 };
    double levels[N], power[N], mean[N], t[CELLS - 1];
    for (size_t i = 0; i < N; i++) {
        levels[i] = 2.0 * (double)i / (N - 1);
        power[i] = levels[i] * levels[i];
        mean[i] = levels[i];
    }
    for (size_t j = 0; j + 1 < CELLS; j++)
        t[j] = -1.0 + 4.5 * (double)(j + 1) / CELLS;
    qc_model *m;
    qc_dmc *d;
    if (qc_model_alloc(&qc_model_gauss_sd, params, &m) != QC_OK ||
        qc_discretize(m, levels, N, t, CELLS - 1, &d) != QC_OK)
        return fail("channel");
    qc_ba_options opt;
    qc_ba_options_default(&opt);
    opt.tol_bits = 1e-9;

    /* one single-cost engine run (power only) */
    opt.costs = power;
    opt.budget = 0.5;
    qc_capacity_result cr;
    double t0 = now();
    for (int k = 0; k < REPEATS; k++)
        if (qc_capacity(d, &opt, NULL, &cr, NULL) != QC_OK)
            return fail("single-cost capacity");
    double single = (now() - t0) / REPEATS;
    opt.costs = NULL;

    /* two costs, both binding */
    qc_cost costs[2] = {{power, 0.5}, {mean, 0.4}};
    qc_costs_result res;
    t0 = now();
    for (int k = 0; k < REPEATS; k++)
        if (qc_capacity_costs(d, &opt, costs, 2, NULL, &res, NULL) != QC_OK)
            return fail("two-cost capacity");
    double two = (now() - t0) / REPEATS;
    double ratio = two / single;
    printf("single-cost engine run   %10.3f ms  (C = %.9f bit)\n", 1e3 * single,
           cr.capacity_bits);
    printf("two-cost capacity        %10.3f ms  (C = %.9f bit, gap %.1e, %zu engine runs)\n",
           1e3 * two, res.capacity_bits, res.gap_bits, res.engine_runs);
    printf("ratio two-cost / single  %10.1f  (target <= %.0f)\n", ratio, TARGET_RUNS);

    /* GMI and dispersion against MI: 16 levels, 4096 outputs */
    enum { M = 16, FINE = 4096 };
    double lv[M], law[M], ft[FINE - 1];
    size_t labels[M];
    unsigned nbits;
    for (size_t i = 0; i < M; i++) {
        lv[i] = 0.1 * (double)i;
        law[i] = 1.0 / M;
    }
    for (size_t j = 0; j + 1 < FINE; j++)
        ft[j] = -1.0 + 4.0 * (double)(j + 1) / FINE;
    qc_dmc *f;
    if (qc_discretize(m, lv, M, ft, FINE - 1, &f) != QC_OK ||
        qc_gray_labels(lv, M, labels, &nbits) != QC_OK)
        return fail("16-level channel");
    double mi = 0, g = 0, v = 0, sink = 0;
    t0 = now();
    for (int k = 0; k < EVAL_REPEATS; k++) {
        qc_mutual_information(f, law, &mi);
        sink += mi;
    }
    double t_mi = (now() - t0) / EVAL_REPEATS;
    t0 = now();
    for (int k = 0; k < EVAL_REPEATS; k++) {
        qc_gmi(f, law, labels, nbits, &g);
        sink += g;
    }
    double t_gmi = (now() - t0) / EVAL_REPEATS;
    t0 = now();
    for (int k = 0; k < EVAL_REPEATS; k++) {
        qc_dispersion(f, law, NULL, &v);
        sink += v;
    }
    double t_v = (now() - t0) / EVAL_REPEATS;
    printf("16 x 4096: MI %.3f ms, GMI %.3f ms (x%.2f), dispersion %.3f ms (x%.2f)%s\n",
           1e3 * t_mi, 1e3 * t_gmi, t_gmi / t_mi, 1e3 * t_v, t_v / t_mi,
           sink > 0 ? "" : " ");
    qc_dmc_free(f);
    qc_dmc_free(d);
    qc_model_free(m);
    if (!(ratio <= TARGET_RUNS)) {
        printf("target missed\n");
        return 1;
    }
    return 0;
}

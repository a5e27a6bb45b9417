/* bench_models.c — time to discretize each noise model into a 16-level ×
 * 4096-cell transition matrix (best of REPEAT runs, fresh model each run
 * so that per-instance caches start empty). For `apd` it also splits the
 * time into FFT planning (grids, once per transform length), per-level
 * law computation (execute) and threshold evaluation, and checks that
 * the plans are reused across the 16 levels (exit 1 if more than 2 grids
 * were planned). */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "models/apd_gain.h"
#include "quantcap.h"

#define NLEVELS 16
#define CELLS 4096
#define REPEAT 3

static double now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static int fail(const char *what)
{
    fprintf(stderr, "bench_models: %s: %s\n", what, qc_last_error());
    return 1;
}

/* A 16-level table: Gaussian-shaped densities on 2001 points (invented). */
static char *table_text(void)
{
    size_t cap = 1 << 20, used = 0;
    char *s = malloc(cap);
    used += (size_t)snprintf(s + used, cap - used, "levels");
    for (int k = 0; k < NLEVELS; k++)
        used += (size_t)snprintf(s + used, cap - used, " %d", k);
    used += (size_t)snprintf(s + used, cap - used, "\n");
    for (int i = 0; i <= 2000; i++) {
        double y = -5.0 + 25.0 * i / 2000.0;
        used += (size_t)snprintf(s + used, cap - used, "%.6g", y);
        for (int k = 0; k < NLEVELS; k++) {
            double sd = 0.4 + 0.05 * k, u = (y - k) / sd;
            used += (size_t)snprintf(s + used, cap - used, " %.6g", exp(-0.5 * u * u));
        }
        used += (size_t)snprintf(s + used, cap - used, "\n");
    }
    return s;
}

typedef struct {
    const char *name;
    double params[QC_MODEL_MAX_PARAMS];
    double level_scale; /* levels k·scale, k = 0..15 */
} bench_case;

static int run(const bench_case *bc, const char *table)
{
    double levels[NLEVELS], *t = malloc((CELLS - 1) * sizeof *t);
    for (int k = 0; k < NLEVELS; k++)
        levels[k] = k * bc->level_scale;
    double best = INFINITY;
    qc_apd_stats stats = {0};
    for (int rep = 0; rep < REPEAT; rep++) {
        qc_model *m;
        qc_status st = table ? qc_model_table_parse(table, strlen(table), "bench", &m)
                             : qc_model_alloc(qc_model_type_find(bc->name), bc->params,
                                              &m);
        if (st != QC_OK)
            return fail(bc->name);
        /* threshold range from the support (for apd from its Gaussian
         * approximation, so that the timed matrix includes the planning) */
        qc_model *range = m;
        if (strcmp(bc->name, "apd") == 0 &&
            qc_model_alloc(&qc_model_apd_gauss, bc->params, &range) != QC_OK)
            return fail("apd-gauss");
        double lo, hi, l2, h2;
        qc_model_get_type(range)->support(range, levels[0], &lo, &hi);
        qc_model_get_type(range)->support(range, levels[NLEVELS - 1], &l2, &h2);
        if (range != m)
            qc_model_free(range);
        lo = fmin(lo, l2);
        hi = fmax(hi, h2);
        for (int j = 0; j < CELLS - 1; j++)
            t[j] = qc_model_get_type(m)->output == QC_OUTPUT_COUNTS
                       ? j + 1.0
                       : lo + (hi - lo) * (j + 1.0) / CELLS;
        qc_dmc *d;
        qc_apd_stats before = {0};
        if (strcmp(bc->name, "apd") == 0)
            qc_apd_get_stats(m, &before); /* zero: nothing computed yet */
        double t0 = now();
        st = qc_discretize(m, levels, NLEVELS, t, CELLS - 1, &d);
        double dt = now() - t0;
        if (st != QC_OK)
            return fail(bc->name);
        qc_dmc_free(d);
        if (dt < best)
            best = dt;
        if (strcmp(bc->name, "apd") == 0 && rep == 0) {
            qc_apd_get_stats(m, &stats);
            stats.plans -= before.plans;
            stats.plan_seconds -= before.plan_seconds;
            stats.levels -= before.levels;
            stats.level_seconds -= before.level_seconds;
            t0 = now(); /* a second matrix on the same instance: cached laws */
            st = qc_discretize(m, levels, NLEVELS, t, CELLS - 1, &d);
            double again = now() - t0;
            qc_dmc_free(d);
            printf("  apd first matrix %.4f s = plan %.4f s (%zu grid%s) + "
                   "execute %.4f s (%zu levels) + thresholds %.4f s; "
                   "same instance again %.4f s\n",
                   dt, stats.plan_seconds, stats.plans, stats.plans == 1 ? "" : "s",
                   stats.level_seconds, stats.levels,
                   dt - stats.plan_seconds - stats.level_seconds, again);
        }
        qc_model_free(m);
    }
    printf("%-10s %2d levels x %d cells: %8.4f s per matrix\n", bc->name, NLEVELS,
           CELLS, best);
    free(t);
    if (strcmp(bc->name, "apd") == 0 && stats.plans > 2) {
        fprintf(stderr, "bench_models: apd planned %zu grids for 16 levels\n",
                stats.plans);
        return 1;
    }
    return 0;
}

int main(void)
{
    const bench_case cases[] = {
        {"gauss", {0.3}, 1.0},
        {"gauss-sd", {0.3, 0.05, 0.001}, 1.0},
        {"poisson", {100.0, 1.0}, 1.0 / 15},
        {"apd", {200.0, 1.0, 10.0, 0.3, 50.0}, 1.0 / 15},
        {"apd-gauss", {200.0, 1.0, 10.0, 0.3, 50.0}, 1.0 / 15},
        {"preamp", {4.0}, 10.0},
        {"table", {0}, 1.0},
    };
    char *table = table_text();
    int rc = 0;
    for (size_t i = 0; i < sizeof cases / sizeof *cases && rc == 0; i++)
        rc = run(&cases[i], strcmp(cases[i].name, "table") == 0 ? table : NULL);
    free(table);
    return rc;
}

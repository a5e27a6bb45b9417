/* bench_optimal.c — the whole MI-optimal threshold design (grid sized by
 * the resolution and the noise scale with cells of equal width in the
 * variance-stabilizing coordinate, dynamic programme of Kurkoski & Yagi
 * 2014 / He et al. 2021 on it, Newton refinement, threshold moves) at 1
 * to 8 ADC bits for
 *  - PAM-8 (±1, ±3, ±5, ±7) in Gaussian noise at 16 dB, and
 *  - unipolar PAM-8 (0 … 7) in signal-dependent Gaussian noise
 *    (gauss-sd, sigma0 = 0.2, a = 0.05: σ from 0.2 to 0.62),
 * each against
 *  - one evaluation of the rate at the final thresholds (qc_cell_mi_eval:
 *    the cell probabilities and the mutual information), the floor no
 *    design can beat; and
 *  - a scipy peer (nelder_mead_peer.py: Nelder–Mead from uniform
 *    thresholds, Nelder & Mead, Computer Journal 7(4), 1965), timed
 *    inside the script without its imports, given BUDGET_S seconds.
 * Times are CPU seconds of this process per run (the fastest of REPEATS
 * batches of runs, each batch at least BATCH_S seconds, so that the
 * clock's cost of about a microsecond does not count) and the peer's own
 * clock; the ratios are measured in one run.
 *
 * Targets (exit status 1 if missed): at every resolution the design is
 * at least TARGET_PEER times faster than the peer at an equal or better
 * rate, and costs at most TARGET_FLOOR rate evaluations.
 *
 * usage: bench_optimal PYTHON PEER_SCRIPT (without them only the floor
 * ratio is measured). */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "quantizer/quantizer.h"

#define TARGET_PEER 100.0
#define TARGET_FLOOR 10.0
#define REPEATS 5
#define BATCH_S 0.02 /* CPU seconds of one timed batch, at least */
#define BUDGET_S 20.0
#define RATE_SLACK_BITS 1e-9 /* equal rate: rounding of the two programs */

static double cpu(void)
{
    struct timespec t;
    clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static int fail(const char *what)
{
    fprintf(stderr, "bench_optimal: %s: %s\n", what, qc_last_error());
    return 1;
}

/* Runs the peer for `cells` cells; 0 on success. */
static int peer(const char *python, const char *script, const double *sigma,
                const double *levels, size_t nlevels, size_t cells, double *secs,
                double *bits)
{
    char cmd[2048], lv[512] = "", sg[512] = "";
    for (size_t i = 0; i < nlevels; i++) {
        snprintf(lv + strlen(lv), sizeof lv - strlen(lv), "%s%g", i ? "," : "", levels[i]);
        snprintf(sg + strlen(sg), sizeof sg - strlen(sg), "%s%.17g", i ? "," : "", sigma[i]);
    }
    snprintf(cmd, sizeof cmd, "%s %s %s %zu %g %s", python, script, sg, cells, BUDGET_S, lv);
    FILE *f = popen(cmd, "r");
    if (!f)
        return -1;
    int n = fscanf(f, "%lf %lf", secs, bits);
    return pclose(f) == 0 && n == 2 ? 0 : -1;
}

/* Runs per timed batch: enough for BATCH_S seconds (a run of t seconds
 * measured once), so that the clock's own cost and resolution (a system
 * call of about a microsecond on a virtual machine) do not count. */
static size_t batch_size(double t)
{
    double n = t > 0.0 ? ceil(BATCH_S / t) : 1e4;
    return n < 1.0 ? 1 : n > 1e6 ? 1000000 : (size_t)n;
}

/* The whole design as the optimal strategy runs it (automatic grid). */
static qc_status design(const qc_model *m, const double *levels, const double *law,
                        size_t nlevels, size_t cells, double *t, double *mi)
{
    qc_fine_grid g = {0};
    qc_status st = qc_coarse_grid_build(m, levels, law, nlevels, cells, &g);
    if (st == QC_OK)
        st = qc_optimal_thresholds(m, levels, law, nlevels, cells - 1, &g, t, mi, NULL);
    qc_fine_grid_clear(&g);
    return st;
}

/* One model at 1..8 bits; returns 1 if a target is missed, -1 on error. */
static int run(const char *title, qc_model *m, const double *levels, const double *law,
               size_t nlevels, const double *sigma, int argc, char **argv)
{
    int status = 0;
    printf("%s; CPU times per run, fastest of %d batches of >= %g s\n", title, REPEATS, BATCH_S);
    printf("bits  design_s    eval_s      design/eval  rate_bits      peer_s     "
           "peer_bits      peer/design\n");
    for (size_t bits = 1; bits <= 8; bits++) {
        const size_t cells = (size_t)1 << bits, nt = cells - 1;
        double *t = malloc(nt * sizeof *t);
        if (!t)
            return -1;
        /* one run to size the batches, then REPEATS batches */
        double mi = 0.0, t0 = cpu();
        if (design(m, levels, law, nlevels, cells, t, &mi) != QC_OK)
            return fail("design"), -1;
        size_t batch = batch_size(cpu() - t0);
        double best = INFINITY;
        for (int rep = 0; rep < REPEATS; rep++) {
            t0 = cpu();
            for (size_t b = 0; b < batch; b++)
                if (design(m, levels, law, nlevels, cells, t, &mi) != QC_OK)
                    return fail("design"), -1;
            best = fmin(best, (cpu() - t0) / (double)batch);
        }
        qc_cell_mi *w;
        if (qc_cell_mi_alloc(m, levels, law, nlevels, nt, &w) != QC_OK)
            return fail("workspace"), -1;
        double eval = INFINITY, v;
        t0 = cpu();
        if (qc_cell_mi_eval(w, t, &v, NULL) != QC_OK)
            return fail("evaluation"), -1;
        batch = batch_size(cpu() - t0);
        for (int rep = 0; rep < REPEATS; rep++) {
            t0 = cpu();
            for (size_t b = 0; b < batch; b++)
                if (qc_cell_mi_eval(w, t, &v, NULL) != QC_OK)
                    return fail("evaluation"), -1;
            eval = fmin(eval, (cpu() - t0) / (double)batch);
        }
        qc_cell_mi_free(w);
        double bits_rate = mi * QC_LOG2E, floor_ratio = best / eval;
        printf("%4zu  %.3e   %.3e   %9.1f    %.9f", bits, best, eval, floor_ratio,
               bits_rate);
        if (floor_ratio > TARGET_FLOOR)
            status = 1;
        if (argc >= 3) {
            double ps, pb;
            if (peer(argv[1], argv[2], sigma, levels, nlevels, cells, &ps, &pb) != 0) {
                printf("  peer failed\n");
                status = 1;
            } else {
                double speedup = ps / best;
                printf("   %.3e  %.9f  %9.0f%s\n", ps, pb, speedup,
                       bits_rate + RATE_SLACK_BITS < pb ? "  (peer rate higher)" : "");
                if (speedup < TARGET_PEER || bits_rate + RATE_SLACK_BITS < pb)
                    status = 1;
            }
        } else {
            printf("\n");
        }
        fflush(stdout);
        free(t);
    }
    return status;
}

int main(int argc, char **argv)
{
    const double pam[8] = {-7, -5, -3, -1, 1, 3, 5, 7};
    const double unipolar[8] = {0, 1, 2, 3, 4, 5, 6, 7};
    const double law[8] = {0.125, 0.125, 0.125, 0.125, 0.125, 0.125, 0.125, 0.125};
    /* 16 dB: E[x^2] = 21 over sigma^2 */
    const double sigma = sqrt(21.0 / pow(10.0, 1.6));
    const double sd[3] = {0.2, 0.05, 0.0}; /* sigma0, a, b */
    double sig_pam[8], sig_sd[8];
    for (size_t i = 0; i < 8; i++) {
        sig_pam[i] = sigma;
        sig_sd[i] = sqrt(sd[0] * sd[0] + sd[1] * unipolar[i] + sd[2] * unipolar[i] * unipolar[i]);
    }
    qc_model *m, *msd;
    if (qc_model_alloc(&qc_model_gauss, &sigma, &m) != QC_OK ||
        qc_model_alloc(&qc_model_gauss_sd, sd, &msd) != QC_OK)
        return fail("model");
    char title[128];
    snprintf(title, sizeof title, "optimal thresholds, PAM-8, gauss, 16 dB (sigma %.4f)", sigma);
    int a = run(title, m, pam, law, 8, sig_pam, argc, argv);
    int b = a < 0 ? a
                  : run("optimal thresholds, unipolar PAM-8, gauss-sd (sigma0 0.2, a 0.05)",
                        msd, unipolar, law, 8, sig_sd, argc, argv);
    qc_model_free(m);
    qc_model_free(msd);
    if (a < 0 || b < 0)
        return 1;
    int status = a || b;
    printf("targets: design >= %.0fx faster than the peer at an equal or better rate, "
           "<= %.0f rate evaluations: %s\n",
           TARGET_PEER, TARGET_FLOOR, status ? "MISSED" : "met");
    return status;
}

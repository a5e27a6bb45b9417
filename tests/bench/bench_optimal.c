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
 *    design can beat;
 *  - the part of the design its guarantee needs (the result is never
 *    below the DP optimum on its grid): the grid and the DP on it alone
 *    (grid+DP/eval), which shows how much of the floor ratio any design
 *    with that guarantee must pay; and
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

/* One design job: the model, levels and law, the resolution, and where
 * the thresholds and rate go. */
typedef struct {
    const qc_model *m;
    const double *levels, *law;
    size_t nlevels, cells;
    double *t, mi;
    size_t *cuts;    /* the DP's cell boundaries (cells + 1)           */
    qc_cell_mi *w;   /* the evaluation's workspace                      */
} job;

/* The whole design as the optimal strategy runs it (automatic grid). */
static qc_status design(job *j)
{
    qc_fine_grid g = {0};
    qc_status st = qc_coarse_grid_build(j->m, j->levels, j->law, j->nlevels, j->cells, &g);
    if (st == QC_OK)
        st = qc_optimal_thresholds(j->m, j->levels, j->law, j->nlevels, j->cells - 1, &g, j->t,
                                   &j->mi, NULL);
    qc_fine_grid_clear(&g);
    return st;
}

/* What the DP guarantee costs by itself: the design's grid and the DP on
 * it, without the refinement that follows. */
static qc_status guarantee(job *j)
{
    qc_fine_grid g = {0};
    double dp_mi;
    qc_status st = qc_coarse_grid_build(j->m, j->levels, j->law, j->nlevels, j->cells, &g);
    if (st == QC_OK)
        st = qc_dp_quantize(g.p, j->law, j->cells, QC_DP_FAST, j->cuts, &dp_mi);
    qc_fine_grid_clear(&g);
    return st;
}

/* One evaluation of the rate at the design's thresholds, the floor. */
static qc_status evaluation(job *j)
{
    double v;
    return qc_cell_mi_eval(j->w, j->t, &v, NULL);
}

/* CPU seconds per run of f: one run to size the batches, then the fastest
 * of REPEATS batches; -1 on failure. */
static double per_run(qc_status (*f)(job *), job *j)
{
    double t0 = cpu();
    if (f(j) != QC_OK)
        return -1.0;
    size_t batch = batch_size(cpu() - t0);
    double best = INFINITY;
    for (int rep = 0; rep < REPEATS; rep++) {
        t0 = cpu();
        for (size_t b = 0; b < batch; b++)
            if (f(j) != QC_OK)
                return -1.0;
        best = fmin(best, (cpu() - t0) / (double)batch);
    }
    return best;
}

/* One model at 1..8 bits; returns 1 if a target is missed, -1 on error.
 * dp_range: widened to the least and most grid+DP cost seen, in rate
 * evaluations. */
static int run(const char *title, qc_model *m, const double *levels, const double *law,
               size_t nlevels, const double *sigma, int argc, char **argv, double *dp_range)
{
    int status = 0;
    printf("%s; CPU times per run, fastest of %d batches of >= %g s\n", title, REPEATS, BATCH_S);
    printf("bits  design_s    eval_s      design/eval  grid+DP/eval  rate_bits      peer_s     "
           "peer_bits      peer/design\n");
    for (size_t bits = 1; bits <= 8; bits++) {
        const size_t cells = (size_t)1 << bits, nt = cells - 1;
        job j = {.m = m, .levels = levels, .law = law, .nlevels = nlevels, .cells = cells};
        j.t = malloc(nt * sizeof *j.t);
        j.cuts = malloc((cells + 1) * sizeof *j.cuts);
        if (!j.t || !j.cuts)
            return -1;
        double best = per_run(design, &j), dp = per_run(guarantee, &j);
        if (best < 0.0 || dp < 0.0)
            return fail("design"), -1;
        if (qc_cell_mi_alloc(m, levels, law, nlevels, nt, &j.w) != QC_OK)
            return fail("workspace"), -1;
        double eval = per_run(evaluation, &j);
        qc_cell_mi_free(j.w);
        if (eval < 0.0)
            return fail("evaluation"), -1;
        double bits_rate = j.mi * QC_LOG2E, floor_ratio = best / eval;
        printf("%4zu  %.3e   %.3e   %9.1f    %9.1f     %.9f", bits, best, eval, floor_ratio,
               dp / eval, bits_rate);
        if (floor_ratio > TARGET_FLOOR)
            status = 1;
        dp_range[0] = fmin(dp_range[0], dp / eval);
        dp_range[1] = fmax(dp_range[1], dp / eval);
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
        free(j.t);
        free(j.cuts);
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
    double dp_range[2] = {INFINITY, 0.0};
    int a = run(title, m, pam, law, 8, sig_pam, argc, argv, dp_range);
    int b = a < 0 ? a
                  : run("optimal thresholds, unipolar PAM-8, gauss-sd (sigma0 0.2, a 0.05)",
                        msd, unipolar, law, 8, sig_sd, argc, argv, dp_range);
    qc_model_free(m);
    qc_model_free(msd);
    if (a < 0 || b < 0)
        return 1;
    int status = a || b;
    printf("targets: design >= %.0fx faster than the peer at an equal or better rate, "
           "<= %.0f rate evaluations: %s\n",
           TARGET_PEER, TARGET_FLOOR, status ? "MISSED" : "met");
    printf("the grid and DP alone, which the design's guarantee needs, cost %.1f to %.1f rate "
           "evaluations (grid+DP/eval); the rest is the Newton refinement and the threshold "
           "moves\n",
           dp_range[0], dp_range[1]);
    return status;
}

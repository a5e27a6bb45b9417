/* bench_optimal.c — the whole MI-optimal threshold design (fine grid,
 * dynamic programme of Kurkoski & Yagi 2014 / He et al. 2021, gradient
 * refinement) for PAM-8 in Gaussian noise at 16 dB, at 1 to 8 ADC bits,
 * against
 *  - one evaluation of the rate at the final thresholds (qc_cell_mi_eval:
 *    the cell probabilities and the mutual information), the floor no
 *    design can beat; and
 *  - a scipy peer (nelder_mead_peer.py: Nelder–Mead from uniform
 *    thresholds, Nelder & Mead, Computer Journal 7(4), 1965), timed
 *    inside the script without its imports, given BUDGET_S seconds.
 * Times are CPU seconds of this process (fastest of REPEATS runs) and the
 * peer's own clock; the ratios are measured in one run.
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
#define EVAL_REPEATS 200
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
static int peer(const char *python, const char *script, double sigma,
                const double *levels, size_t nlevels, size_t cells, double *secs,
                double *bits)
{
    char cmd[1024], lv[256] = "";
    for (size_t i = 0; i < nlevels; i++)
        snprintf(lv + strlen(lv), sizeof lv - strlen(lv), "%s%g", i ? "," : "", levels[i]);
    snprintf(cmd, sizeof cmd, "%s %s %.17g %zu %g %s", python, script, sigma, cells,
             BUDGET_S, lv);
    FILE *f = popen(cmd, "r");
    if (!f)
        return -1;
    int n = fscanf(f, "%lf %lf", secs, bits);
    return pclose(f) == 0 && n == 2 ? 0 : -1;
}

int main(int argc, char **argv)
{
    const double levels[8] = {-7, -5, -3, -1, 1, 3, 5, 7};
    const double law[8] = {0.125, 0.125, 0.125, 0.125, 0.125, 0.125, 0.125, 0.125};
    /* 16 dB: E[x^2] = 21 over sigma^2 */
    const double sigma = sqrt(21.0 / pow(10.0, 1.6));
    qc_model *m;
    if (qc_model_alloc(&qc_model_gauss, &sigma, &m) != QC_OK)
        return fail("model");
    int status = 0;
    printf("optimal thresholds, PAM-8, 16 dB (sigma %.4f); CPU times, fastest of %d\n",
           sigma, REPEATS);
    printf("bits  design_s    eval_s      design/eval  rate_bits      peer_s     "
           "peer_bits      peer/design\n");
    for (size_t bits = 1; bits <= 8; bits++) {
        const size_t cells = (size_t)1 << bits, nt = cells - 1;
        double *t = malloc(nt * sizeof *t);
        if (!t)
            return 1;
        double best = INFINITY, mi = 0.0;
        for (int rep = 0; rep < REPEATS; rep++) {
            double t0 = cpu();
            qc_fine_grid g = {0};
            if (qc_fine_grid_build(m, levels, law, 8, qc_coarse_cells(m, levels, law, 8, cells), cells,
                                   &g) != QC_OK ||
                qc_optimal_thresholds(m, levels, law, 8, nt, &g, t, &mi, NULL) != QC_OK)
                return fail("design");
            qc_fine_grid_clear(&g);
            best = fmin(best, cpu() - t0);
        }
        qc_cell_mi *w;
        if (qc_cell_mi_alloc(m, levels, law, 8, nt, &w) != QC_OK)
            return fail("workspace");
        double eval = INFINITY, v;
        for (int rep = 0; rep < EVAL_REPEATS; rep++) {
            double t0 = cpu();
            if (qc_cell_mi_eval(w, t, &v, NULL) != QC_OK)
                return fail("evaluation");
            eval = fmin(eval, cpu() - t0);
        }
        qc_cell_mi_free(w);
        double bits_rate = mi * QC_LOG2E, floor_ratio = best / eval;
        printf("%4zu  %.3e   %.3e   %9.1f    %.9f", bits, best, eval, floor_ratio,
               bits_rate);
        if (floor_ratio > TARGET_FLOOR)
            status = 1;
        if (argc >= 3) {
            double ps, pb;
            if (peer(argv[1], argv[2], sigma, levels, 8, cells, &ps, &pb) != 0) {
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
    printf("targets: design >= %.0fx faster than the peer at an equal or better rate, "
           "<= %.0f rate evaluations: %s\n",
           TARGET_PEER, TARGET_FLOOR, status ? "MISSED" : "met");
    qc_model_free(m);
    return status;
}

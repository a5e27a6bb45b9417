/* bench_quantizer.c — timing of the MI-optimal quantizer search:
 * the SMAWK dynamic programme on N = 2^12, 2^13, 2^14 fine cells into
 * K = 256 cells (targets: < 1 s at 2^14, growth ≤ 2.2× per doubling of N,
 * i.e. linear in N), and a complete qc_design (optimal, MI) for PAM-4 at
 * 3 bits. Each DP time is the best of REPEAT runs (the machine may be
 * shared). Prints the figures; exits 1 if a target is missed. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#include "quantcap.h"

#define TARGET_SECONDS 1.0
#define TARGET_GROWTH 2.2
#define CELLS 256
#define REPEAT 3

static double now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static int fail(const char *what)
{
    fprintf(stderr, "bench_quantizer: %s: %s\n", what, qc_last_error());
    return 1;
}

int main(void)
{
    const double sigma = 0.5, levels[4] = {-3.0, -1.0, 1.0, 3.0};
    const double law[4] = {0.25, 0.25, 0.25, 0.25};
    qc_model *m;
    if (qc_model_alloc(&qc_model_gauss, &sigma, &m) != QC_OK)
        return fail("model");
    double worst_growth = 0.0, last = 0.0;
    for (size_t nx = 4; nx >= 2; nx -= 2) {
        const double *lv = nx == 4 ? levels : levels + 1; /* PAM-4 or ±1 */
        const double *r = nx == 4 ? law : (const double[]){0.5, 0.5};
        double prev = 0.0;
        printf("DP (SMAWK) of %s, sigma %.2f, into K = %d cells (best of %d):\n",
               nx == 4 ? "PAM-4" : "BPSK", sigma, CELLS, REPEAT);
        for (int e = 12; e <= 14; e++) {
            size_t n = (size_t)1 << e;
            double *t = malloc((n - 1) * sizeof *t);
            size_t *cuts = malloc((CELLS + 1) * sizeof *cuts);
            if (!t || !cuts)
                return 1;
            for (size_t i = 0; i + 1 < n; i++)
                t[i] = -6.0 + 12.0 * (double)(i + 1) / (double)n;
            qc_dmc *fine;
            if (qc_discretize(m, lv, nx, t, n - 1, &fine) != QC_OK)
                return fail("fine grid");
            double mi, best = INFINITY;
            for (int rep = 0; rep < REPEAT; rep++) {
                double t0 = now();
                if (qc_dp_quantize(fine, r, CELLS, QC_DP_FAST, cuts, &mi) != QC_OK)
                    return fail("DP");
                best = fmin(best, now() - t0);
            }
            printf("  N = %6zu: %.3f s  I = %.12f bits", n, best, mi * QC_LOG2E);
            if (prev > 0.0) {
                double g = best / prev;
                if (nx == 4)
                    worst_growth = fmax(worst_growth, g);
                printf("  growth x%.2f", g);
            }
            printf("\n");
            prev = best;
            if (nx == 4)
                last = best;
            qc_dmc_free(fine);
            free(t);
            free(cuts);
        }
    }
    printf("target (PAM-4): < %.1f s at N = 16384 (%s), growth <= %.1f per doubling "
           "(%s)\n",
           TARGET_SECONDS, last < TARGET_SECONDS ? "met" : "MISSED", TARGET_GROWTH,
           worst_growth <= TARGET_GROWTH ? "met" : "MISSED");
    int ok = last < TARGET_SECONDS && worst_growth <= TARGET_GROWTH;

    /* A complete design: fine grid, DP, refinement, references. */
    qc_design_request r;
    qc_design_request_default(&r);
    r.model = m;
    r.levels = levels;
    r.nlevels = 4;
    r.cells = 8;
    r.quantizer = QC_QUANTIZER_OPTIMAL;
    for (int with_penalty = 0; with_penalty <= 1; with_penalty++) {
        r.skip_snr_penalty = !with_penalty;
        qc_design_result res;
        double t0 = now();
        if (qc_design(&r, &res) != QC_OK)
            return fail("design");
        double dt = now() - t0;
        printf("qc_design optimal/MI, PAM-4 at %.2f dB, 3 bits%s: %.1f ms "
               "(rate %.9f bits, unquantized %.9f, fine grid %zu)\n",
               res.snr_db, with_penalty ? ", with SNR penalty" : "", 1e3 * dt,
               res.rate_bits, res.unquantized_bits, res.fine_cells);
        qc_design_result_clear(&res);
    }
    qc_model_free(m);
    return ok ? 0 : 1;
}

/* bench_quantizer.c — timing of the MI-optimal quantizer search:
 * the SMAWK dynamic programme on N = 2^12, 2^13, 2^14 fine cells into
 * K = 256 cells (targets: < 1 s at 2^14, growth ≤ 2.2× per doubling of N,
 * i.e. linear in N), and a complete qc_design (optimal, MI) for PAM-4 at
 * 3 bits. Each DP time is the best of ROUNDS rounds over all sizes, in
 * process CPU time (the machine may be shared; wall time is printed
 * too). Then the uniform quantizer's range search (scan, then Newton
 * steps on both ends; uniform.c, uniform_newton.c) and the centring of
 * its range among equally good ones (qc_uniform_tidy) for PAM-8 at 16 dB,
 * 1 to 8 bits: rate evaluations and CPU time, against one evaluation of
 * the rate (no target). Prints the figures; exits 1 if a target is
 * missed. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#include "quantcap.h"
#include "quantizer/quantizer.h" /* the uniform search and its tidying */

#define TARGET_SECONDS 1.0
#define TARGET_GROWTH 2.2
#define CELLS 256
#define ROUNDS 5

static double clock_seconds(clockid_t id)
{
    struct timespec ts;
    clock_gettime(id, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static double now(void) { return clock_seconds(CLOCK_MONOTONIC); }
/* CPU time of this (single-threaded) process: what the DP costs, without
 * the time other processes hold the core. */
static double cpu(void) { return clock_seconds(CLOCK_PROCESS_CPUTIME_ID); }

#define UNIFORM_BATCH_S 0.02 /* CPU seconds of one timed batch, at least */

/* CPU seconds of one call of `run` (fastest of ROUNDS batches, each
 * long enough that the clock's own cost does not count); -1 on error. */
static double time_per_call(int (*run)(void *), void *ctx)
{
    double t0 = cpu();
    if (run(ctx) != 0)
        return -1.0;
    double once = cpu() - t0, best = INFINITY;
    size_t batch = once > 0.0 ? (size_t)ceil(UNIFORM_BATCH_S / once) : 10000;
    for (int round = 0; round < ROUNDS; round++) {
        t0 = cpu();
        for (size_t i = 0; i < batch; i++)
            if (run(ctx) != 0)
                return -1.0;
        best = fmin(best, (cpu() - t0) / (double)batch);
    }
    return best;
}

typedef struct {
    const qc_model *m;
    const double *levels;
    size_t nlevels, nt;
    qc_cell_mi *w;
    double t[255];
    size_t evals;
    int tidy; /* also centre the range, as the uniform strategy does */
} uniform_run;

static int run_uniform(void *p)
{
    uniform_run *u = p;
    u->evals = 0;
    if (qc_uniform_search(u->m, u->levels, u->nlevels, u->nt, u->w, u->t, NULL, &u->evals) !=
        QC_OK)
        return 1;
    /* the strategy's tolerance: 1e-13 bit */
    return u->tidy && qc_uniform_tidy(u->m, u->levels, u->nlevels, u->nt, qc_cell_mi_objective, u->w,
                                      NULL, 1e-13 / QC_LOG2E, u->t) != QC_OK;
}

static int run_eval(void *p)
{
    uniform_run *u = p;
    double v;
    return qc_cell_mi_eval(u->w, u->t, &v, NULL) != QC_OK;
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
        qc_dmc *fine[3];
        double best[3] = {INFINITY, INFINITY, INFINITY}, wall[3], mi[3];
        size_t *cuts = malloc((CELLS + 1) * sizeof *cuts);
        if (!cuts)
            return 1;
        for (int e = 0; e < 3; e++) {
            size_t n = (size_t)1 << (12 + e);
            double *t = malloc((n - 1) * sizeof *t);
            if (!t)
                return 1;
            for (size_t i = 0; i + 1 < n; i++)
                t[i] = -6.0 + 12.0 * (double)(i + 1) / (double)n;
            if (qc_discretize(m, lv, nx, t, n - 1, &fine[e]) != QC_OK)
                return fail("fine grid");
            free(t);
        }
        /* rounds over all sizes, so that a change of machine load hits
         * every size alike; the best time of each size counts */
        for (int e = 0; e < 3; e++)
            wall[e] = INFINITY;
        for (int round = 0; round < ROUNDS; round++)
            for (int e = 0; e < 3; e++) {
                double t0 = cpu(), w0 = now();
                if (qc_dp_quantize(fine[e], r, CELLS, QC_DP_FAST, cuts, &mi[e]) != QC_OK)
                    return fail("DP");
                best[e] = fmin(best[e], cpu() - t0);
                wall[e] = fmin(wall[e], now() - w0);
            }
        printf("DP (SMAWK) of %s, sigma %.2f, into K = %d cells (best of %d rounds):\n",
               nx == 4 ? "PAM-4" : "BPSK", sigma, CELLS, ROUNDS);
        for (int e = 0; e < 3; e++) {
            printf("  N = %6zu: %.3f s CPU (%.3f s wall)  I = %.12f bits", fine[e]->ny,
                   best[e], wall[e], mi[e] * QC_LOG2E);
            if (e > 0) {
                double g = best[e] / best[e - 1];
                if (nx == 4)
                    worst_growth = fmax(worst_growth, g);
                printf("  growth x%.2f (CPU)", g);
            }
            printf("\n");
            qc_dmc_free(fine[e]);
        }
        if (nx == 4)
            last = best[2];
        free(cuts);
    }
    printf("target (PAM-4): < %.1f s at N = 16384 (%s), growth <= %.1f per doubling "
           "(%s)\n",
           TARGET_SECONDS, last < TARGET_SECONDS ? "met" : "MISSED", TARGET_GROWTH,
           worst_growth <= TARGET_GROWTH ? "met" : "MISSED");
    int ok = last < TARGET_SECONDS && worst_growth <= TARGET_GROWTH;

    /* A complete design: fine grid, DP, refinement, references. */
    qc_design_request r;
    qc_design_request_default(&r);
    r.channel.model = m;
    r.channel.levels = levels;
    r.channel.nlevels = 4;
    r.quantizer.cells = 8;
    r.quantizer.kind = QC_QUANTIZER_OPTIMAL;
    for (int with_penalty = 0; with_penalty <= 1; with_penalty++) {
        r.numerics.skip_snr_penalty = !with_penalty;
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

    /* The uniform quantizer's range for PAM-8 at 16 dB (E[x^2] = 21). */
    const double pam8[8] = {-7, -5, -3, -1, 1, 3, 5, 7};
    const double law8[8] = {0.125, 0.125, 0.125, 0.125, 0.125, 0.125, 0.125, 0.125};
    const double sigma8 = sqrt(21.0 / pow(10.0, 1.6));
    if (qc_model_alloc(&qc_model_gauss, &sigma8, &m) != QC_OK)
        return fail("model");
    printf("uniform quantizer, PAM-8 at 16 dB: range search (scan, Newton on both ends) and "
           "centring among equally good ranges; CPU per run, fastest of %d batches\n",
           ROUNDS);
    printf("bits  evals  search_s    +centring_s  eval_s      search/eval  total/eval\n");
    for (size_t bits = 1; bits <= 8; bits++) {
        uniform_run u = {.m = m, .levels = pam8, .nlevels = 8, .nt = ((size_t)1 << bits) - 1};
        if (qc_cell_mi_alloc(m, pam8, law8, 8, u.nt, &u.w) != QC_OK)
            return fail("workspace");
        double search = time_per_call(run_uniform, &u);
        size_t evals = u.evals;
        u.tidy = 1;
        double total = time_per_call(run_uniform, &u);
        double eval = time_per_call(run_eval, &u);
        qc_cell_mi_free(u.w);
        if (search < 0.0 || total < 0.0 || eval < 0.0)
            return fail("uniform search");
        printf("%4zu  %5zu  %.3e   %.3e   %.3e   %9.1f  %9.1f\n", bits, evals, search, total,
               eval, search / eval, total / eval);
    }
    qc_model_free(m);
    return ok ? 0 : 1;
}

/* bench_isi.c — the forward recursion of the memory-channel engine
 * (src/capacity/isi_rate.c; Arnold, Loeliger, Vontobel, Kavčić, Zeng, IEEE
 * Trans. IT 52(8), 2006) on the largest trellis, 4 levels and 6 taps
 * (1024 states, 4096 branches): throughput in symbols × branches per
 * second, and the time of one step as a multiple of one streaming pass
 * over the same arrays (read the branch weights and the messages, write
 * the messages). Then a whole quantized rate, per million symbols, on one
 * thread, and what a search saves by asking for one simulated figure and
 * by replaying a kept sequence.
 * Report the ratios: the machines are shared. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>
#ifdef _OPENMP
#include <omp.h>
#endif

#include "capacity/isi.h"
#include "quantcap.h"

#define STEPS 20000
#define REPEAT 5

static double now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

/* CPU seconds of one qc_isi_rate of req, the fastest of REPEAT. */
static double rate_time(const qc_isi_request *req)
{
    double best = INFINITY;
    for (int r = 0; r < REPEAT; r++) {
        qc_isi_result res;
        double t0 = now();
        if (qc_isi_rate(req, &res) != QC_OK)
            return NAN;
        best = fmin(best, now() - t0);
    }
    return best;
}

/* What a root search saves by simulating one figure: PAM-4 with Gray
 * labels through taps 0.75, 0.5, 0.25 (16 states), a run of all four
 * simulated figures against the quantized or the continuous-output
 * detector alone, the figure a BER target reads on either side. */
static void figures_alone(const qc_model *m)
{
    const double lev[4] = {-3, -1, 1, 3}, taps[3] = {0.75, 0.5, 0.25};
    double thr[63];
    for (size_t j = 0; j < 63; j++)
        thr[j] = -4.5 + 9.0 * (double)(j + 1) / 64.0;
    const size_t gray[4] = {0, 1, 3, 2};
    qc_isi_request req = {.model = m, .levels = lev, .nlevels = 4, .taps = taps, .ntaps = 3,
                          .thresholds = thr, .nthresholds = 63, .symbols = 100000, .seed = 1,
                          .unquantized = 1, .labels = gray, .label_bits = 2};
    const double all = rate_time(&req);
    req.figures = QC_ISI_FIG_DETECTOR;
    const double det = rate_time(&req);
    req.figures = QC_ISI_FIG_UNQUANTIZED_DETECTOR;
    const double unq = rate_time(&req);
    printf("figures      16 states, 64 cells, one thread: all four %.3g s; the quantized "
           "detector alone %.2f of it, the continuous-output detector alone %.2f\n",
           all, det / all, unq / all);
    /* a search's rates: the quantized rate alone, drawn or replayed */
    req.figures = QC_ISI_FIG_RATE;
    const double drawn = rate_time(&req);
    qc_isi_draws *kept = NULL;
    if (qc_isi_draws_alloc(&kept) != QC_OK)
        return;
    req.draws = kept;
    const double replayed = rate_time(&req); /* the first run records */
    qc_isi_draws_free(kept);
    printf("kept draws   the quantized rate alone %.3g s drawn; replayed from a kept sequence "
           "%.2f of it\n",
           drawn, replayed / drawn);
}

int main(void)
{
    double sigma = 0.4;
    qc_model *m = NULL;
    if (qc_model_alloc(&qc_model_gauss, &sigma, &m) != QC_OK)
        return 1;
    const double lev[4] = {-3, -1, 1, 3}, taps[6] = {1, .5, .3, .2, .1, .05};
    const double thr[7] = {-3, -2, -1, 0, 1, 2, 3};
    qc_isi_request req = {.model = m, .levels = lev, .nlevels = 4, .taps = taps, .ntaps = 6,
                          .thresholds = thr, .nthresholds = 7, .symbols = 100000, .seed = 1};
    qc_isi_channel *ch = NULL;
    if (qc_isi_channel_build(&req, &ch) != QC_OK) {
        fprintf(stderr, "%s\n", qc_last_error());
        return 1;
    }
    const size_t S = ch->S, T = ch->T, K = ch->K;
    double *w = malloc(K * T * sizeof *w), *a = malloc(S * sizeof *a), *b = malloc(S * sizeof *b);
    for (size_t t = 0; t < T; t++)
        for (size_t y = 0; y < K; y++)
            w[y * T + t] = 0.25 * ch->window_dmc->p[t * K + y];
    for (size_t s = 0; s < S; s++)
        a[s] = 1.0 / (double)S;
    double best_rec = INFINITY, best_stream = INFINITY, sink = 0.0;
    for (int r = 0; r < REPEAT; r++) {
        double t0 = now();
        for (size_t k = 0; k < STEPS; k++) {
            sink += qc_isi_forward_step(ch, a, w + (k % K) * T, b);
            double *tmp = a;
            a = b;
            b = tmp;
        }
        double t1 = now();
        for (size_t k = 0; k < STEPS; k++) {
            const double *wk = w + (k % K) * T;
            double s = 0.0;
            for (size_t t = 0; t < T; t++)
                s += wk[t];
            for (size_t i = 0; i < S; i++)
                b[i] = a[i] * s;
            sink += b[k % S];
        }
        double t2 = now();
        best_rec = fmin(best_rec, (t1 - t0) / STEPS);
        best_stream = fmin(best_stream, (t2 - t1) / STEPS);
    }
    printf("trellis      %zu states, %zu branches, %zu cells\n", S, T, K);
    printf("recursion    %.3g s per symbol, %.3g symbol-branches per second\n", best_rec,
           (double)T / best_rec);
    printf("streaming    %.3g s per pass over the same arrays\n", best_stream);
    printf("ratio        one step = %.2f streaming passes\n", best_rec / best_stream);
#ifdef _OPENMP
    omp_set_num_threads(1);
#endif
    qc_isi_result res;
    double t0 = now();
    if (qc_isi_rate(&req, &res) != QC_OK) {
        fprintf(stderr, "%s\n", qc_last_error());
        return 1;
    }
    double t1 = now();
    printf("rate         %.4f +- %.4f bit/symbol; %.3g s per million symbols on one thread "
           "(quantized rate, simulation included)\n",
           res.rate_bits, res.rate_ci_bits, (t1 - t0) * 1e6 / (double)req.symbols);
    req.unquantized = 1;
    t0 = now();
    if (qc_isi_rate(&req, &res) != QC_OK)
        return 1;
    t1 = now();
    printf("with the continuous-output rate too: %.3g s per million symbols\n",
           (t1 - t0) * 1e6 / (double)req.symbols);
    figures_alone(m);
    if (sink == 42.0)
        printf("\n");
    qc_isi_channel_free(ch);
    qc_model_free(m);
    free(w);
    free(a);
    free(b);
    return 0;
}

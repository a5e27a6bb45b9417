/* bench_lloyd.c — two designs users wait on, against one evaluation of the
 * rate at the same thresholds (qc_cell_mi_eval):
 *  - the Lloyd-Max quantizer (Lloyd, IEEE Trans. IT 28(2), 1982; Max, IRE
 *    Trans. IT 6(1), 1960) of PAM-4 in Gaussian noise at 10 dB, 9 to 12
 *    bits; target TARGET_LLOYD_S seconds at 12 bits;
 *  - the SNR penalty against the unquantized receiver (qc_snr_penalty_db:
 *    a Brent root search over rescaled unquantized rates) of PAM-4096 at
 *    30 dB at a 4-bit rate; target TARGET_PENALTY_S seconds;
 *  - the unquantized GMI of PAM-4096 at 30 dB (Gray labels), the
 *    reference of `--objective gmi`; target TARGET_DESIGN_S seconds;
 *  - the whole design of PAM-4096 at 30 dB (qc_design: optimal
 *    thresholds at 4, 6, 8, 9, 10, 11 and 12 bits, the uniform quantizer's
 *    range at 8, 10 and 12 bits; unquantized reference, figures, SNR
 *    penalty), as a multiple of one rate evaluation at its thresholds;
 *    target TARGET_DESIGN_S seconds of waiting at each.
 * Times are CPU seconds of this process (fastest of REPEATS runs for
 * Lloyd-Max, one run for the penalty), and for the whole design also the
 * wall-clock seconds a user waits: the rows of a channel this large are
 * computed in OpenMP threads (OMP_NUM_THREADS), so CPU seconds add up
 * over the threads. Exit status 1 when a target is missed. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#include "quantcap.h"
#include "quantizer/quantizer.h"

#define TARGET_LLOYD_S 1.0
#define TARGET_PENALTY_S 10.0
#define TARGET_DESIGN_S 10.0
#define REPEATS 2
#define EVAL_REPEATS 50
#define PAM_BIG 4096
#define PENALTY_RATE_BITS 3.9 /* a 4-bit ADC's rate near 30 dB */

static double cpu(void)
{
    struct timespec t;
    clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static double wall(void)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static int fail(const char *what)
{
    fprintf(stderr, "bench_lloyd: %s: %s\n", what, qc_last_error());
    return 1;
}

int main(void)
{
    const double levels[4] = {-3, -1, 1, 3};
    const double law[4] = {0.25, 0.25, 0.25, 0.25};
    const double sigma = sqrt(5.0 / 10.0); /* 10 dB: E[x^2] = 5 over sigma^2 */
    qc_model *m;
    if (qc_model_alloc(&qc_model_gauss, &sigma, &m) != QC_OK)
        return fail("model");
    int status = 0;
    printf("Lloyd-Max, PAM-4, 10 dB (sigma %.4f); CPU times, fastest of %d\n", sigma,
           REPEATS);
    printf("bits  design_s    eval_s      design/eval  rounds  newton  convergence   "
           "residual   mse\n");
    for (size_t bits = 9; bits <= 12; bits++) {
        const size_t cells = (size_t)1 << bits, nt = cells - 1;
        double *t = malloc(nt * sizeof *t), *recon = malloc(cells * sizeof *recon);
        if (!t || !recon)
            return 1;
        double best = INFINITY;
        qc_lloyd_report lr;
        for (int rep = 0; rep < REPEATS; rep++) {
            double t0 = cpu();
            if (qc_lloyd_max(m, levels, law, 4, nt, 0, 0, t, recon, &lr) != QC_OK)
                return fail("Lloyd-Max");
            best = fmin(best, cpu() - t0);
        }
        qc_cell_mi *w;
        if (qc_cell_mi_alloc(m, levels, law, 4, nt, &w) != QC_OK)
            return fail("workspace");
        double eval = INFINITY, v;
        for (int rep = 0; rep < EVAL_REPEATS; rep++) {
            double t0 = cpu();
            if (qc_cell_mi_eval(w, t, &v, NULL) != QC_OK)
                return fail("evaluation");
            eval = fmin(eval, cpu() - t0);
        }
        qc_cell_mi_free(w);
        const int missed = bits == 12 && (best > TARGET_LLOYD_S || !lr.converged);
        printf("%4zu  %.3e   %.3e   %9.1f    %6zu  %6zu  %-13s %.3e  %.12g%s\n", bits, best,
               eval, best / eval, lr.rounds, lr.newton,
               lr.converged ? "converged" : "NOT CONVERGED", lr.residual, lr.mse,
               missed ? "  (target missed)" : "");
        if (missed)
            status = 1;
        free(t);
        free(recon);
    }
    qc_model_free(m);

    double *big = malloc(PAM_BIG * sizeof *big), *blaw = malloc(PAM_BIG * sizeof *blaw);
    if (!big || !blaw)
        return 1;
    double e2 = 0.0;
    for (size_t i = 0; i < PAM_BIG; i++) {
        big[i] = -(double)(PAM_BIG - 1) + 2.0 * (double)i;
        blaw[i] = 1.0 / PAM_BIG;
        e2 += blaw[i] * big[i] * big[i];
    }
    const double sig_big = sqrt(e2 / 1000.0); /* 30 dB */
    if (qc_model_alloc(&qc_model_gauss, &sig_big, &m) != QC_OK)
        return fail("model");
    double t0 = cpu(), pen = NAN;
    if (qc_snr_penalty_db(m, big, blaw, PAM_BIG, PENALTY_RATE_BITS, &pen) != QC_OK)
        return fail("penalty");
    double ps = cpu() - t0, mi = NAN;
    t0 = cpu();
    if (qc_unquantized_mi(m, big, blaw, PAM_BIG, &mi, NULL) != QC_OK)
        return fail("unquantized rate");
    double us = cpu() - t0;
    printf("SNR penalty, PAM-%d, 30 dB, at %.1f bit: %.6f dB in %.3f s "
           "(%.1f unquantized rates at 30 dB, each %.3f s)%s\n",
           PAM_BIG, PENALTY_RATE_BITS, pen, ps, ps / us, us,
           ps > TARGET_PENALTY_S ? "  (target missed)" : "");
    if (ps > TARGET_PENALTY_S)
        status = 1;
    /* the unquantized GMI (Gray labels, 12 bits) that `--objective gmi`
     * reports, against the unquantized MI */
    size_t *labels = malloc(PAM_BIG * sizeof *labels);
    unsigned nbits;
    double gmi = NAN;
    if (!labels || qc_gray_labels(big, PAM_BIG, labels, &nbits) != QC_OK)
        return fail("labels");
    t0 = cpu();
    if (qc_unquantized_gmi(m, big, blaw, PAM_BIG, labels, nbits, &gmi, NULL) != QC_OK)
        return fail("unquantized GMI");
    double gs = cpu() - t0;
    free(labels);
    printf("unquantized GMI, PAM-%d, 30 dB: %.9f bit in %.3f s (%.1f unquantized MIs)%s\n",
           PAM_BIG, gmi * QC_LOG2E, gs, gs / us, gs > TARGET_DESIGN_S ? "  (target missed)" : "");
    if (gs > TARGET_DESIGN_S)
        status = 1;
    /* the whole design a user runs: `quantcap design --model gauss
     * --snr-db 30 --alphabet pam:4096 --bits 4` (thresholds, unquantized
     * reference, figures, SNR penalty), against one rate evaluation at its
     * final thresholds */
    static const struct {
        qc_quantizer_kind kind;
        const char *name;
        int bits;
    } designs[] = {{QC_QUANTIZER_OPTIMAL, "optimal", 4},  {QC_QUANTIZER_OPTIMAL, "optimal", 6},
                   {QC_QUANTIZER_OPTIMAL, "optimal", 8},  {QC_QUANTIZER_OPTIMAL, "optimal", 9},
                   {QC_QUANTIZER_OPTIMAL, "optimal", 10}, {QC_QUANTIZER_OPTIMAL, "optimal", 11},
                   {QC_QUANTIZER_OPTIMAL, "optimal", 12}, {QC_QUANTIZER_UNIFORM, "uniform", 8},
                   {QC_QUANTIZER_UNIFORM, "uniform", 10}, {QC_QUANTIZER_UNIFORM, "uniform", 12}};
    for (size_t b = 0; b < sizeof designs / sizeof *designs; b++) {
        qc_design_request req;
        qc_design_result res;
        qc_design_request_default(&req);
        req.channel.model = m;
        req.channel.levels = big;
        req.channel.nlevels = PAM_BIG;
        req.quantizer.kind = designs[b].kind;
        req.quantizer.cells = (size_t)1 << designs[b].bits;
        t0 = cpu();
        double w0 = wall();
        if (qc_design(&req, &res) != QC_OK)
            return fail("design");
        double ds = wall() - w0, dc = cpu() - t0;
        qc_cell_mi *w;
        if (qc_cell_mi_alloc(m, big, blaw, PAM_BIG, res.nthresholds, &w) != QC_OK)
            return fail("workspace");
        double eval = INFINITY, v;
        for (int rep = 0; rep < REPEATS; rep++) {
            double w1 = wall();
            if (qc_cell_mi_eval(w, res.thresholds, &v, NULL) != QC_OK)
                return fail("evaluation");
            eval = fmin(eval, wall() - w1);
        }
        qc_cell_mi_free(w);
        printf("design, PAM-%d, 30 dB, %-7s %2d bits: %6.3f s waited (%6.3f s CPU) = %5.0f "
               "rate evaluations (each %.4f s); rate %.9f bit, penalty %.4f dB%s\n",
               PAM_BIG, designs[b].name, designs[b].bits, ds, dc, ds / eval, eval, res.rate_bits,
               res.snr_penalty_db, ds > TARGET_DESIGN_S ? "  (target missed)" : "");
        if (ds > TARGET_DESIGN_S)
            status = 1;
        qc_design_result_clear(&res);
    }
    qc_model_free(m);
    free(big);
    free(blaw);
    return status;
}

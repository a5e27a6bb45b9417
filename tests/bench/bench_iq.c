/* bench_iq.c — cost of the transition matrix of polar cells (amplitude
 * rings × phase sectors; the Fourier series in the angle of
 * src/design/iq_polar.c), as ratios measured in one run (CPU time of this
 * process on one thread), for an invented coherent receiver: APSK 8+8
 * (rings 1 and 2, the outer turned by 22.5°) at Es/N0 14 dB, 4 rings ×
 * 16 sectors (64 cells, uniform), with no phase error, a Gaussian error
 * of 2°, 6° and 12° rms and a Tikhonov error of 6°; each against the
 * I/Q pair of 8 × 8 cells without phase error (products of Gaussian CDF
 * differences, exact: the cheapest matrix of the same size), and the
 * I/Q pair with a 6° error (Gauss–Hermite rules over the error, the
 * Tikhonov law's through its density ratio to the Gaussian) and a 15°
 * Tikhonov error (the trapezoidal rule on the circle) for comparison. Also
 * the whole design of the 64 polar cells (BFGS on the exact gradient of
 * the GMI, at most 4000 matrices) with the 6° Gaussian error.
 * Then, for information, 16-QAM from 10 to 45 dB without phase error,
 * where points lie up to 337 σ from the origin: the polar matrix against
 * the I/Q pair's, and the design of 8 × 32 polar cells for the MI (BFGS
 * on the exact gradient, restarted twice), and the designs of a 16 × 16
 * I/Q pair for 64-QAM at 18 dB and a 32 × 32 one for 256-QAM at 14 dB,
 * axis by axis against BFGS, and of a 32 × 32 one for the GMI of 256-QAM
 * at 24 dB, rated axis by axis against the 2-D matrix.
 * Last, for information, the wall time of two designs whose matrices are
 * computed in OpenMP threads (64-QAM at 18 dB through 16 × 16 I/Q cells
 * with a 2° error, and through 4 × 16 polar cells), on every thread the
 * machine has against one thread, with the same rate to the bit; every
 * other figure is taken on one thread.
 *
 * Target (checked, exit status 1 if missed): every polar matrix, with or
 * without phase error, costs at most TARGET_RATIO times the exact I/Q
 * pair's. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#ifdef _OPENMP
#include <omp.h>
#endif

#include "quantcap.h"

#define TARGET_RATIO 100.0
#define BATCH_S 0.2 /* CPU seconds of one timed batch, at least */
#define REPEATS 3

static double now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static int fail(const char *what)
{
    fprintf(stderr, "bench_iq: %s: %s\n", what, qc_last_error());
    return 1;
}

/* CPU seconds of one matrix (fastest of REPEATS batches of BATCH_S). */
static double time_channel(const qc_plane *c, const qc_iq_noise *noise, const qc_iq_cells *q,
                           double *err)
{
    double best = INFINITY;
    for (int rep = 0; rep < REPEATS; rep++) {
        size_t n = 0;
        double t0 = now(), t = 0.0;
        do {
            qc_dmc *d;
            *err = 0.0;
            if (qc_iq_channel(c, noise, q, &d, err) != QC_OK)
                return NAN;
            qc_dmc_free(d);
            n++;
            t = now() - t0;
        } while (t < BATCH_S);
        best = fmin(best, t / (double)n);
    }
    return best;
}

/* 16-QAM at high SNR without phase error (no target): the polar matrix
 * against the I/Q pair's at the same SNR, and the whole design of 8 × 32
 * polar cells for the MI, whose search ends where the MI comes within
 * QC_IQ_CEILING_GAP_BITS of H(X) = 4 bit. */
static int high_snr(void)
{
    qc_plane *c;
    if (qc_plane_parse("qam:16", &c) != QC_OK)
        return fail("constellation");
    const double deg = 3.14159265358979323846 / 180.0;
    double radii[3] = {1.5, 3.0, 4.0}, phases[16], t8[7];
    for (int p = 0; p < 16; p++)
        phases[p] = (-11.25 + 22.5 * p) * deg;
    for (int j = 0; j < 7; j++)
        t8[j] = -3.0 + (double)j;
    qc_iq_cells polar = {.kind = QC_IQ_POLAR, .radii = radii, .nradii = 3, .phases = phases,
                         .nphases = 16};
    qc_iq_cells pair = {.kind = QC_IQ_PRODUCT, .ti = t8, .nti = 7, .tq = t8, .ntq = 7};
    printf("16-QAM without phase error (no target): CPU time per matrix, polar 4 x 16 "
           "against the I/Q pair 8 x 8; design of 8 x 32 polar cells for the MI\n");
    printf("  Es/N0  largest s/sigma  I/Q pair ms  polar ms   ratio   design s  matrices  "
           "MI bit (BFGS on the exact gradient)\n");
    const double snrs[] = {10.0, 15.0, 20.0, 25.0, 30.0, 35.0, 40.0, 45.0};
    for (size_t k = 0; k < sizeof snrs / sizeof snrs[0]; k++) {
        const double sigma = sqrt(qc_plane_energy(c) / (2.0 * pow(10.0, snrs[k] / 10.0)));
        qc_iq_noise none = {sigma, 0.0, QC_PHASE_GAUSS};
        double err, tp = time_channel(c, &none, &pair, &err);
        double tq = time_channel(c, &none, &polar, &err);
        if (!isfinite(tp) || !isfinite(tq))
            return fail("matrix at high SNR");
        qc_iq_design_request req = {.kind = QC_IQ_POLAR, .amplitude_cells = 8,
                                    .phase_cells = 32, .objective = QC_OBJECTIVE_MI};
        qc_iq_design_result res;
        double t0 = now();
        if (qc_iq_design(c, &none, &req, &res) != QC_OK)
            return fail("design at high SNR");
        double td = now() - t0;
        printf("  %4.0f dB  %9.1f      %9.3f  %9.3f  %6.1fx  %8.2f  %8zu  %.10f%s\n", snrs[k],
               sqrt(18.0) / sigma, 1e3 * tp, 1e3 * tq, tq / tp, td, res.evaluations,
               res.objective_bits, res.at_ceiling ? " (at the ceiling)" : "");
        qc_iq_design_result_free(&res);
    }
    qc_plane_free(c);
    return 0;
}

/* The design of an I/Q pair without phase error (no target): square QAM
 * for the MI, axis by axis (the 1-D MI-optimal design of each axis), or
 * for the GMI, BFGS rating the cells axis by axis, against BFGS on the
 * 2-D matrix from the uniform cells (gradient_only), CPU seconds of each
 * in this run and their ratio: 64-QAM through 16 x 16 cells, thresholds
 * apart, at 18 dB, and 256-QAM through 32 x 32 cells at 14 dB for the MI;
 * 256-QAM through 32 x 32 cells at 24 dB for the GMI. */
static int product_design(const char *alphabet, double snr_db, size_t cells,
                          qc_objective objective)
{
    qc_plane *c;
    if (qc_plane_parse(alphabet, &c) != QC_OK)
        return fail("constellation");
    const double sigma = sqrt(qc_plane_energy(c) / (2.0 * pow(10.0, snr_db / 10.0)));
    qc_iq_noise none = {sigma, 0.0, QC_PHASE_GAUSS};
    double secs[2], bits[2];
    size_t evals[2];
    for (int gradient = 0; gradient < 2; gradient++) {
        qc_iq_design_request req = {.kind = QC_IQ_PRODUCT, .cells_i = cells, .cells_q = cells,
                                    .separate = objective == QC_OBJECTIVE_MI,
                                    .objective = objective, .gradient_only = gradient};
        qc_iq_design_result res;
        double t0 = now();
        if (qc_iq_design(c, &none, &req, &res) != QC_OK)
            return fail("design of the I/Q pair");
        secs[gradient] = now() - t0;
        bits[gradient] = res.objective_bits;
        evals[gradient] = res.evaluations;
        if ((objective == QC_OBJECTIVE_MI && res.per_axis == gradient) || !res.converged)
            return fprintf(stderr, "bench_iq: %s: unexpected search\n", alphabet), 1;
        qc_iq_design_result_free(&res);
    }
    const int mi = objective == QC_OBJECTIVE_MI;
    printf("design of a %zu x %zu I/Q pair for %s at %g dB (%s): %s %.3f s (%zu "
           "evaluations, %.7f bit), BFGS on the 2-D matrix %.2f s (%zu, %.7f bit): %.4f of it\n",
           cells, cells, alphabet, snr_db, mi ? "thresholds apart, MI" : "GMI",
           mi ? "axis by axis" : "BFGS rated axis by axis", secs[0], evals[0], bits[0],
           secs[1], evals[1], bits[1], secs[0] / secs[1]);
    qc_plane_free(c);
    return 0;
}

static double wall(void)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

/* Wall seconds of one design of c on `threads` threads; its rate in *bits. */
static double threaded_design(const qc_plane *c, const qc_iq_noise *noise,
                              const qc_iq_design_request *req, int threads, double *bits)
{
#ifdef _OPENMP
    omp_set_num_threads(threads);
#else
    (void)threads;
#endif
    qc_iq_design_result res;
    double t0 = wall();
    if (qc_iq_design(c, noise, req, &res) != QC_OK)
        return NAN;
    double t = wall() - t0;
    *bits = res.objective_bits;
    qc_iq_design_result_free(&res);
    return t;
}

/* The two threaded designs (no target): all threads against one. */
static int thread_scaling(void)
{
#ifdef _OPENMP
    const int most = omp_get_num_procs();
#else
    const int most = 1;
#endif
    qc_plane *c;
    if (qc_plane_parse("qam:64", &c) != QC_OK)
        return fail("constellation");
    const double sigma = sqrt(qc_plane_energy(c) / (2.0 * pow(10.0, 1.8)));
    const qc_iq_noise noise = {sigma, 2.0 * 3.14159265358979323846 / 180.0, QC_PHASE_GAUSS};
    const qc_iq_noise none = {sigma, 0.0, QC_PHASE_GAUSS};
    const qc_iq_design_request pair = {.kind = QC_IQ_PRODUCT, .cells_i = 16, .cells_q = 16,
                                       .objective = QC_OBJECTIVE_MI};
    const qc_iq_design_request polar = {.kind = QC_IQ_POLAR, .amplitude_cells = 4,
                                        .phase_cells = 16, .objective = QC_OBJECTIVE_MI};
    const struct {
        const char *name;
        const qc_iq_noise *noise;
        const qc_iq_design_request *req;
    } cases[] = {{"64-QAM, 18 dB, I/Q pair 16 x 16, Gaussian 2 deg", &noise, &pair},
                 {"64-QAM, 18 dB, polar 4 x 16, no phase error", &none, &polar}};
    printf("threads (no target): wall time of one design on %d thread%s against one\n", most,
           most == 1 ? "" : "s");
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        double b1, bn;
        const double t1 = threaded_design(c, cases[k].noise, cases[k].req, 1, &b1);
        const double tn = threaded_design(c, cases[k].noise, cases[k].req, most, &bn);
        if (!isfinite(t1) || !isfinite(tn))
            return fail(cases[k].name);
        printf("  %-50s 1 thread %.2f s, %d: %.2f s, %.2f of it; %.10f bit%s\n",
               cases[k].name, t1, most, tn, tn / t1, bn,
               b1 == bn ? " (the same)" : " (DIFFERS from one thread's)");
        if (b1 != bn)
            return 1;
    }
#ifdef _OPENMP
    omp_set_num_threads(1);
#endif
    qc_plane_free(c);
    return 0;
}

int main(void)
{
#ifdef _OPENMP
    omp_set_num_threads(1); /* CPU times of one thread, but in thread_scaling */
#endif
    qc_plane *c;
    if (qc_plane_parse("apsk:1/8,2/8/22.5", &c) != QC_OK)
        return fail("constellation");
    /* Es/N0 = E|x|^2 / (2 sigma^2) = 14 dB */
    const double sigma = sqrt(qc_plane_energy(c) / (2.0 * pow(10.0, 1.4)));
    const double pi = 3.14159265358979323846, deg = pi / 180.0;
    double radii[3] = {0.5625, 1.125, 1.6875}, phases[16], t8[7];
    for (int p = 0; p < 16; p++)
        phases[p] = (-11.25 + 22.5 * p) * deg;
    for (int j = 0; j < 7; j++)
        t8[j] = -2.25 + 0.5625 * (double)(j + 1); /* uniform over ±2.25 */
    qc_iq_cells polar = {.kind = QC_IQ_POLAR, .radii = radii, .nradii = 3, .phases = phases,
                         .nphases = 16};
    qc_iq_cells pair = {.kind = QC_IQ_PRODUCT, .ti = t8, .nti = 7, .tq = t8, .ntq = 7};
    qc_iq_noise none = {sigma, 0.0, QC_PHASE_GAUSS};
    double err;
    double base = time_channel(c, &none, &pair, &err);
    if (!isfinite(base))
        return fail("I/Q pair");
    printf("APSK 8+8, Es/N0 14 dB, 64 cells; CPU time per matrix, fastest of %d batches of "
           ">= %g s\n", REPEATS, BATCH_S);
    printf("  I/Q pair 8 x 8, no phase error (exact):          %9.3f ms   1.0x\n", 1e3 * base);
    struct {
        const char *name;
        double sd_deg;
        qc_phase_law law;
        const qc_iq_cells *q;
    } cases[] = {
        {"polar 4 x 16, no phase error", 0.0, QC_PHASE_GAUSS, &polar},
        {"polar 4 x 16, Gaussian 2 deg", 2.0, QC_PHASE_GAUSS, &polar},
        {"polar 4 x 16, Gaussian 6 deg", 6.0, QC_PHASE_GAUSS, &polar},
        {"polar 4 x 16, Gaussian 12 deg", 12.0, QC_PHASE_GAUSS, &polar},
        {"polar 4 x 16, Tikhonov 6 deg", 6.0, QC_PHASE_TIKHONOV, &polar},
        {"I/Q pair 8 x 8, Gaussian 6 deg (Gauss-Hermite)", 6.0, QC_PHASE_GAUSS, &pair},
        {"I/Q pair 8 x 8, Tikhonov 6 deg (Gauss-Hermite)", 6.0, QC_PHASE_TIKHONOV, &pair},
        {"I/Q pair 8 x 8, Tikhonov 15 deg (trapezoid)", 15.0, QC_PHASE_TIKHONOV, &pair},
    };
    int status = 0;
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        qc_iq_noise noise = {sigma, cases[k].sd_deg * deg, cases[k].law};
        double t = time_channel(c, &noise, cases[k].q, &err);
        if (!isfinite(t))
            return fail(cases[k].name);
        int polar_case = cases[k].q == &polar;
        printf("  %-47s %9.3f ms %6.1fx   (last change %.1e)%s\n", cases[k].name, 1e3 * t,
               t / base, err, polar_case && t / base > TARGET_RATIO ? "  TARGET MISSED" : "");
        if (polar_case && t / base > TARGET_RATIO)
            status = 1;
    }
    /* the whole design of the polar cells with a 6 degree error */
    qc_iq_noise noise = {sigma, 6.0 * deg, QC_PHASE_GAUSS};
    qc_iq_design_request req = {.kind = QC_IQ_POLAR, .amplitude_cells = 4, .phase_cells = 16,
                                .objective = QC_OBJECTIVE_GMI};
    qc_iq_design_result res;
    double t0 = now();
    if (qc_iq_design(c, &noise, &req, &res) != QC_OK)
        return fail("design");
    double td = now() - t0;
    printf("  design of the polar cells (GMI), Gaussian 6 deg: %.2f s, %zu matrices, "
           "%.6f -> %.6f bit%s\n", td, res.evaluations, res.start_bits, res.objective_bits,
           res.converged ? "" : " (stopped at the cap)");
    qc_iq_design_result_free(&res);
    qc_plane_free(c);
    if (high_snr() != 0 || product_design("qam:64", 18.0, 16, QC_OBJECTIVE_MI) != 0 ||
        product_design("qam:256", 14.0, 32, QC_OBJECTIVE_MI) != 0 ||
        product_design("qam:256", 24.0, 32, QC_OBJECTIVE_GMI) != 0 || thread_scaling() != 0)
        return 1;
    printf("target: every polar matrix within %.0fx of the exact I/Q pair's: %s\n",
           TARGET_RATIO, status ? "MISSED" : "met");
    return status;
}

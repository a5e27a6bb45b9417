/* bench_require.c — cost of `quantcap require` (qc_require): the SNR that
 * PAM-4 needs for a pre-FEC BER of 2.4e-4 (the KP4 class, common
 * practice) with the optimal quantizer at 1 to 8 bits, each root timed as
 * a ratio to one design at the same resolution (CPU time of this
 * single-threaded process, measured in one run). A root costs the
 * monotonicity samples plus the Brent iterations (designs) and the
 * unquantized reference (no design: the MAP decision boundaries and the
 * hard decision of a quantizer on them).
 *
 * Target (checked, exit status 1 if missed): every root within 40 designs
 * of its resolution. 1 bit cannot reach the target (two cells for four
 * levels) and is timed as the refusal it is. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#include "quantcap.h"

#define TARGET_DESIGNS 40.0
#define DESIGN_REPEATS 5

static double now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static const double levels[4] = {-3.0, -1.0, 1.0, 3.0};

typedef struct {
    size_t cells;
    qc_model *model;
} bench_builder;

static qc_status build(void *ctx, double snr_db, const qc_model **model,
                       qc_design_request *req)
{
    bench_builder *b = ctx;
    double p[QC_MODEL_MAX_PARAMS] = {sqrt(5.0 / pow(10.0, snr_db / 10.0))}; /* E[x²] = 5 */
    qc_model_free(b->model);
    b->model = NULL;
    qc_status st = qc_model_alloc(&qc_model_gauss, p, &b->model);
    if (st != QC_OK)
        return st;
    qc_design_request_default(req);
    req->channel.model = b->model;
    req->channel.levels = levels;
    req->channel.nlevels = 4;
    req->quantizer.cells = b->cells;
    req->numerics.skip_snr_penalty = 1;
    *model = b->model;
    return QC_OK;
}

int main(void)
{
    int missed = 0;
    printf("require: PAM-4, target pre-FEC BER 2.4e-4, solve for snr-db in [0, 40] dB\n");
    printf("%5s %14s %14s %12s %10s %10s\n", "bits", "required dB", "penalty dB", "designs",
           "root/design", "status");
    for (unsigned bits = 1; bits <= 8; bits++) {
        bench_builder b = {(size_t)1 << bits, NULL};
        /* one design at 20 dB */
        double t0 = now();
        for (int r = 0; r < DESIGN_REPEATS; r++) {
            const qc_model *m;
            qc_design_request req;
            qc_design_result res;
            if (build(&b, 20.0, &m, &req) != QC_OK || qc_design(&req, &res) != QC_OK) {
                fprintf(stderr, "bench_require: design: %s\n", qc_last_error());
                return 1;
            }
            qc_design_result_clear(&res);
        }
        double one = (now() - t0) / DESIGN_REPEATS;
        qc_require_request rq = {.build = build, .ctx = &b, .lo = 0.0, .hi = 40.0,
                                 .name = "snr-db", .unit = " dB"};
        qc_require_result res;
        if (qc_target_parse("ber=2.4e-4", &rq.target) != QC_OK)
            return 1;
        t0 = now();
        qc_status st = qc_require(&rq, &res);
        double root = now() - t0;
        qc_model_free(b.model);
        double ratio = root / one;
        printf("%5u %14.4f %14.4f %12zu %10.1f %10s\n", bits, res.required, res.penalty_db,
               res.designs, ratio,
               st == QC_OK ? "ok" : st == QC_EINFEASIBLE ? "unreached" : "failed");
        if (st != QC_OK && !(bits == 1 && st == QC_EINFEASIBLE)) {
            fprintf(stderr, "bench_require: %u bits: %s\n", bits, qc_last_error());
            missed = 1;
        }
        if (ratio > TARGET_DESIGNS) {
            fprintf(stderr, "bench_require: %u bits: a root costs %.1f designs (target %.0f)\n",
                    bits, ratio, TARGET_DESIGNS);
            missed = 1;
        }
    }
    return missed;
}

/* memory_design.c — the design of a quantizer in front of a sequence
 * detector: after the memoryless design, the information rates of the
 * channel with memory are estimated by simulation (quantcap/memory.h:
 * Arnold, Loeliger, Vontobel, Kavčić, Zeng, IEEE Trans. IT 52(8), 2006),
 * and a uniform quantizer's full scale is re-optimized for the quantized
 * information rate. The full scale is searched as a factor α on the
 * spread of the memoryless-optimal uniform thresholds about their centre
 * (α = 1 is the start): a grid over [ALPHA_LO, ALPHA_HI], then golden-
 * section refinement around its best point (J. Kiefer, "Sequential
 * minimax search for a maximum", Proc. AMS 4, 1953). Every evaluation
 * simulates the same seeded sequence, so the rates of two full scales are
 * compared with common random numbers: the search sees the rate's change
 * with the thresholds, not the noise of two simulations. */
#include "design/design_internal.h"
#include "quantcap/memory.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define ALPHA_LO 0.5
#define ALPHA_HI 2.0
#define ALPHA_GRID 11     /* grid points on [ALPHA_LO, ALPHA_HI]       */
#define GOLDEN_STEPS 10   /* refinement: bracket shrinks by 0.618^10     */

qc_status qc_memory_check(const qc_design_request *req)
{
    const qc_design_memory *m = &req->memory;
    qc_status st = qc_isi_taps_check(m->taps, m->ntaps);
    if (st != QC_OK)
        return st;
    if (req->channel.model && (st = qc_isi_model_check(req->channel.model)) != QC_OK)
        return st;
    if (req->channel.dimensions == 2)
        return qc_fail(QC_EINVAL, "taps: channels with memory take real alphabets (one "
                                  "quadrature), not QAM");
    if (qc_isi_states(req->channel.nlevels, m->ntaps) == 0)
        return qc_fail(QC_EINVAL,
                       "taps: %zu levels and %zu taps make %zu^%zu trellis states; at most "
                       "%zu states are supported",
                       req->channel.nlevels, m->ntaps, req->channel.nlevels, m->ntaps - 1,
                       QC_ISI_MAX_STATES);
    const size_t n = m->symbols ? m->symbols : QC_DESIGN_MEMORY_SYMBOLS;
    if (n < QC_ISI_BATCHES * QC_ISI_MIN_BATCH)
        return qc_fail(QC_EINVAL, "symbols: at least %zu symbols are needed (got %zu)",
                       QC_ISI_BATCHES * QC_ISI_MIN_BATCH, n);
    return QC_OK;
}

typedef struct {
    qc_isi_request isi;
    const double *base; /* memoryless thresholds */
    double centre;
    double *t;          /* scratch thresholds    */
    size_t evaluations;
} search;

static qc_status rate_at(search *s, double alpha, double *bits)
{
    const size_t n = s->isi.nthresholds;
    for (size_t j = 0; j < n; j++)
        s->t[j] = s->centre + alpha * (s->base[j] - s->centre);
    s->isi.thresholds = s->t;
    s->isi.unquantized = 0;
    qc_isi_result r;
    qc_status st = qc_isi_rate(&s->isi, &r);
    s->evaluations++;
    if (st == QC_OK)
        *bits = r.rate_bits;
    return st;
}

/* The full-scale factor maximizing the simulated rate (common random
 * numbers: one seed for all). */
static qc_status best_alpha(search *s, double *alpha_out)
{
    qc_status st;
    double a[ALPHA_GRID], f[ALPHA_GRID];
    size_t best = 0;
    for (size_t i = 0; i < ALPHA_GRID; i++) {
        /* geometric grid: full scales are compared by ratio */
        a[i] = ALPHA_LO * pow(ALPHA_HI / ALPHA_LO, (double)i / (ALPHA_GRID - 1));
        if ((st = rate_at(s, a[i], &f[i])) != QC_OK)
            return st;
        if (f[i] > f[best])
            best = i;
    }
    double lo = a[best > 0 ? best - 1 : 0], hi = a[best + 1 < ALPHA_GRID ? best + 1 : best];
    double xb = a[best], fb = f[best];
    const double g = 0.5 * (sqrt(5.0) - 1.0);
    double x1 = hi - g * (hi - lo), x2 = lo + g * (hi - lo), f1, f2;
    if ((st = rate_at(s, x1, &f1)) != QC_OK || (st = rate_at(s, x2, &f2)) != QC_OK)
        return st;
    for (int k = 0; k < GOLDEN_STEPS; k++) {
        if (f1 > fb) {
            fb = f1;
            xb = x1;
        }
        if (f2 > fb) {
            fb = f2;
            xb = x2;
        }
        if (f1 >= f2) {
            hi = x2;
            x2 = x1;
            f2 = f1;
            x1 = hi - g * (hi - lo);
            if ((st = rate_at(s, x1, &f1)) != QC_OK)
                return st;
        } else {
            lo = x1;
            x1 = x2;
            f1 = f2;
            x2 = lo + g * (hi - lo);
            if ((st = rate_at(s, x2, &f2)) != QC_OK)
                return st;
        }
    }
    if (f1 > fb)
        xb = x1, fb = f1;
    if (f2 > fb)
        xb = x2, fb = f2;
    /* keep the start unless the search found better */
    double f0;
    if ((st = rate_at(s, 1.0, &f0)) != QC_OK)
        return st;
    *alpha_out = fb > f0 ? xb : 1.0;
    return QC_OK;
}

qc_status qc_memory_design(const qc_design_request *req, qc_design_result *res)
{
    const qc_design_memory *m = &req->memory;
    qc_status st;
    const size_t nt = res->nthresholds;
    search s = {.isi = {.model = req->channel.model, .levels = res->levels,
                        .nlevels = res->nlevels, .input = res->input, .taps = m->taps,
                        .ntaps = m->ntaps, .thresholds = res->thresholds, .nthresholds = nt,
                        .symbols = m->symbols ? m->symbols : QC_DESIGN_MEMORY_SYMBOLS,
                        .seed = m->seed},
                .base = res->thresholds};
    res->taps = qc_malloc_array(m->ntaps, sizeof *res->taps);
    res->memory_thresholds = qc_malloc_array(nt, sizeof *res->memory_thresholds);
    s.t = qc_malloc_array(nt, sizeof *s.t);
    if (!res->taps || !res->memory_thresholds || !s.t) {
        free(s.t);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    memcpy(res->taps, m->taps, m->ntaps * sizeof *res->taps);
    res->ntaps = m->ntaps;
    double alpha = 1.0;
    if (req->quantizer.kind == QC_QUANTIZER_UNIFORM && nt >= 2) {
        s.centre = 0.5 * (res->thresholds[0] + res->thresholds[nt - 1]);
        if ((st = best_alpha(&s, &alpha)) != QC_OK)
            goto done;
    }
    double span = 0.0;
    for (size_t j = 0; j < nt; j++)
        span = fmax(span, fabs(res->thresholds[j]));
    for (size_t j = 0; j < nt; j++) {
        double t = alpha == 1.0 ? res->thresholds[j]
                                : s.centre + alpha * (res->thresholds[j] - s.centre);
        /* a threshold at the centre of a symmetric set stays at 0 when
         * the range is scaled; kept thresholds are kept bit for bit */
        res->memory_thresholds[j] = alpha != 1.0 && fabs(t) < 1e-9 * span ? 0.0 : t;
    }
    res->full_scale_factor = alpha;
    res->memory_evaluations = s.evaluations;
    s.isi.thresholds = res->memory_thresholds;
    s.isi.unquantized = 1;
    qc_isi_result r;
    if ((st = qc_isi_rate(&s.isi, &r)) != QC_OK)
        goto done;
    res->states = r.states;
    res->memory_symbols = r.symbols;
    res->information_rate_bits = r.rate_bits;
    res->information_rate_ci_bits = r.rate_ci_bits;
    res->unquantized_information_rate_bits = r.unquantized_bits;
    res->unquantized_information_rate_ci_bits = r.unquantized_ci_bits;
    res->symbolwise_rate_bits = r.symbolwise_bits;
done:
    free(s.t);
    return st;
}

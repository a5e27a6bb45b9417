/* memory_design.c — the design of a quantizer in front of a detector on a
 * channel with memory: after the memoryless design, the information rates
 * of the channel with memory are estimated by simulation (quantcap/
 * memory.h: Arnold, Loeliger, Vontobel, Kavčić, Zeng, IEEE Trans. IT
 * 52(8), 2006), the quantizer's settings are re-optimized for the
 * quantized information rate, and the trade's figures of the symbol-by-
 * symbol receiver (exact) and of the symbol-wise MAP detector (BCJR:
 * Bahl, Cocke, Jelinek, Raviv, IEEE Trans. IT 20(2), 1974; simulated on
 * the same sequence) are filled in, with the FEC outcome of the latter
 * (undefined where its figures are not simulated, on a coherent link).
 *
 * What is searched, starting from the memoryless-optimal settings carried
 * over to the span of the outputs with memory: the noiseless outputs
 * Σ h_i·x_{k−i} reach from u_lo to u_hi where the levels reach from x_lo
 * to x_hi, so the memoryless settings are mapped by the affine map that
 * takes the model's mean output at x_lo and x_hi to that at u_lo and
 * u_hi (scale α0, its ratio of spans; on a coherent link the outputs of
 * either quadrature):
 *   - uniform: the full scale, as a factor α on the spread of the
 *     thresholds about their centre, which the map moves;
 *   - converter (quantcap/quantizer.h) with the best gain: the gain, as a
 *     factor 1/α on the memoryless-optimal one (α > 1: a wider full scale
 *     on the receiver output), then the offset when it is chosen too,
 *     from the one the map gives; its own noise (ENOB, jitter) is added
 *     to the channel's at every gain (qc_model_add_noise: σ_conv/gain at
 *     the receiver output). An AGC gain follows its rule on the output of
 *     the channel with memory; a given gain and offset are kept.
 * Each one-dimensional search is a grid (α on [α0/2, 2·α0]), widened past
 * an end where the rate still rises (ALPHA_WIDEN steps at most; a search
 * that ends there is reported, never clamped silently), then golden-
 * section refinement around its best point (J. Kiefer, "Sequential
 * minimax search for a maximum", Proc. AMS 4, 1953); the memoryless
 * settings themselves are kept unless the search finds better.
 * Every evaluation simulates the same seeded sequence, so the rates of two
 * settings are compared with common random numbers: the search sees the
 * rate's change with the thresholds, not the noise of two simulations.
 * That sequence is drawn once and kept (qc_isi_draws): the evaluations
 * after the first replay it.
 * A coherent link (complex taps, QAM or PAM on the in-phase quadrature)
 * scales the product quantizer's thresholds, the same on I and Q, by the
 * same α (a converter's gain and offset act on both alike); the
 * detector's BER and GMI are simulated on real channels only, and the AGC
 * rule, defined on a real output, is refused there. */
#include "design/design_internal.h"
#include "quantcap/memory.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define ALPHA_LO 0.5      /* the scale's grid: [ALPHA_LO, ALPHA_HI] × the */
#define ALPHA_HI 2.0      /* ratio of the output spans with and without   */
#define ALPHA_GRID 11     /* memory, ALPHA_GRID points                    */
#define ALPHA_WIDEN 16    /* grid steps added past an end the rate still
                             rises at (a factor of 4^(16/10) ≈ 9)         */
#define OFFSET_REACH 0.125 /* offset searched ± this share of the full scale */
#define OFFSET_GRID 9
#define GOLDEN_STEPS 10   /* refinement: bracket shrinks by 0.618^10     */

/* The trellis's receiver mode of a request. */
static qc_isi_mode mode_of(const qc_design_request *req)
{
    if (!req->memory.coherent)
        return QC_ISI_REAL;
    return req->channel.dimensions == 2 ? QC_ISI_COHERENT_QAM : QC_ISI_COHERENT_PAM;
}

qc_status qc_memory_check(const qc_design_request *req)
{
    const qc_design_memory *m = &req->memory;
    qc_status st = qc_isi_complex_taps_check(m->taps, m->coherent ? m->taps_imag : NULL,
                                             m->ntaps);
    if (st != QC_OK)
        return st;
    if (m->symbols > QC_DESIGN_MEMORY_MAX_SYMBOLS) /* as many as a rate-ci search may use */
        return qc_fail(QC_EINVAL, "symbols: at most %zu (got %zu)",
                       (size_t)QC_DESIGN_MEMORY_MAX_SYMBOLS, m->symbols);
    if (req->channel.model && (st = qc_isi_model_check(req->channel.model)) != QC_OK)
        return st;
    if (!m->coherent) {
        if (req->channel.dimensions == 2)
            return qc_fail(QC_EINVAL, "taps: QAM on a channel with memory needs coherent "
                                      "detection (detection coherent)");
        if (m->taps_imag)
            for (size_t i = 0; i < m->ntaps; i++)
                if (m->taps_imag[i] != 0.0)
                    return qc_fail(QC_EINVAL,
                                   "taps: tap %zu (h%zu) is complex; complex taps need "
                                   "coherent detection (detection coherent)",
                                   i + 1, i);
    } else if (req->channel.model &&
               (qc_model_get_type(req->channel.model)->properties & QC_MODEL_INTENSITY)) {
        return qc_fail(QC_EINVAL,
                       "detection: coherent detection (complex taps, QAM) needs a field model "
                       "with noise on each quadrature (gauss); model '%s' is an intensity "
                       "model",
                       qc_model_get_type(req->channel.model)->name);
    }
    const size_t M = qc_isi_alphabet_size(mode_of(req), req->channel.nlevels);
    if (M == 0 || qc_isi_states(M, m->ntaps) == 0) {
        if (mode_of(req) == QC_ISI_COHERENT_QAM)
            return qc_fail(QC_EINVAL,
                           "taps: %zu-QAM and %zu taps make %zu^%zu trellis states; at most "
                           "%zu states are supported (QPSK with 6 taps, 16-QAM with 3, 64-QAM "
                           "with 2)",
                           M, m->ntaps, M, m->ntaps - 1, QC_ISI_MAX_STATES);
        return qc_fail(QC_EINVAL,
                       "taps: %zu levels and %zu taps make %zu^%zu trellis states; at most "
                       "%zu states are supported",
                       req->channel.nlevels, m->ntaps, req->channel.nlevels, m->ntaps - 1,
                       QC_ISI_MAX_STATES);
    }
    if (m->coherent && req->quantizer.kind == QC_QUANTIZER_CONVERTER &&
        req->quantizer.converter && req->quantizer.converter->gain_mode == QC_GAIN_AGC)
        return qc_fail(QC_EINVAL, "converter-gain agc: the AGC rule is applied to a real "
                                  "output with memory; on a coherent one give the gain or "
                                  "'best'");
    if (!(m->rate_ci_bits >= 0.0) || !isfinite(m->rate_ci_bits))
        return qc_fail(QC_EINVAL, "rate-ci: expected a half-width > 0 bit/symbol (got %g)",
                       m->rate_ci_bits);
    const size_t n = m->symbols ? m->symbols : QC_DESIGN_MEMORY_SYMBOLS;
    if (n < QC_ISI_BATCHES * QC_ISI_MIN_BATCH)
        return qc_fail(QC_EINVAL, "symbols: at least %zu symbols are needed (got %zu)",
                       QC_ISI_BATCHES * QC_ISI_MIN_BATCH, n);
    return QC_OK;
}

typedef enum { PARAM_SCALE, PARAM_OFFSET } param;

typedef struct {
    qc_isi_request isi;
    const qc_model *base;  /* the receiver's model                       */
    size_t nt;
    /* uniform: thresholds base_t scaled about centre */
    const double *base_t;
    double centre;         /* the middle of base_t                       */
    double pivot;          /* where centre goes (centre: unchanged)      */
    /* converter: transition levels T (full-scale units), own noise */
    int converter;
    const double *T;
    double noise_sd;
    double gain0;          /* the gain α = 1 stands for                  */
    double offset;         /* the offset in use                          */
    qc_model *noisy;       /* the receiver's model plus the converter's noise */
    double *t;             /* the thresholds in use                      */
    size_t evaluations;
    int at_bound;          /* a search ended at its farthest point, the rate
                              still rising there                         */
} search;

/* Set the thresholds (and the converter's noise) for factor alpha and the
 * search's offset. */
static qc_status set_to(search *s, double alpha)
{
    qc_status st = QC_OK;
    if (!s->converter) {
        for (size_t j = 0; j < s->nt; j++)
            s->t[j] = s->pivot + alpha * (s->base_t[j] - s->centre);
        s->isi.model = s->base;
    } else {
        const double g = s->gain0 / alpha;
        for (size_t j = 0; j < s->nt; j++)
            s->t[j] = (s->T[j] - s->offset) / g;
        qc_model_free(s->noisy);
        s->noisy = NULL;
        if (s->noise_sd > 0.0 && (st = qc_model_add_noise(s->base, s->noise_sd / g,
                                                          &s->noisy)) != QC_OK)
            return st;
        s->isi.model = s->noisy ? s->noisy : s->base;
    }
    s->isi.thresholds = s->t;
    return st;
}

static qc_status rate_at(search *s, param p, double v, double alpha, double *bits)
{
    if (p == PARAM_OFFSET)
        s->offset = v;
    qc_status st = set_to(s, p == PARAM_SCALE ? v : alpha);
    if (st != QC_OK)
        return st;
    s->isi.unquantized = 0;
    s->isi.labels = NULL;
    qc_isi_result r;
    st = qc_isi_rate(&s->isi, &r);
    s->evaluations++;
    if (st == QC_OK)
        *bits = r.rate_bits;
    return st;
}

/* Maximize the simulated rate over one parameter (common random numbers:
 * one seed for all): a grid on [lo, hi] (geometric for the scale), widened
 * step by step past an end where the rate still rises (at most
 * ALPHA_WIDEN steps; s->at_bound is set if it still rose at the last),
 * then golden-section refinement around the best point; that point into
 * *v_out (and s->offset for the offset) and its rate into *f_out. */
static qc_status maximize(search *s, param p, double lo, double hi, size_t ngrid,
                          double alpha, double *v_out, double *f_out)
{
    qc_status st;
    double a[ALPHA_GRID > OFFSET_GRID ? ALPHA_GRID : OFFSET_GRID];
    double f[sizeof a / sizeof a[0]];
    size_t best = 0;
    for (size_t i = 0; i < ngrid; i++) {
        const double u = (double)i / (double)(ngrid - 1);
        a[i] = p == PARAM_SCALE ? lo * pow(hi / lo, u) : lo + (hi - lo) * u;
        if ((st = rate_at(s, p, a[i], alpha, &f[i])) != QC_OK)
            return st;
        if (f[i] > f[best])
            best = i;
    }
    double l = a[best > 0 ? best - 1 : 0], h = a[best + 1 < ngrid ? best + 1 : best];
    double xb = a[best], fb = f[best];
    if (best == 0 || best + 1 == ngrid) { /* widen past the end */
        const int up = best > 0;
        const double ratio = pow(hi / lo, 1.0 / (double)(ngrid - 1));
        const double step = (hi - lo) / (double)(ngrid - 1);
        double inner = up ? l : h, outer = xb;
        int rose = 1;
        for (int k = 0; k < ALPHA_WIDEN && rose; k++) {
            const double x = p == PARAM_SCALE ? (up ? xb * ratio : xb / ratio)
                                              : (up ? xb + step : xb - step);
            double fx;
            if ((st = rate_at(s, p, x, alpha, &fx)) != QC_OK)
                return st;
            outer = x;
            if (fx > fb) {
                inner = xb;
                xb = x;
                fb = fx;
            } else {
                rose = 0;
            }
        }
        s->at_bound |= rose;
        l = fmin(inner, outer);
        h = fmax(inner, outer);
    }
    const double g = 0.5 * (sqrt(5.0) - 1.0);
    double x1 = h - g * (h - l), x2 = l + g * (h - l), f1, f2;
    if ((st = rate_at(s, p, x1, alpha, &f1)) != QC_OK ||
        (st = rate_at(s, p, x2, alpha, &f2)) != QC_OK)
        return st;
    for (int k = 0; k < GOLDEN_STEPS; k++) {
        if (f1 > fb)
            fb = f1, xb = x1;
        if (f2 > fb)
            fb = f2, xb = x2;
        if (f1 >= f2) {
            h = x2;
            x2 = x1;
            f2 = f1;
            x1 = h - g * (h - l);
            if ((st = rate_at(s, p, x1, alpha, &f1)) != QC_OK)
                return st;
        } else {
            l = x1;
            x1 = x2;
            f1 = f2;
            x2 = l + g * (h - l);
            if ((st = rate_at(s, p, x2, alpha, &f2)) != QC_OK)
                return st;
        }
    }
    if (f1 > fb)
        xb = x1, fb = f1;
    if (f2 > fb)
        xb = x2, fb = f2;
    *v_out = xb;
    *f_out = fb;
    if (p == PARAM_OFFSET)
        s->offset = xb;
    return QC_OK;
}

/* Adds the range of p·v over v in [lo, hi] to [*rlo, *rhi]. */
static void add_range(double p, double lo, double hi, double *rlo, double *rhi)
{
    *rlo += fmin(p * lo, p * hi);
    *rhi += fmax(p * lo, p * hi);
}

/* The affine map of the header that carries the memoryless settings over
 * to the outputs with memory, y -> *from_out + *alpha0 · (y − *from):
 * *from is the model's mean output at the lowest level sent and *from_out
 * that at the lowest noiseless output with memory. On a coherent link the
 * outputs are those of either quadrature (the product quantizer has the
 * same thresholds on both): I = Σ Re h_i·a_{k−i} − Im h_i·b_{k−i} and
 * Q = Σ Im h_i·a_{k−i} + Re h_i·b_{k−i}, with a and b the symbols' in-
 * phase and quadrature levels (b = 0 for PAM), and the memoryless ones
 * span the levels. The identity (α0 = 1) where the means are not finite
 * and increasing. */
static void span_map(const search *s, double *alpha0, double *from, double *from_out)
{
    *alpha0 = 1.0;
    *from = *from_out = 0.0;
    double x_lo = INFINITY, x_hi = -INFINITY;
    for (size_t x = 0; x < s->isi.nlevels; x++)
        if (!s->isi.input || s->isi.input[x] > 0.0) {
            x_lo = fmin(x_lo, s->isi.levels[x]);
            x_hi = fmax(x_hi, s->isi.levels[x]);
        }
    const int qam = s->isi.mode == QC_ISI_COHERENT_QAM;
    const double b_lo = qam ? x_lo : 0.0, b_hi = qam ? x_hi : 0.0;
    double i_lo = 0.0, i_hi = 0.0, q_lo = 0.0, q_hi = 0.0;
    for (size_t i = 0; i < s->isi.ntaps; i++) {
        const double re = s->isi.taps[i];
        const double im = s->isi.taps_imag ? s->isi.taps_imag[i] : 0.0;
        add_range(re, x_lo, x_hi, &i_lo, &i_hi);
        add_range(-im, b_lo, b_hi, &i_lo, &i_hi);
        add_range(im, x_lo, x_hi, &q_lo, &q_hi);
        add_range(re, b_lo, b_hi, &q_lo, &q_hi);
    }
    const int real = s->isi.mode == QC_ISI_REAL;
    const double u_lo = real ? i_lo : fmin(i_lo, q_lo), u_hi = real ? i_hi : fmax(i_hi, q_hi);
    double m[4], var;
    const double at[4] = {x_lo, x_hi, u_lo, u_hi};
    for (int k = 0; k < 4; k++)
        if (!isfinite(at[k]) || qc_model_moments(s->base, at[k], m + k, &var) != QC_OK ||
            !isfinite(m[k]))
            return;
    const double r = (m[3] - m[2]) / (m[1] - m[0]);
    if (!(m[1] > m[0]) || !(r > 0.0) || !isfinite(r))
        return;
    *alpha0 = r;
    *from = m[0];
    *from_out = m[2];
}

/* Mean and rms about it of the output of the channel with memory (the
 * model's moments at every noiseless output Σ h_i·x_{k−i}, weighted by
 * the i.i.d. law of the window): what an AGC measures. */
static qc_status isi_output_moments(const search *s, double *mu, double *sd)
{
    const size_t M = s->isi.nlevels, L = s->isi.ntaps;
    size_t T = 1;
    for (size_t i = 0; i < L; i++)
        T *= M;
    double m1 = 0.0, m2 = 0.0;
    for (size_t t = 0; t < T; t++) {
        double u = 0.0, p = 1.0;
        for (size_t i = 0, r = t; i < L; i++, r /= M) {
            u += s->isi.taps[i] * s->isi.levels[r % M];
            p *= s->isi.input ? s->isi.input[r % M] : 1.0 / (double)M;
        }
        double mean, var;
        qc_status st = qc_model_moments(s->base, u, &mean, &var);
        if (st != QC_OK)
            return st;
        m1 += p * mean;
        m2 += p * (var + mean * mean);
    }
    *mu = m1;
    *sd = sqrt(fmax(m2 - m1 * m1, 0.0));
    if (!(*sd > 0.0))
        return qc_fail(QC_EINVAL, "converter-gain: the output of the channel with memory has "
                                  "no spread to scale");
    return QC_OK;
}

/* The converter's gain and offset on the channel with memory; *alpha is
 * gain0 over the chosen gain. A searched gain starts from the map of the
 * header (and a searched offset from where the map puts it); the
 * memoryless settings are kept unless the searches find better. */
static qc_status converter_settings(search *s, const qc_converter *c, double *alpha)
{
    qc_status st;
    *alpha = 1.0;
    const double o0 = s->offset;
    double f = -INFINITY;
    if (c->gain_mode == QC_GAIN_AGC) {
        double mu, sd;
        if ((st = isi_output_moments(s, &mu, &sd)) != QC_OK)
            return st;
        const double half = 0.5 * (c->full_scale_hi - c->full_scale_lo);
        const double mid = 0.5 * (c->full_scale_hi + c->full_scale_lo);
        const double g = half / (c->agc_k * sd);
        *alpha = s->gain0 / g;
        if (!c->offset_best)
            s->offset = isnan(c->offset) ? mid - g * mu : c->offset;
    } else if (c->gain_mode == QC_GAIN_BEST) {
        double a0, from, from_out;
        span_map(s, &a0, &from, &from_out);
        if (c->offset_best) /* g0·y + o0 = (g0/α0)·map(y) + offset */
            s->offset = o0 + s->gain0 * from - s->gain0 / a0 * from_out;
        if ((st = maximize(s, PARAM_SCALE, ALPHA_LO * a0, ALPHA_HI * a0, ALPHA_GRID, 1.0,
                           alpha, &f)) != QC_OK)
            return st;
    }
    if (c->offset_best) {
        const double w = c->full_scale_hi - c->full_scale_lo, oc = s->offset;
        double o;
        if ((st = maximize(s, PARAM_OFFSET, oc - OFFSET_REACH * w, oc + OFFSET_REACH * w,
                           OFFSET_GRID, *alpha, &o, &f)) != QC_OK)
            return st;
    }
    if (c->gain_mode == QC_GAIN_BEST) { /* the memoryless settings, unless beaten */
        const double a = *alpha, o = s->offset;
        double f0;
        s->offset = o0;
        if ((st = rate_at(s, PARAM_SCALE, 1.0, 1.0, &f0)) != QC_OK)
            return st;
        if (f > f0)
            *alpha = a, s->offset = o;
        else
            *alpha = 1.0, s->at_bound = 0;
    }
    return QC_OK;
}

/* The verdict of the request's code on the channel with memory: judged
 * by the BCJR detector's figure the code reads (the BER for a hard-
 * decision code, the NGMI for a soft one). Without that figure the
 * verdict is undefined, never that of the link without interference the
 * memoryless figures describe. */
static qc_status memory_fec(const qc_design_request *req, double m, qc_design_result *res)
{
    const qc_fec *fec = req->input.fec;
    const double fig = fec->kind == QC_FEC_HARD ? res->bcjr_pre_fec_ber : res->bcjr_ngmi;
    res->fec_closes = 0;
    res->fec_margin = res->net_bits = res->net_rate_gbps = NAN;
    res->fec_note = NULL;
    if (isnan(fig)) {
        res->fec_note =
            req->memory.coherent
                ? "a coherent channel with memory has no simulated pre-FEC BER or NGMI (the "
                  "BCJR detector's figures are simulated on real channels only), so the code "
                  "cannot be judged; rate the link by its information rate (rate=X targets)"
                : fec->kind == QC_FEC_HARD
                ? "the BCJR detector's pre-FEC BER is undefined here (Gray labels need a "
                  "power of 2 levels), so the code cannot be judged"
                : "the BCJR detector's NGMI is undefined here (Gray labels need a power of 2 "
                  "levels), so the code cannot be judged";
        return QC_OK;
    }
    qc_fec_outcome o;
    qc_status st = qc_fec_evaluate(fec, res->bcjr_pre_fec_ber, res->bcjr_ngmi,
                                   res->entropy_bits, m, &o);
    if (st != QC_OK)
        return st;
    res->fec_closes = o.closes;
    res->fec_margin = o.margin;
    res->net_bits = o.net_bits * (double)res->polarizations;
    res->net_rate_gbps = req->channel.symbol_rate > 0.0
                             ? res->net_bits * req->channel.symbol_rate * 1e-9
                             : NAN;
    return QC_OK;
}

/* The trade's figures on the channel with memory, from the final rates. */
static qc_status memory_figures(const qc_design_request *req, const qc_isi_result *r,
                                unsigned nbits, qc_design_result *res)
{
    res->symbolwise_pre_fec_ber = res->symbolwise_ngmi = NAN;
    res->bcjr_pre_fec_ber = res->bcjr_pre_fec_ber_ci = NAN;
    res->bcjr_gmi_bits = res->bcjr_gmi_ci_bits = res->bcjr_ngmi = res->bcjr_ngmi_ci = NAN;
    res->unquantized_bcjr_pre_fec_ber = res->unquantized_bcjr_pre_fec_ber_ci = NAN;
    res->unquantized_bcjr_ngmi = res->unquantized_bcjr_ngmi_ci = NAN;
    const double h = res->entropy_bits, m = (double)nbits;
    if (nbits > 0) {
        res->symbolwise_pre_fec_ber = r->symbolwise_ber;
        res->symbolwise_ngmi = qc_ngmi(r->symbolwise_gmi_bits, h, m);
        res->bcjr_pre_fec_ber = r->bcjr_ber;
        res->bcjr_pre_fec_ber_ci = r->bcjr_ber_ci;
        res->bcjr_gmi_bits = r->bcjr_gmi_bits;
        res->bcjr_gmi_ci_bits = r->bcjr_gmi_ci_bits;
        /* NGMI is affine in the GMI: its interval is the GMI's over m */
        res->bcjr_ngmi = qc_ngmi(r->bcjr_gmi_bits, h, m);
        res->bcjr_ngmi_ci = r->bcjr_gmi_ci_bits / m;
        res->unquantized_bcjr_pre_fec_ber = r->unquantized_bcjr_ber;
        res->unquantized_bcjr_pre_fec_ber_ci = r->unquantized_bcjr_ber_ci;
        res->unquantized_bcjr_ngmi = qc_ngmi(r->unquantized_bcjr_gmi_bits, h, m);
        res->unquantized_bcjr_ngmi_ci = r->unquantized_bcjr_gmi_ci_bits / m;
    }
    return req->input.fec ? memory_fec(req, m, res) : QC_OK;
}

/* Simulate the final rates again on more symbols until the quantized
 * rate's 95 % half-width is within `target` (bit/symbol; 0: none). The
 * batch-means interval narrows as 1/√n, so n grows by (ci/target)² with a
 * 15 % margin, in whole batches; a few rounds at most, since each lands
 * close. */
static qc_status meet_ci_target(qc_isi_request *isi, double target, qc_isi_result *r)
{
    for (int round = 0; target > 0.0 && r->rate_ci_bits > target; round++) {
        const double ratio = r->rate_ci_bits / target;
        const double want = ceil((double)r->symbols * ratio * ratio * 1.15 /
                                 (double)QC_ISI_BATCHES) *
                            (double)QC_ISI_BATCHES;
        if (round == 4 || !(want <= (double)QC_DESIGN_MEMORY_MAX_SYMBOLS))
            return qc_fail(QC_EINVAL,
                           "rate-ci: the rate's interval is +-%.3g bit with %zu symbols; "
                           "+-%g would take about %.3g symbols, more than the %zu allowed "
                           "(ask for a wider interval)",
                           r->rate_ci_bits, r->symbols, target, want,
                           QC_DESIGN_MEMORY_MAX_SYMBOLS);
        isi->symbols = (size_t)want;
        qc_status st = qc_isi_rate(isi, r);
        if (st != QC_OK)
            return st;
    }
    return QC_OK;
}

qc_status qc_memory_design(const qc_design_request *req, qc_design_result *res)
{
    const qc_design_memory *m = &req->memory;
    qc_status st;
    const size_t nt = res->nthresholds;
    const int conv = res->converter && req->quantizer.converter;
    search s = {.isi = {.model = req->channel.model, .levels = res->levels,
                        .nlevels = res->nlevels, .input = res->input, .taps = m->taps,
                        .ntaps = m->ntaps, .thresholds = res->thresholds, .nthresholds = nt,
                        .symbols = m->symbols ? m->symbols : QC_DESIGN_MEMORY_SYMBOLS,
                        .seed = m->seed, .taps_imag = m->coherent ? m->taps_imag : NULL,
                        .mode = mode_of(req)},
                .base = req->channel.model, .nt = nt, .base_t = res->thresholds,
                .converter = conv, .T = res->thresholds,
                .noise_sd = conv ? res->converter_noise_rms : 0.0,
                .gain0 = conv ? res->gain : 1.0, .offset = conv ? res->offset : 0.0};
    size_t *labels = NULL;
    unsigned nbits = 0;
    /* every rate of the search draws the same sequence: kept once */
    if ((st = qc_isi_draws_alloc(&s.isi.draws)) != QC_OK)
        return st;
    res->taps = qc_malloc_array(m->ntaps, sizeof *res->taps);
    res->memory_thresholds = qc_malloc_array(nt, sizeof *res->memory_thresholds);
    s.t = qc_malloc_array(nt, sizeof *s.t);
    if (!res->taps || !res->memory_thresholds || !s.t) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    memcpy(res->taps, m->taps, m->ntaps * sizeof *res->taps);
    res->ntaps = m->ntaps;
    res->coherent = m->coherent != 0;
    res->truncated_energy = m->coherent ? m->truncated_energy : NAN;
    if (m->coherent) {
        if (!(res->taps_imag = qc_malloc_array(m->ntaps, sizeof *res->taps_imag))) {
            st = qc_fail(QC_ENOMEM, "out of memory");
            goto done;
        }
        for (size_t i = 0; i < m->ntaps; i++)
            res->taps_imag[i] = m->taps_imag ? m->taps_imag[i] : 0.0;
    }
    double alpha = 1.0;
    if (conv) {
        if ((st = converter_settings(&s, req->quantizer.converter, &alpha)) != QC_OK)
            goto done;
    } else if (req->quantizer.kind == QC_QUANTIZER_UNIFORM && nt >= 2) {
        double a0, from, from_out, f, f0;
        s.centre = 0.5 * (res->thresholds[0] + res->thresholds[nt - 1]);
        span_map(&s, &a0, &from, &from_out);
        const double pivot = from_out + a0 * (s.centre - from);
        s.pivot = pivot;
        if ((st = maximize(&s, PARAM_SCALE, ALPHA_LO * a0, ALPHA_HI * a0, ALPHA_GRID, 1.0,
                           &alpha, &f)) != QC_OK)
            goto done;
        s.pivot = s.centre; /* the memoryless thresholds, unless beaten */
        if ((st = rate_at(&s, PARAM_SCALE, 1.0, 1.0, &f0)) != QC_OK)
            goto done;
        if (f > f0)
            s.pivot = pivot;
        else
            alpha = 1.0, s.at_bound = 0;
    }
    if ((st = set_to(&s, alpha)) != QC_OK)
        goto done;
    double span = 0.0;
    for (size_t j = 0; j < nt; j++)
        span = fmax(span, fabs(s.t[j]));
    for (size_t j = 0; j < nt; j++) {
        const int kept = !conv && alpha == 1.0 && s.pivot == s.centre;
        double t = kept ? res->thresholds[j] : s.t[j];
        /* a threshold at the centre of a symmetric set stays at 0 when
         * the range is scaled; kept thresholds are kept bit for bit */
        res->memory_thresholds[j] = !kept && fabs(t) < 1e-9 * span ? 0.0 : t;
    }
    res->full_scale_factor = alpha;
    res->full_scale_at_bound = s.at_bound;
    res->memory_gain = conv ? s.gain0 / alpha : NAN;
    res->memory_offset = conv ? s.offset : NAN;
    res->memory_evaluations = s.evaluations;
    if (!m->coherent && qc_is_power_of_two(res->nlevels)) {
        if (!(labels = qc_malloc_array(res->nlevels, sizeof *labels))) {
            st = qc_fail(QC_ENOMEM, "out of memory");
            goto done;
        }
        if ((st = qc_gray_labels(res->levels, res->nlevels, labels, &nbits)) != QC_OK)
            goto done;
    }
    s.isi.thresholds = res->memory_thresholds;
    s.isi.labels = nbits ? labels : NULL;
    s.isi.label_bits = nbits;
    /* the converter's unquantized reference is the receiver's own, without
     * the converter's noise: a second run on the same sequence */
    s.isi.unquantized = !s.noisy;
    /* the figures asked for, and the quantized rate an interval target
     * reads */
    const unsigned unq = QC_ISI_FIG_UNQUANTIZED_RATE | QC_ISI_FIG_UNQUANTIZED_DETECTOR;
    s.isi.figures = m->figures ? m->figures | (m->rate_ci_bits > 0.0 ? QC_ISI_FIG_RATE : 0u)
                               : 0u;
    qc_isi_result r, ru;
    if ((st = qc_isi_rate(&s.isi, &r)) != QC_OK ||
        (st = meet_ci_target(&s.isi, m->rate_ci_bits, &r)) != QC_OK)
        goto done;
    if (s.noisy && (!m->figures || (m->figures & unq))) {
        qc_isi_request u = s.isi;
        u.model = s.base;
        u.unquantized = 1;
        u.figures = m->figures ? m->figures & unq : unq; /* its quantized ones are unused */
        if ((st = qc_isi_rate(&u, &ru)) != QC_OK)
            goto done;
        r.unquantized_bits = ru.unquantized_bits;
        r.unquantized_ci_bits = ru.unquantized_ci_bits;
        r.unquantized_bcjr_ber = ru.unquantized_bcjr_ber;
        r.unquantized_bcjr_ber_ci = ru.unquantized_bcjr_ber_ci;
        r.unquantized_bcjr_gmi_bits = ru.unquantized_bcjr_gmi_bits;
        r.unquantized_bcjr_gmi_ci_bits = ru.unquantized_bcjr_gmi_ci_bits;
    }
    res->states = r.states;
    res->memory_symbols = r.symbols;
    res->memory_rate_ci_target = m->rate_ci_bits > 0.0 ? m->rate_ci_bits : NAN;
    res->information_rate_bits = r.rate_bits;
    res->information_rate_ci_bits = r.rate_ci_bits;
    res->unquantized_information_rate_bits = r.unquantized_bits;
    res->unquantized_information_rate_ci_bits = r.unquantized_ci_bits;
    res->symbolwise_rate_bits = r.symbolwise_bits;
    st = memory_figures(req, &r, nbits, res);
done:
    qc_isi_draws_free(s.isi.draws);
    qc_model_free(s.noisy);
    free(labels);
    free(s.t);
    return st;
}

/* isi_channel.c — the finite-state channel of symbol-spaced intersymbol
 * interference, y_k = Σ_{i=0..L} h_i·x_{k−i} + noise: checks of the taps
 * and the model, the trellis of M^L states (state = the last L symbols),
 * the noiseless output and output law of every window of L + 1 symbols,
 * and the exact rate of a symbol-by-symbol receiver that treats the
 * interference as noise (the memoryless channel x_k → y_k with the other
 * symbols of the window averaged under the i.i.d. input law; its mutual
 * information by the core engine, Cover & Thomas, Elements of Information
 * Theory, eq. 2.28). The trellis is that of G. D. Forney, "Maximum-
 * likelihood sequence estimation of digital sequences in the presence of
 * intersymbol interference", IEEE Trans. IT 18(3), 1972. */
#include "capacity/isi.h"
#include "core/internal.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

qc_status qc_isi_taps_check(const double *taps, size_t ntaps)
{
    if (ntaps == 0 || !taps)
        return qc_fail(QC_EINVAL, "taps: at least one tap is needed (h0)");
    if (ntaps > QC_ISI_MAX_TAPS)
        return qc_fail(QC_EINVAL, "taps: %zu taps given; at most %zu are supported", ntaps,
                       QC_ISI_MAX_TAPS);
    int any = 0;
    for (size_t i = 0; i < ntaps; i++) {
        if (!isfinite(taps[i]))
            return qc_fail(QC_EINVAL, "taps: tap %zu (h%zu) must be a finite number (got %g)",
                           i + 1, i, taps[i]);
        if (taps[i] != 0.0)
            any = 1;
    }
    if (!any)
        return qc_fail(QC_EINVAL, "taps: all %zu taps are zero; the channel carries nothing",
                       ntaps);
    return QC_OK;
}

size_t qc_isi_states(size_t nlevels, size_t ntaps)
{
    if (nlevels == 0 || ntaps == 0)
        return 0;
    size_t s = 1;
    for (size_t i = 1; i < ntaps; i++) {
        if (s > QC_ISI_MAX_STATES / nlevels)
            return 0;
        s *= nlevels;
    }
    return s;
}

qc_status qc_isi_model_check(const qc_model *model)
{
    if (!model)
        return qc_fail(QC_EINVAL, "memory channel: no model");
    const qc_model_type *type = qc_model_get_type(model);
    if (!(type->properties & QC_MODEL_GAUSSIAN_LAW) || !type->moments)
        return qc_fail(QC_EINVAL,
                       "memory channel: model '%s' is not Gaussian given its level; channels "
                       "with taps take gauss, gauss-sd or apd-gauss",
                       type->name);
    return QC_OK;
}

void qc_isi_channel_free(qc_isi_channel *ch)
{
    if (!ch)
        return;
    free(ch->law);
    free(ch->logp);
    free(ch->state_prior);
    free(ch->noiseless);
    free(ch->mean);
    free(ch->sd);
    free(ch->inv_sd);
    free(ch->log_weight);
    free(ch->src);
    qc_dmc_free(ch->window_dmc);
    free(ch);
}

/* The pattern of a window as text, oldest symbol last: "x_k=…, x_k-1=…". */
static void pattern_text(const qc_isi_channel *ch, size_t t, char *buf, size_t len)
{
    size_t used = 0;
    buf[0] = '\0';
    for (size_t i = 0; i < ch->ntaps && used + 1 < len; i++) {
        int n = snprintf(buf + used, len - used, "%s%g", i ? "," : "",
                         ch->levels[t % ch->M]);
        if (n < 0)
            break;
        used += (size_t)n;
        t /= ch->M;
    }
}

qc_status qc_isi_channel_build(const qc_isi_request *req, qc_isi_channel **out)
{
    qc_status st;
    *out = NULL;
    if (!req)
        return qc_fail(QC_EINVAL, "memory channel: no request");
    if ((st = qc_isi_taps_check(req->taps, req->ntaps)) != QC_OK ||
        (st = qc_isi_model_check(req->model)) != QC_OK ||
        (st = qc_model_check_levels(req->model, req->levels, req->nlevels)) != QC_OK)
        return st;
    if (req->nthresholds > 0 &&
        (st = qc_thresholds_check(req->model, req->thresholds, req->nthresholds)) != QC_OK)
        return st;
    const size_t M = req->nlevels;
    const size_t S = qc_isi_states(M, req->ntaps);
    if (S == 0)
        return qc_fail(QC_EINVAL,
                       "memory channel: %zu levels and %zu taps make %zu^%zu trellis states; "
                       "at most %zu states are supported (e.g. 4 levels and 6 taps)",
                       M, req->ntaps, M, req->ntaps - 1, QC_ISI_MAX_STATES);
    const size_t T = S * M;

    qc_isi_channel *ch = calloc(1, sizeof *ch);
    if (!ch)
        return qc_fail(QC_ENOMEM, "out of memory");
    ch->M = M;
    ch->S = S;
    ch->T = T;
    ch->ntaps = req->ntaps;
    ch->taps = req->taps;
    ch->levels = req->levels;
    ch->K = req->nthresholds + 1;
    ch->law = qc_malloc_array(M, sizeof *ch->law);
    ch->logp = qc_malloc_array(M, sizeof *ch->logp);
    ch->state_prior = qc_malloc_array(S, sizeof *ch->state_prior);
    ch->noiseless = qc_malloc_array(T, sizeof *ch->noiseless);
    ch->mean = qc_malloc_array(T, sizeof *ch->mean);
    ch->sd = qc_malloc_array(T, sizeof *ch->sd);
    ch->src = qc_malloc_array(T, sizeof *ch->src);
    ch->inv_sd = qc_malloc_array(T, sizeof *ch->inv_sd);
    ch->log_weight = qc_malloc_array(T, sizeof *ch->log_weight);
    if (!ch->inv_sd || !ch->log_weight || !ch->law || !ch->logp || !ch->state_prior || !ch->noiseless || !ch->mean || !ch->sd ||
        !ch->src) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto fail;
    }

    /* The input law. */
    double sum = 0.0;
    for (size_t x = 0; x < M; x++) {
        double r = req->input ? req->input[x] : 1.0 / (double)M;
        if (!(r >= 0.0) || !isfinite(r)) {
            st = qc_fail(QC_EINVAL, "input law: entry %zu must be a probability (got %g)",
                         x + 1, r);
            goto fail;
        }
        ch->law[x] = r;
        sum += r;
    }
    if (fabs(sum - 1.0) > 1e-9) {
        st = qc_fail(QC_EINVAL, "input law: entries sum to %.17g, not 1", sum);
        goto fail;
    }
    for (size_t x = 0; x < M; x++)
        ch->logp[x] = ch->law[x] > 0.0 ? log(ch->law[x]) : -INFINITY;
    for (size_t s = 0; s < S; s++) {
        double p = 1.0;
        for (size_t i = 0, r = s; i + 1 < req->ntaps; i++, r /= M)
            p *= ch->law[r % M];
        ch->state_prior[s] = p;
    }

    /* Window t = x_k + M·x_{k−1} + … + M^L·x_{k−L}: its noiseless output
     * and the law of the output there. */
    for (size_t t = 0; t < T; t++) {
        double u = 0.0;
        for (size_t i = 0, r = t; i < req->ntaps; i++, r /= M)
            u += req->taps[i] * req->levels[r % M];
        ch->noiseless[t] = u;
        ch->src[t] = (uint32_t)(t / M);
        double var = NAN;
        if (qc_model_check_levels(req->model, &u, 1) != QC_OK ||
            qc_model_moments(req->model, u, &ch->mean[t], &var) != QC_OK || !(var > 0.0) ||
            !isfinite(var) || !isfinite(ch->mean[t])) {
            char pat[256];
            pattern_text(ch, t, pat, sizeof pat);
            st = qc_fail(QC_EINVAL,
                         "memory channel: the noiseless output %g of the symbols %s (newest "
                         "first) is not a level model '%s' accepts (%s)",
                         u, pat, qc_model_get_type(req->model)->name, qc_last_error());
            goto fail;
        }
        ch->sd[t] = sqrt(var);
        ch->inv_sd[t] = 1.0 / ch->sd[t];
        ch->log_weight[t] = ch->logp[t % M] - log(ch->sd[t]);
    }

    /* Cell probabilities of every window. */
    if (req->nthresholds > 0) {
        if ((st = qc_discretize(req->model, ch->noiseless, T, req->thresholds,
                                req->nthresholds, &ch->window_dmc)) != QC_OK)
            goto fail;
        ch->thresholds = req->thresholds;
    }
    *out = ch;
    return QC_OK;
fail:
    qc_isi_channel_free(ch);
    return st;
}

qc_status qc_isi_symbolwise_dmc(const qc_isi_channel *ch, qc_dmc **out)
{
    qc_status st;
    *out = NULL;
    if (!ch->window_dmc)
        return qc_fail(QC_EINVAL, "memory channel: the symbol-by-symbol rate needs thresholds");
    const size_t K = ch->K;
    if ((st = qc_dmc_alloc(ch->M, K, out)) != QC_OK)
        return st;
    qc_dmc *d_out = *out;
    /* The receiver decides the symbol at the main cursor (the largest
     * |h_d|) from y_k: P(y | x_{k−d}) = Σ over the other symbols of the
     * window of their law × P(y | window). */
    size_t d = 0, md = 1;
    for (size_t i = 1; i < ch->ntaps; i++)
        if (fabs(ch->taps[i]) > fabs(ch->taps[d]))
            d = i;
    for (size_t i = 0; i < d; i++)
        md *= ch->M;
    for (size_t t = 0; t < ch->T; t++) {
        const size_t x = (t / md) % ch->M;
        if (ch->law[x] == 0.0)
            continue;
        const double w = ch->law[t % ch->M] * ch->state_prior[t / ch->M] / ch->law[x];
        if (w == 0.0)
            continue;
        const double *row = ch->window_dmc->p + t * K;
        double *dst = d_out->p + x * K;
        for (size_t y = 0; y < K; y++)
            dst[y] += w * row[y];
    }
    return QC_OK;
}

qc_status qc_isi_symbolwise_rate(const qc_isi_request *req, double *bits)
{
    qc_isi_channel *ch = NULL;
    qc_dmc *d = NULL;
    double mi = NAN;
    qc_status st = qc_isi_channel_build(req, &ch);
    if (st == QC_OK)
        st = qc_isi_symbolwise_dmc(ch, &d);
    if (st == QC_OK)
        st = qc_mutual_information(d, ch->law, &mi);
    if (st == QC_OK)
        *bits = mi / QC_ISI_LN2;
    qc_dmc_free(d);
    qc_isi_channel_free(ch);
    return st;
}

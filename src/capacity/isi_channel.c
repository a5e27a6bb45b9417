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
 * intersymbol interference", IEEE Trans. IT 18(3), 1972.
 *
 * Coherent links: complex taps on complex symbols (square QAM, or PAM on
 * the in-phase quadrature), circular complex Gaussian noise, and the
 * product quantizer (the same thresholds on I and on Q). Given a window,
 * the I and Q samples are independent, so the probability of the joint
 * cell is the product of the two quadratures' cell probabilities; the
 * symbol-by-symbol receiver sees the joint cell (I and Q together), whose
 * law given the main-cursor symbol is no product once the taps couple the
 * quadratures. The tap-list syntax a+bj is that of Python's complex(). */
#include "capacity/isi.h"
#include "core/internal.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

qc_status qc_isi_taps_check(const double *taps, size_t ntaps)
{
    return qc_isi_complex_taps_check(taps, NULL, ntaps);
}

qc_status qc_isi_complex_taps_check(const double *re, const double *im, size_t ntaps)
{
    if (ntaps == 0 || !re)
        return qc_fail(QC_EINVAL, "taps: at least one tap is needed (h0)");
    if (ntaps > QC_ISI_MAX_TAPS)
        return qc_fail(QC_EINVAL, "taps: %zu taps given; at most %zu are supported", ntaps,
                       QC_ISI_MAX_TAPS);
    int any = 0;
    for (size_t i = 0; i < ntaps; i++) {
        const double b = im ? im[i] : 0.0;
        if (!im && !isfinite(re[i]))
            return qc_fail(QC_EINVAL, "taps: tap %zu (h%zu) must be a finite number (got %g)",
                           i + 1, i, re[i]);
        if (!isfinite(re[i]) || !isfinite(b))
            return qc_fail(QC_EINVAL,
                           "taps: tap %zu (h%zu) must be a finite complex number (got %g%+gj)",
                           i + 1, i, re[i], b);
        if (re[i] != 0.0 || b != 0.0)
            any = 1;
    }
    if (!any)
        return qc_fail(QC_EINVAL, "taps: all %zu taps are zero; the channel carries nothing",
                       ntaps);
    return QC_OK;
}

/* One tap's text (len characters at p): a, a+bj, a-bj or bj. */
static qc_status parse_tap(const char *p, size_t len, size_t index, double *re, double *im,
                           int *cplx)
{
    char buf[128];
    while (len > 0 && (*p == ' ' || *p == '\t'))
        p++, len--;
    while (len > 0 && (p[len - 1] == ' ' || p[len - 1] == '\t'))
        len--;
    if (len == 0 || len >= sizeof buf)
        return qc_fail(QC_EINVAL, "taps: tap %zu is %s", index + 1,
                       len == 0 ? "empty" : "too long");
    memcpy(buf, p, len);
    buf[len] = '\0';
    *re = *im = 0.0;
    if (buf[len - 1] == 'j') {
        *cplx = 1;
        buf[--len] = '\0';
        /* the sign that starts the imaginary part: the last + or − that
         * is neither the first character nor an exponent's */
        size_t split = 0;
        for (size_t i = len; i-- > 1;)
            if ((buf[i] == '+' || buf[i] == '-') && buf[i - 1] != 'e' && buf[i - 1] != 'E') {
                split = i;
                break;
            }
        const char *imag = buf + split;
        char sign_only[3] = {0};
        if (split > 0) {
            char tmp = buf[split];
            buf[split] = '\0';
            if (qc_parse_double(buf, re) != QC_OK || !isfinite(*re))
                return qc_fail(QC_EINVAL,
                               "taps: tap %zu ('%.*s'): the real part must be a number "
                               "(expected a, a+bj, a-bj or bj)",
                               index + 1, (int)(len + 1), p);
            buf[split] = tmp;
        }
        if (!strcmp(imag, "+") || !strcmp(imag, "-") || !*imag) { /* "1+j", "j" */
            sign_only[0] = *imag == '-' ? '-' : '+';
            sign_only[1] = '1';
            imag = sign_only;
        }
        if (qc_parse_double(imag, im) != QC_OK || !isfinite(*im))
            return qc_fail(QC_EINVAL,
                           "taps: tap %zu ('%.*s'): the imaginary part must be a number "
                           "(expected a, a+bj, a-bj or bj)",
                           index + 1, (int)(len + 1), p);
        return QC_OK;
    }
    if (qc_parse_double(buf, re) != QC_OK || !isfinite(*re))
        return qc_fail(QC_EINVAL,
                       "taps: tap %zu ('%s') must be a finite number, or complex as a+bj",
                       index + 1, buf);
    return QC_OK;
}

qc_status qc_isi_taps_parse(const char *text, double *re, double *im, size_t *ntaps,
                            int *is_complex)
{
    if (!text)
        return qc_fail(QC_EINVAL, "taps: no list given");
    size_t n = 0;
    int cplx = 0;
    const char *p = text;
    for (;;) {
        const char *end = strchr(p, ',');
        const size_t len = end ? (size_t)(end - p) : strlen(p);
        if (n >= QC_ISI_MAX_TAPS) {
            size_t total = n + 1;
            for (const char *q = end; q; q = strchr(q + 1, ','))
                total++;
            return qc_fail(QC_EINVAL, "taps: %zu taps given; at most %zu are supported", total,
                           QC_ISI_MAX_TAPS);
        }
        qc_status st = parse_tap(p, len, n, &re[n], &im[n], &cplx);
        if (st != QC_OK)
            return st;
        n++;
        if (!end)
            break;
        p = end + 1;
    }
    *ntaps = n;
    *is_complex = cplx;
    return QC_OK;
}

size_t qc_isi_alphabet_size(qc_isi_mode mode, size_t nlevels)
{
    if (mode != QC_ISI_COHERENT_QAM)
        return nlevels;
    if (nlevels > 0 && nlevels > SIZE_MAX / nlevels)
        return 0;
    return nlevels * nlevels;
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
    free(ch->sym_re);
    free(ch->sym_im);
    free(ch->tap_re);
    free(ch->tap_im);
    free(ch->mean_q);
    free(ch->sd_q);
    free(ch->inv_sd_q);
    qc_dmc_free(ch->window_dmc);
    qc_dmc_free(ch->window_dmc_q);
    free(ch);
}

/* The pattern of a window as text, oldest symbol last: "x_k=…, x_k-1=…". */
static void pattern_text(const qc_isi_channel *ch, size_t t, char *buf, size_t len)
{
    size_t used = 0;
    buf[0] = '\0';
    for (size_t i = 0; i < ch->ntaps && used + 1 < len; i++) {
        int n = ch->coherent
                    ? snprintf(buf + used, len - used, "%s%g%+gj", i ? "," : "",
                               ch->sym_re[t % ch->M], ch->sym_im[t % ch->M])
                    : snprintf(buf + used, len - used, "%s%g", i ? "," : "",
                               ch->levels[t % ch->M]);
        if (n < 0)
            break;
        used += (size_t)n;
        t /= ch->M;
    }
}

/* The coherent part of a request: mode, taps, model. */
static qc_status coherent_check(const qc_isi_request *req)
{
    if (req->mode != QC_ISI_REAL && req->mode != QC_ISI_COHERENT_PAM &&
        req->mode != QC_ISI_COHERENT_QAM)
        return qc_fail(QC_EINVAL, "memory channel: unknown receiver mode %d", (int)req->mode);
    if (req->mode == QC_ISI_REAL) {
        if (req->taps_imag)
            for (size_t i = 0; i < req->ntaps; i++)
                if (req->taps_imag[i] != 0.0)
                    return qc_fail(QC_EINVAL,
                                   "taps: tap %zu (h%zu) is complex (%g%+gj); complex taps "
                                   "need a coherent receiver (detection coherent)",
                                   i + 1, i, req->taps[i], req->taps_imag[i]);
        return QC_OK;
    }
    const qc_model_type *type = qc_model_get_type(req->model);
    if (type->properties & QC_MODEL_INTENSITY)
        return qc_fail(QC_EINVAL,
                       "memory channel: coherent detection (complex taps or symbols) needs a "
                       "field model with noise on each quadrature (gauss); model '%s' is an "
                       "intensity model",
                       type->name);
    return QC_OK;
}

qc_status qc_isi_channel_build(const qc_isi_request *req, qc_isi_channel **out)
{
    qc_status st;
    *out = NULL;
    if (!req)
        return qc_fail(QC_EINVAL, "memory channel: no request");
    if ((st = qc_isi_complex_taps_check(req->taps, req->taps_imag, req->ntaps)) != QC_OK ||
        (st = qc_isi_model_check(req->model)) != QC_OK ||
        (st = coherent_check(req)) != QC_OK ||
        (st = qc_model_check_levels(req->model, req->levels, req->nlevels)) != QC_OK)
        return st;
    if (req->nthresholds > 0 &&
        (st = qc_thresholds_check(req->model, req->thresholds, req->nthresholds)) != QC_OK)
        return st;
    const int coherent = req->mode != QC_ISI_REAL;
    const size_t nl = req->nlevels;
    const size_t M = qc_isi_alphabet_size(req->mode, nl);
    const size_t S = M ? qc_isi_states(M, req->ntaps) : 0;
    if (S == 0) {
        if (req->mode == QC_ISI_COHERENT_QAM)
            return qc_fail(QC_EINVAL,
                           "memory channel: %zu-QAM (%zu symbols) and %zu taps make %zu^%zu "
                           "trellis states; at most %zu states are supported (QPSK with 6 "
                           "taps, 16-QAM with 3, 64-QAM with 2)",
                           M, M, req->ntaps, M, req->ntaps - 1, QC_ISI_MAX_STATES);
        return qc_fail(QC_EINVAL,
                       "memory channel: %zu levels and %zu taps make %zu^%zu trellis states; "
                       "at most %zu states are supported (e.g. 4 levels and 6 taps)",
                       M, req->ntaps, M, req->ntaps - 1, QC_ISI_MAX_STATES);
    }
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
    ch->nlevels = nl;
    ch->coherent = coherent;
    ch->K = req->nthresholds + 1;
    ch->law = qc_malloc_array(M, sizeof *ch->law);
    ch->logp = qc_malloc_array(M, sizeof *ch->logp);
    ch->state_prior = qc_malloc_array(S, sizeof *ch->state_prior);
    ch->noiseless = qc_malloc_array(T, sizeof *ch->noiseless);
    ch->mean = qc_malloc_array(T, sizeof *ch->mean);
    ch->sd = qc_malloc_array(T, sizeof *ch->sd);
    ch->inv_sd = qc_malloc_array(T, sizeof *ch->inv_sd);
    ch->log_weight = qc_malloc_array(T, sizeof *ch->log_weight);
    double *noiseless_q = NULL;
    if (!ch->inv_sd || !ch->log_weight || !ch->law || !ch->logp || !ch->state_prior ||
        !ch->noiseless || !ch->mean || !ch->sd) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto fail;
    }
    if (coherent) {
        ch->sym_re = qc_malloc_array(M, sizeof *ch->sym_re);
        ch->sym_im = qc_malloc_array(M, sizeof *ch->sym_im);
        ch->tap_re = qc_malloc_array(req->ntaps, sizeof *ch->tap_re);
        ch->tap_im = qc_malloc_array(req->ntaps, sizeof *ch->tap_im);
        ch->mean_q = qc_malloc_array(T, sizeof *ch->mean_q);
        ch->sd_q = qc_malloc_array(T, sizeof *ch->sd_q);
        ch->inv_sd_q = qc_malloc_array(T, sizeof *ch->inv_sd_q);
        noiseless_q = qc_malloc_array(T, sizeof *noiseless_q);
        if (!ch->sym_re || !ch->sym_im || !ch->tap_re || !ch->tap_im || !ch->mean_q ||
            !ch->sd_q || !ch->inv_sd_q || !noiseless_q) {
            st = qc_fail(QC_ENOMEM, "out of memory");
            goto fail;
        }
        for (size_t i = 0; i < req->ntaps; i++) {
            ch->tap_re[i] = req->taps[i];
            ch->tap_im[i] = req->taps_imag ? req->taps_imag[i] : 0.0;
        }
        /* symbol j: I level j mod nl, Q level j / nl (QAM) or 0 (PAM) */
        for (size_t j = 0; j < M; j++) {
            ch->sym_re[j] = req->levels[j % nl];
            ch->sym_im[j] = req->mode == QC_ISI_COHERENT_QAM ? req->levels[j / nl] : 0.0;
        }
    }

    /* The input law (of the levels; QAM: the same on each quadrature). */
    double sum = 0.0;
    for (size_t x = 0; x < nl; x++) {
        double r = req->input ? req->input[x] : 1.0 / (double)nl;
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
    if (M != nl) /* QAM: product of the quadratures' laws (in place, from the top) */
        for (size_t j = M; j-- > 0;)
            ch->law[j] = ch->law[j % nl] * ch->law[j / nl];
    for (size_t x = 0; x < M; x++)
        ch->logp[x] = ch->law[x] > 0.0 ? log(ch->law[x]) : -INFINITY;
    for (size_t s = 0; s < S; s++) {
        double p = 1.0;
        for (size_t i = 0, r = s; i + 1 < req->ntaps; i++, r /= M)
            p *= ch->law[r % M];
        ch->state_prior[s] = p;
    }

    /* Window t = x_k + M·x_{k−1} + … + M^L·x_{k−L}: its noiseless output
     * and the law of the output there (coherent: of I and of Q). */
    for (size_t t = 0; t < T; t++) {
        double u = 0.0, v = 0.0;
        for (size_t i = 0, r = t; i < req->ntaps; i++, r /= M) {
            if (coherent) {
                const double a = ch->sym_re[r % M], b = ch->sym_im[r % M];
                u += ch->tap_re[i] * a - ch->tap_im[i] * b;
                v += ch->tap_re[i] * b + ch->tap_im[i] * a;
            } else {
                u += req->taps[i] * req->levels[r % M];
            }
        }
        ch->noiseless[t] = u;
        double var = NAN, var_q = 1.0;
        int bad = qc_model_check_levels(req->model, &u, 1) != QC_OK ||
                  qc_model_moments(req->model, u, &ch->mean[t], &var) != QC_OK ||
                  !(var > 0.0) || !isfinite(var) || !isfinite(ch->mean[t]);
        if (!bad && coherent) {
            noiseless_q[t] = v;
            bad = qc_model_check_levels(req->model, &v, 1) != QC_OK ||
                  qc_model_moments(req->model, v, &ch->mean_q[t], &var_q) != QC_OK ||
                  !(var_q > 0.0) || !isfinite(var_q) || !isfinite(ch->mean_q[t]);
        }
        if (bad) {
            char pat[256];
            pattern_text(ch, t, pat, sizeof pat);
            if (coherent)
                st = qc_fail(QC_EINVAL,
                             "memory channel: the noiseless output %g%+gj of the symbols %s "
                             "(newest first) is not a level model '%s' accepts (%s)",
                             u, v, pat, qc_model_get_type(req->model)->name, qc_last_error());
            else
                st = qc_fail(QC_EINVAL,
                             "memory channel: the noiseless output %g of the symbols %s "
                             "(newest first) is not a level model '%s' accepts (%s)",
                             u, pat, qc_model_get_type(req->model)->name, qc_last_error());
            goto fail;
        }
        ch->sd[t] = sqrt(var);
        ch->inv_sd[t] = 1.0 / ch->sd[t];
        ch->log_weight[t] = ch->logp[t % M] - log(ch->sd[t]);
        if (coherent) {
            ch->sd_q[t] = sqrt(var_q);
            ch->inv_sd_q[t] = 1.0 / ch->sd_q[t];
            ch->log_weight[t] -= log(ch->sd_q[t]);
        }
    }

    /* Cell probabilities of every window (coherent: of each quadrature). */
    if (req->nthresholds > 0) {
        if ((st = qc_discretize(req->model, ch->noiseless, T, req->thresholds,
                                req->nthresholds, &ch->window_dmc)) != QC_OK)
            goto fail;
        if (coherent && (st = qc_discretize(req->model, noiseless_q, T, req->thresholds,
                                            req->nthresholds, &ch->window_dmc_q)) != QC_OK)
            goto fail;
        ch->thresholds = req->thresholds;
    }
    free(noiseless_q);
    *out = ch;
    return QC_OK;
fail:
    free(noiseless_q);
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
    size_t cols = K;
    if (ch->coherent) {
        if (K > QC_ISI_MAX_JOINT_CELLS / K || ch->M > QC_ISI_MAX_JOINT_CELLS / (K * K))
            return qc_fail(QC_EINVAL,
                           "memory channel: the symbol-by-symbol rate of %zu symbols through "
                           "%zu x %zu cells (I x Q) needs a channel matrix above %zu entries; "
                           "use fewer bits or a smaller alphabet",
                           ch->M, K, K, QC_ISI_MAX_JOINT_CELLS);
        cols = K * K;
    }
    if ((st = qc_dmc_alloc(ch->M, cols, out)) != QC_OK)
        return st;
    qc_dmc *d_out = *out;
    /* The receiver decides the symbol at the main cursor (the largest
     * |h_d|) from y_k: P(y | x_{k−d}) = Σ over the other symbols of the
     * window of their law × P(y | window). */
    size_t d = 0, md = 1;
    for (size_t i = 1; i < ch->ntaps; i++) {
        const double mi = ch->coherent ? hypot(ch->tap_re[i], ch->tap_im[i]) : fabs(ch->taps[i]);
        const double m0 = ch->coherent ? hypot(ch->tap_re[d], ch->tap_im[d]) : fabs(ch->taps[d]);
        if (mi > m0)
            d = i;
    }
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
        double *dst = d_out->p + x * cols;
        if (!ch->coherent) {
            for (size_t y = 0; y < K; y++)
                dst[y] += w * row[y];
            continue;
        }
        /* joint cell a + K·b: I in cell a, Q in cell b, independent given t */
        const double *rq = ch->window_dmc_q->p + t * K;
        for (size_t b = 0; b < K; b++) {
            const double wb = w * rq[b];
            if (wb == 0.0)
                continue;
            double *db = dst + b * K;
            for (size_t a = 0; a < K; a++)
                db[a] += wb * row[a];
        }
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

/* next[s] = a[s / M]·w[s] (first) or next[s] += a[s / M]·w[s], for
 * s < S with S a multiple of M: each a[u] weighs the M branches
 * u·M .. u·M + M − 1 in a row. With w2, the branch weight is the product
 * w[s]·w2[s] (formed first, then times a). Called with a constant M, the
 * inner loops are unrolled and vectorized. */
static inline void branch_block(const double *restrict a, const double *restrict w,
                                const double *restrict w2, double *restrict next, size_t S,
                                size_t M, int first)
{
    for (size_t u = 0, s = 0; s < S; u++, s += M) {
        const double au = a[u];
        if (w2 && first)
            for (size_t x = 0; x < M; x++)
                next[s + x] = au * (w[s + x] * w2[s + x]);
        else if (w2)
            for (size_t x = 0; x < M; x++)
                next[s + x] += au * (w[s + x] * w2[s + x]);
        else if (first)
            for (size_t x = 0; x < M; x++)
                next[s + x] = au * w[s + x];
        else
            for (size_t x = 0; x < M; x++)
                next[s + x] += au * w[s + x];
    }
}

static void branch_block_any(const double *a, const double *w, const double *w2,
                             double *next, size_t S, size_t M, int first)
{
    switch (M) {
    case 2:
        branch_block(a, w, w2, next, S, 2, first);
        break;
    case 4:
        branch_block(a, w, w2, next, S, 4, first);
        break;
    case 8:
        branch_block(a, w, w2, next, S, 8, first);
        break;
    case 16:
        branch_block(a, w, w2, next, S, 16, first);
        break;
    default:
        branch_block(a, w, w2, next, S, M, first);
    }
}

/* The weight of branch t: w[t], or w[t]·w2[t]. */
static inline double branch_weight(const double *w, const double *w2, size_t t)
{
    return w2 ? w[t] * w2[t] : w[t];
}

/* One step of the forward recursion (declared in capacity/isi.h). The
 * window t = s + hi·S (hi < M) comes from the state t / M; with S a
 * multiple of M (two taps or more) that is hi·S/M + s/M, so the states
 * are read in order, each for M windows in a row, with no index divided.
 * The products and the order of their sums are the same either way; λ is
 * summed in four fixed lanes. */
static double forward_step(const qc_isi_channel *ch, const double *a, const double *w,
                           const double *w2, double *next)
{
    const size_t S = ch->S, M = ch->M;
    if (S % M == 0) {
        for (size_t hi = 0; hi < M; hi++)
            branch_block_any(a + hi * (S / M), w + hi * S, w2 ? w2 + hi * S : NULL, next, S,
                             M, hi == 0);
    } else { /* one tap: S = 1 */
        for (size_t s = 0; s < S; s++)
            next[s] = a[s / M] * branch_weight(w, w2, s);
        for (size_t hi = 1; hi < M; hi++)
            for (size_t s = 0, t = hi * S; s < S; s++, t++)
                next[s] += a[t / M] * branch_weight(w, w2, t);
    }
    /* the sum in four fixed lanes (states s ≡ 0, 1, 2, 3 mod 4), which
     * keep four additions in flight */
    double part[4] = {0.0, 0.0, 0.0, 0.0};
    size_t s = 0;
    for (; s + 4 <= S; s += 4)
        for (size_t k = 0; k < 4; k++)
            part[k] += next[s + k];
    for (; s < S; s++)
        part[0] += next[s];
    const double lambda = (part[0] + part[1]) + (part[2] + part[3]);
    if (lambda > 0.0) {
        const double inv = 1.0 / lambda;
        for (s = 0; s < S; s++)
            next[s] *= inv;
    }
    return lambda;
}

double qc_isi_forward_step(const qc_isi_channel *ch, const double *a, const double *w,
                           double *next)
{
    return forward_step(ch, a, w, NULL, next);
}

double qc_isi_forward_step_pair(const qc_isi_channel *ch, const double *a, const double *w,
                                const double *w2, double *next)
{
    return forward_step(ch, a, w, w2, next);
}

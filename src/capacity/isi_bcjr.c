/* isi_bcjr.c — the symbol-wise maximum a-posteriori detector of a channel
 * with intersymbol interference, run on one simulated batch of the
 * memory-channel engine (isi_rate.c): the forward–backward algorithm of
 * L. R. Bahl, J. Cocke, F. Jelinek and J. Raviv, "Optimal decoding of
 * linear codes for minimizing symbol error rate", IEEE Trans. IT 20(2),
 * 1974, on the M^L-state trellis, with the likelihoods of the quantized
 * cells (or the Gaussian densities without the ADC). From the posterior
 * law of every symbol given the whole observed batch it takes
 *
 *   - the pre-FEC BER of the symbol-wise MAP decisions through the bit
 *     labels, as the posterior expectation of the bit errors of each
 *     decision, Σ_x P(x | y)·d_H(label x, label x̂): an unbiased estimate
 *     of the BER with a smaller variance than counted errors, since the
 *     posterior is exact (P. Hoeher, I. Land, U. Sorger, "Log-likelihood
 *     values and Monte Carlo simulation — some fundamental results",
 *     Int. Symp. on Turbo Codes, Brest, 2000); the errors counted against
 *     the transmitted bits are kept beside it as a check;
 *   - the bit-wise a-posteriori probabilities of the labels, whose
 *     −log2 P(b_true | y) summed over the bits estimates Σ_b H(B_b | Y),
 *     so that H(X) − that is the GMI of a bit-metric decoder fed by the
 *     detector's a-posteriori LLRs (G. Alvarado, E. Agrell, D. Lavery,
 *     R. Killey, P. Bayvel, "Replacing the soft-decision FEC limit
 *     paradigm in the design of optical communication systems", J.
 *     Lightwave Technol. 33(20), 2015; the NGMI follows in the design
 *     stage).
 *
 * Storage: the forward messages are kept only every C ≈ √n steps and
 * recomputed segment by segment during the backward pass (checkpointing:
 * memory O(√n·S), work three passes of the recursion), so the largest
 * trellis fits in a few megabytes per batch. */
#include "capacity/isi.h"
#include "core/internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static unsigned popcount(size_t v)
{
    unsigned c = 0;
    for (; v; v &= v - 1)
        c++;
    return c;
}

/* The step weights w[t] = p(x_t)·p(y_k | t), up to a common factor. */
static void weights(const qc_isi_channel *ch, const double *lik, const qc_isi_trace *tr,
                    size_t k, int unquantized, double *w)
{
    const size_t T = ch->T;
    if (!unquantized) {
        memcpy(w, lik + (size_t)tr->cell[k] * T, T * sizeof *w);
        return;
    }
    const double y = tr->y[k];
    double emax = -INFINITY;
    for (size_t j = 0; j < T; j++) {
        const double d = (y - ch->mean[j]) * ch->inv_sd[j];
        const double e = ch->log_weight[j] - 0.5 * d * d;
        w[j] = e;
        emax = e > emax ? e : emax;
    }
    for (size_t j = 0; j < T; j++)
        w[j] -= emax;
    qc_exp_array(w, w, T);
}

/* The windows' posteriors up to a factor, gam[t] = α(t / M)·w(t)·β(t mod S)
 * for t < T = M·S; returns their sum, added in the order of t. With S a
 * multiple of M (two taps or more), t = hi·S + u·M + x has t / M =
 * hi·S/M + u and t mod S = u·M + x, so no index is divided. */
static double window_posterior(const double *al, const double *w, const double *beta,
                               size_t S, size_t M, double *gam)
{
    double z = 0.0;
    if (S % M != 0) {
        for (size_t t = 0; t < M * S; t++) {
            gam[t] = al[t / M] * w[t] * beta[t % S];
            z += gam[t];
        }
        return z;
    }
    for (size_t hi = 0, t = 0; hi < M; hi++) {
        const double *ah = al + hi * (S / M);
        for (size_t u = 0; u < S / M; u++)
            for (size_t x = 0; x < M; x++, t++) {
                gam[t] = ah[u] * w[t] * beta[u * M + x];
                z += gam[t];
            }
    }
    return z;
}

/* β_k(s) ∝ Σ_{t: t / M = s} w_k(t)·β_{k+1}(t mod S), unnormalized, the
 * terms of each s added in the order of t (indices as above). */
static void backward_step(const double *w, const double *beta, size_t S, size_t M,
                          double *next)
{
    for (size_t s = 0; s < S; s++)
        next[s] = 0.0;
    if (S % M != 0) {
        for (size_t t = 0; t < M * S; t++)
            next[t / M] += w[t] * beta[t % S];
        return;
    }
    for (size_t hi = 0, t = 0; hi < M; hi++) {
        double *nh = next + hi * (S / M);
        for (size_t u = 0; u < S / M; u++)
            for (size_t x = 0; x < M; x++, t++)
                nh[u] += w[t] * beta[u * M + x];
    }
}

int qc_isi_bcjr(const qc_isi_channel *ch, const double *lik, const qc_isi_trace *tr,
                const size_t *labels, unsigned nbits, int unquantized, qc_isi_detection *out)
{
    const size_t S = ch->S, T = ch->T, M = ch->M, n = tr->n;
    size_t C = 1;
    while (C * C < n)
        C++;
    const size_t ncp = (n + C - 1) / C;
    memset(out, 0, sizeof *out);
    double *cp = qc_malloc_array(ncp * S, sizeof *cp);
    double *aseg = qc_malloc_array(C * S, sizeof *aseg);
    double *wseg = qc_malloc_array(C * T, sizeof *wseg);
    double *scratch = qc_malloc_array(3 * S + T + M, sizeof *scratch);
    int rc = 0;
    if (!cp || !aseg || !wseg || !scratch) {
        rc = -1;
        goto done;
    }
    double *a = scratch, *next = scratch + S, *beta = scratch + 2 * S;
    double *gam = scratch + 3 * S, *px = scratch + 3 * S + T;

    /* forward, keeping every C-th message */
    memcpy(a, ch->state_prior, S * sizeof *a);
    for (size_t k = 0; k < n; k++) {
        if (k % C == 0)
            memcpy(cp + (k / C) * S, a, S * sizeof *a);
        weights(ch, lik, tr, k, unquantized, wseg);
        if (!(qc_isi_forward_step(ch, a, wseg, next) > 0.0)) {
            rc = 1;
            goto done;
        }
        memcpy(a, next, S * sizeof *a);
    }

    /* backward, segment by segment: the batch's end state is unknown */
    for (size_t s = 0; s < S; s++)
        beta[s] = 1.0 / (double)S;
    double soft = 0.0, counted = 0.0, loss = 0.0;
    for (size_t j = ncp; j-- > 0;) {
        const size_t k0 = j * C, k1 = k0 + C < n ? k0 + C : n;
        memcpy(aseg, cp + j * S, S * sizeof *aseg);
        for (size_t k = k0; k < k1; k++) {
            double *w = wseg + (k - k0) * T;
            weights(ch, lik, tr, k, unquantized, w);
            if (k + 1 < k1 &&
                !(qc_isi_forward_step(ch, aseg + (k - k0) * S, w, aseg + (k - k0 + 1) * S) >
                  0.0)) {
                rc = 1;
                goto done;
            }
        }
        for (size_t k = k1; k-- > k0;) {
            const double *al = aseg + (k - k0) * S, *w = wseg + (k - k0) * T;
            if (k >= tr->first && k < tr->first + tr->count) {
                /* posterior of the window, then of the symbol x_k */
                const double z = window_posterior(al, w, beta, S, M, gam);
                if (!(z > 0.0) || !isfinite(z)) {
                    rc = 1;
                    goto done;
                }
                for (size_t x = 0; x < M; x++)
                    px[x] = 0.0;
                for (size_t t = 0, x = 0; t < T; t++, x = x + 1 == M ? 0 : x + 1)
                    px[x] += gam[t] / z; /* x = t mod M */
                size_t xhat = 0;
                for (size_t x = 1; x < M; x++)
                    if (px[x] > px[xhat])
                        xhat = x;
                const size_t xt = tr->window[k] % M;
                for (size_t x = 0; x < M; x++)
                    if (x != xhat)
                        soft += px[x] * popcount(labels[x] ^ labels[xhat]);
                counted += popcount(labels[xt] ^ labels[xhat]);
                for (unsigned b = 0; b < nbits; b++) {
                    const size_t bt = (labels[xt] >> b) & 1u;
                    double p_true = 0.0, p_wrong = 0.0;
                    for (size_t x = 0; x < M; x++) {
                        if (((labels[x] >> b) & 1u) == bt)
                            p_true += px[x];
                        else
                            p_wrong += px[x];
                    }
                    if (!(p_true > 0.0)) {
                        rc = 1;
                        goto done;
                    }
                    loss += qc_log1p_ratio(p_wrong, p_true);
                }
            }
            /* β_k(s) ∝ Σ_{t: t / M = s} w_k(t)·β_{k+1}(t mod S) */
            backward_step(w, beta, S, M, next);
            double sum = 0.0;
            for (size_t s = 0; s < S; s++)
                sum += next[s];
            if (!(sum > 0.0) || !isfinite(sum)) {
                rc = 1;
                goto done;
            }
            for (size_t s = 0; s < S; s++)
                beta[s] = next[s] / sum;
        }
    }
    const double cnt = (double)tr->count;
    out->ber = soft / (cnt * (double)nbits);
    out->ber_counted = counted / (cnt * (double)nbits);
    out->bit_entropy_bits = loss / cnt / QC_ISI_LN2;
done:
    free(cp);
    free(aseg);
    free(wseg);
    free(scratch);
    return rc;
}

/* rate_limits.c — the last step of assembling a design result: the rates
 * are held to what information theory allows, and the SNR penalty is
 * computed only where it means something.
 *
 *  - I(X;Y) ≤ H(X) ≤ log2 M for M levels, and I(X;Y_q) ≤ log2 K for K
 *    cells (Cover & Thomas, Elements of Information Theory, 2nd ed.,
 *    2006, Thm 2.6.4, applied to X and to Y_q);
 *  - I(X;Y_q) ≤ I(X;Y), the data-processing inequality (ibid., Thm 2.8.1);
 *    for the BICM GMI the same holds bit by bit.
 *
 * A rate computed beyond one of these limits by no more than its stated
 * error (the quadrature error estimate of the unquantized rate, rounding
 * of the finite sums for the quantized one) is set to the limit and the
 * result says which limit it was; beyond its error it is a numerical
 * failure (QC_ENUMERIC), never a reported number.
 *
 * The SNR penalty (snr.c) solves I_unquantized(snr − Δ) = rate. Where the
 * rate is within tolerance of its ceiling or of the unquantized rate, the
 * unquantized curve is flat there or the loss is below what the numbers
 * resolve, and Δ is not determined: it is left undefined with the reason. */
#include "design/design_internal.h"

#include <math.h>

/* Rounding of the finite sums behind the quantized rate (bits): a few
 * thousand terms of magnitude ≤ log2 K ≤ 16 at double precision. */
#define RATE_ROUNDING_BITS 1e-12

static const char *const limit_names[QC_LIMIT_COUNT] = {
    [QC_LIMIT_NONE] = NULL,
    [QC_LIMIT_LEVELS] = "log2 levels",
    [QC_LIMIT_INPUT_ENTROPY] = "input entropy",
    [QC_LIMIT_CELLS] = "log2 cells",
    [QC_LIMIT_QUANTIZED_RATE] = "quantized rate",
};

const char *qc_rate_limit_name(qc_rate_limit limit)
{
    return (unsigned)limit < QC_LIMIT_COUNT ? limit_names[limit] : NULL;
}

static const char *const penalty_texts[QC_PENALTY_COUNT] = {
    [QC_PENALTY_DEFINED] = NULL,
    [QC_PENALTY_SATURATED] = "rate saturated (within tolerance of its ceiling)",
    [QC_PENALTY_NO_LOSS] = "no loss (rate within tolerance of the unquantized rate)",
    [QC_PENALTY_NO_SNR] = "the model defines no SNR",
    [QC_PENALTY_NOISELESS] = "noiseless limit",
    [QC_PENALTY_SNR_INFINITE] = "operating SNR not finite",
    [QC_PENALTY_ZERO_RATE] = "rate is 0",
    [QC_PENALTY_GMI] = "defined for the mutual information, not the GMI",
    [QC_PENALTY_NO_CROSSING] = "unquantized rate stays above the rate over 400 dB",
    [QC_PENALTY_SKIPPED] = "not computed",
    [QC_PENALTY_PPM] = "not defined for pulse-position modulation",
    [QC_PENALTY_PLANE] = "not computed for a two-dimensional receiver (see loss_bits)",
};

const char *qc_penalty_note_text(qc_penalty_note note)
{
    return (unsigned)note < QC_PENALTY_COUNT ? penalty_texts[note] : NULL;
}

static double entropy_bits(const double *p, size_t n)
{
    double h = 0.0;
    for (size_t i = 0; i < n; i++)
        if (p[i] > 0.0)
            h -= p[i] * log2(p[i]);
    return h;
}

/* Hold *value to `cap`: within `slack` above it, set it to the cap and
 * record `name` in *flag; further above, QC_ENUMERIC naming `what`. */
static qc_status hold(double *value, double cap, double slack, qc_rate_limit name,
                      qc_rate_limit *flag, const char *what)
{
    if (!(*value > cap))
        return QC_OK;
    if (*value - cap > slack)
        return qc_fail(QC_ENUMERIC,
                       "%s %.17g bit exceeds its limit (%s) %.17g bit by more than its "
                       "stated error %.3g bit",
                       what, *value, qc_rate_limit_name(name), cap, slack);
    *value = cap;
    *flag = name;
    return QC_OK;
}

static qc_penalty_note penalty(const qc_design_request *req, qc_design_result *r,
                               double ceiling, qc_status *st)
{
    *st = QC_OK;
    if (r->objective == QC_OBJECTIVE_GMI)
        return QC_PENALTY_GMI;
    if (req->numerics.skip_snr_penalty)
        return QC_PENALTY_SKIPPED;
    const qc_model_type *type = qc_model_get_type(req->channel.model);
    if (!type->snr || !type->scale_snr)
        return QC_PENALTY_NO_SNR;
    if (!(r->rate_bits > 0.0))
        return QC_PENALTY_ZERO_RATE;
    if (r->noiseless_limit)
        return QC_PENALTY_NOISELESS;
    if (!isfinite(r->snr_db))
        return QC_PENALTY_SNR_INFINITE;
    const double tol = r->tol_bits + r->unquantized_err_bits;
    if (ceiling - r->rate_bits <= tol)
        return QC_PENALTY_SATURATED;
    if (r->unquantized_bits - r->rate_bits <= tol)
        return QC_PENALTY_NO_LOSS;
    *st = qc_snr_penalty_db_memo(req->numerics.unquantized_memo, req->channel.model, r->levels,
                                 r->input, r->nlevels, r->rate_bits, &r->snr_penalty_db);
    if (*st != QC_OK)
        return QC_PENALTY_DEFINED;
    return isfinite(r->snr_penalty_db) ? QC_PENALTY_DEFINED : QC_PENALTY_NO_CROSSING;
}

qc_status qc_design_settle(const qc_design_request *req, qc_design_result *r)
{
    const int gmi = r->objective == QC_OBJECTIVE_GMI;
    const double log2_levels = log2((double)r->nlevels);
    const double log2_cells = log2((double)r->cells);
    /* Ceiling of the unquantized rate: H(X) ≤ log2 M. A BICM GMI sums
     * I(B_k;Y) ≤ H(B_k) ≤ 1 over log2 M label bits. */
    double cap_u = log2_levels;
    qc_rate_limit lim_u = QC_LIMIT_LEVELS;
    const double h = entropy_bits(r->input, r->nlevels);
    if (!gmi && h < log2_levels - RATE_ROUNDING_BITS) {
        cap_u = h;
        lim_u = QC_LIMIT_INPUT_ENTROPY;
    }
    /* Ceiling of the quantized rate: also log2 K (MI only: the GMI's bit
     * terms each stay below H(Y_q), not their sum). */
    double cap_q = cap_u;
    qc_rate_limit lim_q = lim_u;
    if (!gmi && log2_cells < cap_q) {
        cap_q = log2_cells;
        lim_q = QC_LIMIT_CELLS;
    }
    r->rate_limited_by = QC_LIMIT_NONE;
    r->unquantized_limited_by = QC_LIMIT_NONE;
    const double slack_u = r->unquantized_err_bits + RATE_ROUNDING_BITS;
    qc_status st = hold(&r->unquantized_bits, cap_u, slack_u, lim_u,
                        &r->unquantized_limited_by, "the unquantized rate");
    if (st == QC_OK)
        st = hold(&r->rate_bits, cap_q, RATE_ROUNDING_BITS, lim_q, &r->rate_limited_by,
                  "the quantized rate");
    /* the MI and GMI of the law on the quantized channel, from the same
     * finite sums: held to the same limits, within rounding */
    qc_rate_limit unused = QC_LIMIT_NONE;
    if (st == QC_OK)
        st = hold(&r->mi_bits, fmin(fmin(h, log2_levels), log2_cells), RATE_ROUNDING_BITS,
                  QC_LIMIT_CELLS, &unused,
                  "the MI of the law");
    if (st == QC_OK && isfinite(r->gmi_bits))
        st = hold(&r->gmi_bits, log2_levels, RATE_ROUNDING_BITS, QC_LIMIT_LEVELS, &unused,
                  "the GMI");
    if (st != QC_OK)
        return st;
    /* Data processing: the unquantized rate bounds the quantized one. */
    if (r->rate_bits > r->unquantized_bits) {
        if (r->rate_bits - r->unquantized_bits > slack_u + RATE_ROUNDING_BITS)
            return qc_fail(QC_ENUMERIC,
                           "the quantized rate %.17g bit exceeds the unquantized rate "
                           "%.17g bit by more than the latter's error estimate %.3g bit",
                           r->rate_bits, r->unquantized_bits, slack_u);
        r->unquantized_bits = r->rate_bits;
        r->unquantized_limited_by = QC_LIMIT_QUANTIZED_RATE;
    }
    /* An upper bound above what any law reaches: the limit is a tighter
     * bound, and still one. */
    double cap_any = gmi ? log2_levels : fmin(log2_levels, log2_cells);
    if (r->upper_bound_bits > cap_any)
        r->upper_bound_bits = cap_any;
    if (r->upper_bound_bits < r->rate_bits)
        r->upper_bound_bits = r->rate_bits;
    r->loss_bits = r->unquantized_bits - r->rate_bits;

    r->snr_penalty_db = NAN;
    r->snr_penalty_note = penalty(req, r, cap_u, &st);
    return st;
}

/* quantcap/quantizer.h — the discretizer (model + levels + thresholds ->
 * transition matrix), the unquantized reference and the quantizer
 * building blocks. Part of the public interface of libquantcap (include
 * <quantcap.h> for all of it). SPDX-License-Identifier: GPL-3.0-or-later
 * */
#ifndef QUANTCAP_QUANTIZER_H
#define QUANTCAP_QUANTIZER_H

#include <stddef.h>

#include "quantcap/model.h"
#include "quantcap/dmc.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Check thresholds: finite, strictly increasing (and integers for
 * count outputs). Reads only. QC_EINVAL naming the offending threshold
 * (1-based) and its value. */
QC_API qc_status qc_thresholds_check(const qc_model *model, const double *thresholds,
                              size_t nthresholds);

/* Transition matrix of levels → (nthresholds + 1) cells. Each cell
 * probability is a difference taken on the tail side where it does not
 * cancel, so cells far in a tail stay accurate; entries are never
 * negative or NaN, and each row is renormalized only if it is within
 * QC_DMC_ROW_TOL of 1 (otherwise QC_ENUMERIC, naming the level). Bad
 * levels or thresholds are QC_EINVAL as in qc_model_check_levels and
 * qc_thresholds_check; QC_ENOMEM. On failure *out is NULL. */
QC_API qc_status qc_discretize(const qc_model *model, const double *levels,
                        size_t nlevels, const double *thresholds,
                        size_t nthresholds, qc_dmc **out);

/* The same into a preallocated matrix, for callers that rate many
 * threshold vectors on one channel: cell probabilities of `levels` for n
 * sorted thresholds into `d` (nlevels × (n + 1)); lo and hi are scratch of
 * length n. The thresholds and levels are not checked again (the caller
 * has passed them through qc_thresholds_check and qc_model_check_levels);
 * otherwise the same accuracy and failures as qc_discretize. On failure
 * the contents of d, lo and hi are unspecified. */
QC_API qc_status qc_discretize_into(const qc_model *model, const double *levels,
                                    size_t nlevels, const double *t, size_t n,
                                    double *lo, double *hi, qc_dmc *d);

/* Mutual information with the unquantized output (continuous density or
 * ideal count resolution) for the given levels and input law, in nats.
 * One adaptive quadrature (GSL QAGS) of the level-summed integrand over
 * the union of the level supports, cut into panels (linear in the
 * levels); counts: sums. The absolute error estimate (quadrature plus the
 * bound on what the supports leave out) is returned in *abserr_nats (may
 * be NULL). QC_EINVAL for bad
 * levels or a law that is not a law, QC_ENUMERIC when the quadrature
 * fails or the rate is not finite, QC_ENOMEM; on failure *mi_nats and
 * *abserr_nats are unchanged. */
QC_API qc_status qc_unquantized_mi(const qc_model *model, const double *levels,
                            const double *input, size_t nlevels,
                            double *mi_nats, double *abserr_nats);

/* The same, and *noiseless (may be NULL) = 1 when some level's output is
 * narrower than the resolution of doubles and was taken in the noiseless
 * limit: a point mass, distinguishable from every other level. Levels
 * whose output support meets no other level's contribute −log p exactly
 * (no quadrature). Fails as qc_unquantized_mi; *noiseless is then
 * unspecified. */
QC_API qc_status qc_unquantized_mi_detail(const qc_model *model, const double *levels,
                                   const double *input, size_t nlevels,
                                   double *mi_nats, double *abserr_nats,
                                   int *noiseless);

/* A store of unquantized rates already computed, for designs that meet
 * the same channel again (a sweep's points at several resolutions, the
 * SNR-penalty searches that walk the same unquantized curve). Keyed by
 * the model type, its parameter values, the levels and the law, bit for
 * bit, so a stored value is the one a new quadrature would give. Models
 * read from a file are not stored. Safe to share between threads. */
typedef struct qc_unquantized_memo qc_unquantized_memo;

#define QC_UNQUANTIZED_MEMO_BYTES ((size_t)32 << 20) /* default budget */

/* A new, empty store that keeps at most budget_bytes of entries (0: the
 * default, QC_UNQUANTIZED_MEMO_BYTES), emptied when full. *out = NULL and
 * QC_ENOMEM on failure. */
QC_API qc_status qc_unquantized_memo_alloc(size_t budget_bytes, qc_unquantized_memo **out);

/* Frees the store; NULL does nothing. */
QC_API void qc_unquantized_memo_free(qc_unquantized_memo *memo);

/* qc_unquantized_mi_detail, looked up in memo first and kept there when
 * computed (memo NULL: computed). Same values, to the last bit, and the
 * same failures (which are not kept). */
QC_API qc_status qc_unquantized_mi_memo(qc_unquantized_memo *memo, const qc_model *model,
                                        const double *levels, const double *input,
                                        size_t nlevels, double *mi_nats, double *abserr_nats,
                                        int *noiseless);

/* The same with the unquantized output (adaptive quadrature, GSL QAGS, or
 * a sum over counts), as qc_unquantized_mi, with the labels of qc_gmi.
 * Fails as qc_unquantized_mi or (labels) as qc_gmi; on failure *gmi_nats
 * and *abserr_nats are unchanged. */
QC_API qc_status qc_unquantized_gmi(const qc_model *model, const double *levels,
                             const double *input, size_t nlevels,
                             const size_t *labels, unsigned nbits,
                             double *gmi_nats, double *abserr_nats);

typedef enum {
    QC_QUANTIZER_UNIFORM = 0, /* uniform cells, full-scale range optimized  */
    QC_QUANTIZER_FIXED,       /* thresholds given by the caller, evaluated  */
    QC_QUANTIZER_LLOYD_MAX,   /* minimum mean-square error (Lloyd, Max)     */
    QC_QUANTIZER_OPTIMAL,     /* MI-optimal: DP on a fine grid + refinement */
    QC_QUANTIZER_CONVERTER,   /* a real converter: qc_converter below       */
    QC_QUANTIZER_COUNT
} qc_quantizer_kind;

#define QC_MAX_BITS 16

/* ---- threshold strategies: one constant table ------------------------- */

/* Per-channel workspace of the strategies: built once for a model, its
 * levels and a number of thresholds, reused for every input law designed
 * for (the optimal strategy's fine grid, the uniform search's rate
 * workspace). One plan per thread. */
typedef struct qc_strategy_plan qc_strategy_plan;

/* Whether an iterative threshold design met its stopping test. */
typedef enum {
    QC_CONVERGENCE_NONE = 0, /* the strategy has no such test               */
    QC_CONVERGED,            /* the test was met                            */
    QC_NOT_CONVERGED         /* the round cap stopped it first              */
} qc_convergence;

/* "converged", "not converged", or NULL for QC_CONVERGENCE_NONE and values
 * out of range. */
QC_API const char *qc_convergence_name(qc_convergence c);

/* What one design reports besides the thresholds. */
typedef struct {
    size_t iterations;      /* uniform: rate evaluations; Lloyd–Max: Lloyd
                               iterations; optimal: refinement iterations */
    double mse;             /* Lloyd–Max: mean-square error; NaN else       */
    qc_convergence convergence; /* Lloyd–Max: converged or stopped by its
                               round cap; QC_CONVERGENCE_NONE else          */
    double residual;        /* Lloyd–Max: largest distance of a threshold
                               from the midpoint of its two reconstruction
                               points (output units); NaN else              */
    double *reconstruction; /* Lloyd–Max: if not NULL, receives the K
                               reconstruction points                       */
} qc_strategy_stats;

typedef struct qc_threshold_strategy {
    const char *name;    /* "uniform", "fixed", "lloyd-max", "optimal"      */
    const char *summary; /* one line                                         */
    qc_quantizer_kind kind;
    int given;           /* 1: the thresholds are given, not designed       */
    int raises_mi;       /* 1: the design for a law r maximizes I(r, t) over
                            its family, so alternating it with the law's
                            capacity never lowers the rate                  */
    /* Thresholds (nthresholds of them, into t) for the law `input`; with
     * warm set, t holds a starting point the strategy may use. */
    qc_status (*design)(qc_strategy_plan *plan, const double *input, int warm, double *t,
                        qc_strategy_stats *stats);
} qc_threshold_strategy;

QC_API extern const qc_threshold_strategy qc_strategy_uniform;
QC_API extern const qc_threshold_strategy qc_strategy_fixed;
QC_API extern const qc_threshold_strategy qc_strategy_lloyd_max;
QC_API extern const qc_threshold_strategy qc_strategy_optimal;
/* The converter's transition levels, referred to the receiver output
 * through its gain and offset (given, like fixed; qc_converter). */
QC_API extern const qc_threshold_strategy qc_strategy_converter;

/* The strategy of a quantizer kind; NULL for values out of range (no
 * message). */
QC_API const qc_threshold_strategy *qc_strategy_of(qc_quantizer_kind kind);
/* Names used on the command line ("uniform", "fixed", "lloyd-max",
 * "optimal"); NULL for values out of range. */
QC_API const char *qc_quantizer_name(qc_quantizer_kind kind);
/* Look a name up; QC_EINVAL naming the unknown word and the choices. On
 * failure *out is unchanged. */
QC_API qc_status qc_quantizer_parse(const char *name, qc_quantizer_kind *out);

/* A plan for `nthresholds` thresholds on `levels` (borrowed: they, the
 * model and `given` must outlive the plan). given: the fixed strategy's
 * thresholds (NULL for the others). fine_cells: the optimal strategy's
 * fine grid (0: automatic, as qc_design_request.numerics.fine_cells). grid_law:
 * the law the fine grid is built for (copied; NULL: the law of the first
 * design). QC_EINVAL when the model or levels are missing or nthresholds
 * is 0; QC_ENOMEM. On failure *out is NULL. */
QC_API qc_status qc_strategy_plan_alloc(const qc_model *model, const double *levels,
                                        size_t nlevels, size_t nthresholds,
                                        const double *given, size_t fine_cells,
                                        const double *grid_law, qc_strategy_plan **out);
/* Release a plan (not what it borrows); NULL does nothing. */
QC_API void qc_strategy_plan_free(qc_strategy_plan *plan);
/* Let the uniform strategy centre its full-scale range among ranges whose
 * rate is within eps_nats of the best (qc_uniform_tidy; one threshold:
 * qc_tidy_thresholds; 0: off, the default; a negative or NaN eps_nats is
 * 0). NULL does nothing. */
QC_API void qc_strategy_plan_tidy(qc_strategy_plan *plan, double eps_nats);
/* Fine-grid cells the optimal strategy used (0 before its first design or
 * for the other strategies, or for a NULL plan). Never fails. */
QC_API size_t qc_strategy_plan_fine_cells(const qc_strategy_plan *plan);
/* Run strategy s on the plan for the law `input` (stats may be NULL). The
 * thresholds come out strictly increasing. Fails as the strategy does
 * (QC_EINVAL naming what is missing, QC_ENUMERIC, QC_ENOMEM); t is then
 * unspecified. */
QC_API qc_status qc_strategy_design(const qc_threshold_strategy *s, qc_strategy_plan *plan,
                                    const double *input, int warm, double *t,
                                    qc_strategy_stats *stats);

/* cells = 2^bits for 1 ≤ bits ≤ QC_MAX_BITS, else QC_EINVAL naming the
 * bits, with *cells unchanged. */
QC_API qc_status qc_cells_from_bits(int bits, size_t *cells);

/* ---- building blocks of the designs -------------------------------- */

/* How qc_dp_quantize searches. */
typedef enum {
    QC_DP_FAST = 0,  /* SMAWK per layer: O(K·N·nx) cell evaluations        */
    QC_DP_PLAIN = 1, /* every split point: O(K·N²·nx)                       */
} qc_dp_method;

/* Merge the ny outputs of `fine`, in their given order, into `cells`
 * contiguous groups maximizing I(X;Y_q) under `input` (dynamic
 * programming: Kurkoski & Yagi, IEEE Trans. IT 60(8), 2014; He, Cai, Song,
 * Mei, IEEE Trans. IT 2021). cuts_out receives cells + 1 indices
 * 0 = c_0 < c_1 < … < c_K = ny; group k holds outputs c_k … c_{k+1} − 1.
 * QC_DP_PLAIN is exact for every channel; QC_DP_FAST is exact when the
 * cell function meets the quadrangle inequality (e.g. binary input with
 * outputs sorted by likelihood ratio, and the ordered outputs of
 * monotone-likelihood-ratio models such as Gaussian or Poisson noise).
 * For binary input sorted by likelihood ratio the result is optimal among
 * all quantizers. mi_nats (may be NULL) receives the merged MI.
 * QC_EINVAL when an argument is missing, cells < 1 or cells > ny, the
 * method is unknown or the law is not a law; QC_ENOMEM. On failure
 * *mi_nats is unchanged and cuts_out is unspecified. */
QC_API qc_status qc_dp_quantize(const qc_dmc *fine, const double *input,
                         size_t cells, qc_dp_method method, size_t *cuts_out,
                         double *mi_nats);

/* ---- equally good thresholds: one reproducible placement (tidy.c) ---- */

/* What the placement below may cost: half the design's tolerance, at
 * most 1e-13 bit (so that the MI-optimal design stays at least as good
 * as the other strategies to rounding). */
#define QC_TIDY_SHARE 0.5
#define QC_TIDY_MAX_BITS 1e-13
#define QC_TIDY_NATS(tol_bits) (fmin(QC_TIDY_SHARE * (tol_bits), QC_TIDY_MAX_BITS) / QC_LOG2E)

/* Among thresholds equally good within eps_nats (t: nt sorted thresholds
 * of a design for law `input`), the reproducible placement of
 * docs/methods.md §4: redundant thresholds removed and re-inserted where
 * they split the most probable cells at their medians, flat essential
 * thresholds centred in their flat interval. The rate of the result is at
 * least the rate of t minus eps_nats, else t is left unchanged (as it is
 * for nt > 4095). QC_EINVAL for bad levels or law, QC_ENOMEM; on failure
 * t is unchanged. */
QC_API qc_status qc_tidy_thresholds(const qc_model *model, const double *levels,
                             const double *input, size_t nlevels, size_t nt,
                             double eps_nats, double *t);

/* The number within tol of x on the coarsest power-of-two grid (0 when
 * |x| ≤ tol): a reproducible representative of an interval's middle.
 * Never fails (x itself when tol is not a positive finite number). */
QC_API double qc_simplest_within(double x, double tol);

/* Thresholds within 64 ulps of the output's scale from 0 or from a
 * level's mean are set to it exactly (continuous outputs; the order is
 * kept); where the levels are their own mirror image (output means and
 * variances) and the thresholds are too, up to 1e-9 of their gaps, they
 * are made exactly symmetric. Never fails; count outputs are left as
 * they are. */
QC_API void qc_snap_thresholds(const qc_model *model, const double *levels, size_t nlevels,
                        size_t nt, double *t);

/* ---- decisions.c: the unquantized MAP decision boundaries ------------- */

/* Where the MAP decision argmax_x law(x) f(y|x) changes, increasing
 * (*out owned by the caller; *nout may be 0). Continuous outputs: where
 * the output is Gaussian given each level (up to 64 levels sent), the
 * crossings of the levels' quadratic scores, else a scan of the support,
 * each change refined by Brent's method; counts: the whole counts at
 * which the decision changes (a threshold there splits y < c from
 * y >= c). */
QC_API qc_status qc_map_boundaries(const qc_model *model, const double *levels, const double *law,
                            size_t n, double **out, size_t *nout);

/* Move the nt thresholds t (increasing) nearest to the nb boundaries b
 * onto them (least total move, order kept; the others stay strictly in
 * order). Returns nb when done, 0 when nothing was moved (more boundaries
 * than thresholds, or counts without room). */
QC_API size_t qc_keep_boundaries(const qc_model *model, const double *b, size_t nb, double *t,
                          size_t nt);


/* Cells a quantizer for count outputs can use: hi − lo + 1 for the union
 * [lo, hi] of the levels' supports (every count that carries probability
 * in its own cell), at most `cells`. Continuous outputs: `cells`. Never
 * fails. */
QC_API size_t qc_cells_usable(const qc_model *model, const double *levels, size_t nlevels,
                       size_t cells);


/* ---- real converters (converter.c) --------------------------------- */

/* How the gain and offset ahead of the converter are set. */
typedef enum {
    QC_GAIN_FIXED = 0, /* as given                                        */
    QC_GAIN_BEST,      /* chosen by the design for its objective (what an
                          ideal AGC would set)                            */
    QC_GAIN_AGC,       /* gain: K times the rms of the receiver output about
                          its mean fills half the full scale; offset: the
                          mean at mid-scale (unless the offset is given)   */
} qc_gain_mode;

/* A converter of 2^N codes (N from the request's cells, a power of two)
 * in the terms of IEEE Std 1241: the receiver output y is amplified,
 * v = gain·y + offset, the converter adds its own input-referred noise
 * and compares v with its 2^N − 1 transition levels. Units of v: those of
 * the full scale (the receiver output's when gain is 1). */
typedef struct qc_converter {
    double full_scale_lo, full_scale_hi; /* full-scale range, lo < hi     */
    double enob;          /* effective bits, <= N (NaN: N, no noise)     */
    double jitter_s;      /* aperture jitter, rms seconds (>= 0)         */
    double signal_freq;   /* frequency of the full-scale sine the jitter
                             is rated at, Hz (> 0 with jitter)           */
    double dnl_lsb;       /* peak random DNL, LSB in [0, 1)              */
    double inl_lsb;       /* peak random INL bow, LSB (>= 0)             */
    unsigned long seed;   /* of the DNL/INL draws                        */
    size_t draws;         /* Monte-Carlo draws of DNL/INL (0 or 1: one)  */
    const double *transitions; /* measured transition levels (NULL: from
                             the full scale, DNL and INL); 2^N − 1 of them */
    size_t ntransitions;
    qc_gain_mode gain_mode;
    double gain;          /* QC_GAIN_FIXED: the gain (> 0)               */
    double agc_k;         /* QC_GAIN_AGC: K (> 0)                        */
    int offset_best;      /* 1: the offset is chosen with the gain (best) */
    double offset;        /* the offset (fixed gain or AGC; NaN with AGC:
                             the mean at mid-scale)                      */
} qc_converter;

/* An ideal converter on [lo, hi]: ENOB = N, no jitter, no DNL/INL,
 * gain 1, offset 0, one draw, seed 1. Never fails. */
QC_API void qc_converter_default(qc_converter *c, double lo, double hi);

/* Check a converter of `bits` nominal bits. QC_EINVAL naming the field
 * and value: full scale of zero width or reversed, ENOB above the
 * nominal bits or not positive, negative jitter, jitter without a signal
 * frequency, DNL of 1 LSB or more (a code of zero width: a missing code),
 * negative INL, a gain or AGC factor not > 0, a transition-level list of
 * the wrong length or not increasing (naming the level). Reads only. */
QC_API qc_status qc_converter_check(const qc_converter *c, unsigned bits);

/* Variance of the converter's own noise at its input (units of the full
 * scale squared), from the ENOB and the jitter, IEEE Std 1241's
 * full-scale sine equivalences: with A the full-scale amplitude (hi −
 * lo)/2, SINAD = 10·log10((A²/2)/P_nad) = 6.02·ENOB + 1.76 dB (exact
 * constants 20·log10 2 and 10·log10 1.5) less the ideal quantization
 * noise Δ²/12 of N bits, plus the jitter noise (A²/2)·(2π f σ_t)². 0 for
 * an ideal converter. The converter must pass qc_converter_check. */
QC_API double qc_converter_noise_var(const qc_converter *c, unsigned bits);

/* SINAD in dB of a full-scale sine for an ENOB (6.02·ENOB + 1.76 with
 * the exact constants) and its inverse. Never fail. */
QC_API double qc_enob_to_sinad_db(double enob);
QC_API double qc_sinad_db_to_enob(double sinad_db);

/* The 2^bits − 1 transition levels (into T, in full-scale units) of draw
 * `draw` (0-based) of the converter: the measured list when it has one;
 * else ideal levels lo + k·Δ, Δ = (hi − lo)/2^bits, with code widths
 * Δ·(1 + d_k), d_k uniform on [−DNL, DNL], plus an INL bow of peak INL
 * (a random mix of sin(πu) and sin(2πu) over the codes), drawn with the
 * GSL Mersenne twister seeded from seed and draw. QC_EINVAL when a draw
 * comes out non-increasing (INL too steep for the DNL, naming the level),
 * QC_ENOMEM; on failure T is unspecified. */
QC_API qc_status qc_converter_transitions(const qc_converter *c, unsigned bits, size_t draw,
                                          double *T);

/* Read a transition-level file: one level per line (a number; blank
 * lines and lines starting with '#' are skipped), strictly increasing.
 * QC_EFORMAT naming the file and line of a word that is not a number or
 * a level not above the one before (QC_EIO: the path). On success *out
 * (owned, free()) holds *n levels; on failure *out is NULL. */
QC_API qc_status qc_converter_transitions_load(const char *path, double **out, size_t *n);
/* The same from text in memory; `name` is used in messages. */
QC_API qc_status qc_converter_transitions_parse(const char *text, size_t len,
                                                const char *name, double **out, size_t *n);

#ifdef __cplusplus
}
#endif

#endif /* QUANTCAP_QUANTIZER_H */

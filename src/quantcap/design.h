/* quantcap/design.h — threshold, input-law and level design for a model
 * and an alphabet. Part of the public interface of libquantcap (include
 * <quantcap.h> for all of it). SPDX-License-Identifier: GPL-3.0-or-later
 * */
#ifndef QUANTCAP_DESIGN_H
#define QUANTCAP_DESIGN_H

#include <stddef.h>
#include <stdint.h>

#include "quantcap/quantizer.h"
#include "quantcap/capacity.h"
#include "quantcap/alphabet.h"
#include "quantcap/info.h"
#include "quantcap/figures.h"
#include "quantcap/frontend.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef enum {
    QC_OBJECTIVE_MI = 0,       /* I(X;Y_q) with the given (or uniform) law  */
    QC_OBJECTIVE_CAPACITY = 1, /* capacity of the quantized channel         */
    QC_OBJECTIVE_GMI = 2,      /* BICM GMI with Gray labels, given law      */
    QC_OBJECTIVE_COUNT
} qc_objective;

/* What a reported rate was set to when it came out beyond what is
 * possible by no more than its stated error (docs/methods.md, "Limits
 * on the reported rates"). */
typedef enum {
    QC_LIMIT_NONE = 0,
    QC_LIMIT_LEVELS,         /* log2 of the number of levels            */
    QC_LIMIT_INPUT_ENTROPY,  /* entropy of the input law                */
    QC_LIMIT_CELLS,          /* log2 of the number of quantizer cells   */
    QC_LIMIT_QUANTIZED_RATE, /* the unquantized rate, raised to the
                                quantized one (data processing)         */
    QC_LIMIT_COUNT
} qc_rate_limit;

/* "log2 levels", "input entropy", "log2 cells", "quantized rate"; NULL
 * for QC_LIMIT_NONE and values out of range (no message). */
QC_API const char *qc_rate_limit_name(qc_rate_limit limit);

/* Why the SNR penalty is undefined (NaN). */
typedef enum {
    QC_PENALTY_DEFINED = 0,
    QC_PENALTY_SATURATED,    /* the rate is within tolerance of its ceiling
                                (log2 levels, input entropy): the
                                unquantized rate curve is flat there     */
    QC_PENALTY_NO_LOSS,      /* the rate is within tolerance of the
                                unquantized rate                         */
    QC_PENALTY_NO_SNR,       /* the model defines no SNR                 */
    QC_PENALTY_NOISELESS,    /* the unquantized rate is the noiseless limit */
    QC_PENALTY_SNR_INFINITE, /* operating SNR beyond the range of doubles */
    QC_PENALTY_ZERO_RATE,    /* the rate is 0                            */
    QC_PENALTY_GMI,          /* the penalty is an MI notion              */
    QC_PENALTY_NO_CROSSING,  /* the unquantized rate does not fall to the
                                rate within the searched SNR range       */
    QC_PENALTY_SKIPPED,      /* the request asked not to compute it      */
    QC_PENALTY_PPM,          /* pulse-position modulation: no SNR curve  */
    QC_PENALTY_PLANE,        /* a two-dimensional constellation through an
                                I/Q or polar receiver: the loss in bits
                                is reported instead                      */
    QC_PENALTY_COUNT
} qc_penalty_note;

/* A phrase saying why (e.g. "rate saturated at its ceiling"); NULL for
 * QC_PENALTY_DEFINED and values out of range (no message). */
QC_API const char *qc_penalty_note_text(qc_penalty_note note);

/* Names used on the command line: "mi", "capacity", "gmi"; NULL for values
 * out of range (no message). The quantizers' names come with the strategy
 * table (quantcap/quantizer.h). */
QC_API const char *qc_objective_name(qc_objective objective);

/* Look a name up; QC_EINVAL naming the unknown word and the choices. On
 * failure *out is unchanged. */
QC_API qc_status qc_objective_parse(const char *name, qc_objective *out);

/* A design request in four parts: the channel (what is sent and how the
 * receiver sees it), the quantizer (how its output is cut into cells),
 * the input (what is maximized and under which law and constraints) and
 * the numerics (tolerances, grids, finite blocklength, progress). Start
 * from qc_design_request_default and set what you need, e.g.
 * req.channel.model, req.channel.levels, req.quantizer.cells. */

/* The channel. */
typedef struct {
    const qc_model *model;       /* noise model (required)                   */
    const double *levels;        /* nlevels input levels (required)          */
    size_t nlevels;
    unsigned dimensions;         /* 0 or 1: real levels; 2: square QAM, the
                                    levels used on each quadrature with the
                                    same thresholds; rates per complex
                                    symbol (input.costs/budget then apply to
                                    one quadrature, input.constraints to the
                                    symbol; src/alphabet, docs/alphabets.md) */
    /* Units of the levels and of the receiver output for reports (NULL:
     * the model type's level_unit / output_unit), e.g. "A" when the
     * levels are photocurrents from the physical front end. */
    const char *level_unit;
    const char *output_unit;
    /* The link's signalling, for the figures in the trade's units
     * (src/design/figures.c); zero = off. */
    double symbol_rate;          /* baud (> 0): rates in Gb/s; 0: none      */
    unsigned polarizations;      /* 1 or 2; 0: 2 for QAM (dual-polarization
                                    coherent), 1 for real alphabets (the
                                    settings give 2 with osnr-db, as the
                                    OSNR conversion assumes)               */
    /* Pulse-position modulation: M ≥ 2 slots per symbol, one pulsed
     * (levels = {empty-slot level, pulsed-slot level} of an intensity
     * model; the quantizer cuts each slot's output; rates per symbol,
     * uniform law; src/design/ppm_design.c). 0: no PPM. */
    size_t ppm_slots;
    /* The amplified fibre link that set the SNR, for reports (NULL: none). */
    const qc_fibre_link_result *fibre_link;
    /* The unamplified intensity link that set the received power, for
     * reports (NULL: none). */
    const qc_intensity_link_result *intensity_link;
    /* A two-dimensional constellation through a coherent receiver (the
     * I/Q pair or the polar quantizer; quantcap/iq.h, src/design/
     * iq_entry.c); NULL: none. levels, nlevels and dimensions are then
     * unused; the model must be additive Gaussian with a 'sigma' (the
     * noise per quadrature). */
    const struct qc_design_iq *iq;
} qc_design_channel;

/* The quantizer. */
typedef struct {
    qc_quantizer_kind kind;      /* threshold strategy (default optimal)     */
    size_t cells;                /* K output cells, 2..2^QC_MAX_BITS; 0 with
                                    QC_QUANTIZER_FIXED: nthresholds + 1.
                                    Count outputs use at most one cell per
                                    count that carries probability (the
                                    result's cells_used)                    */
    const double *thresholds;    /* QC_QUANTIZER_FIXED: K − 1 thresholds,
                                    strictly increasing (integers ≥ 1 for
                                    count outputs); ignored otherwise      */
    size_t nthresholds;          /* their number; must equal K − 1         */
    int keep_decisions;          /* 1: the optimal strategy's thresholds
                                    nearest to the unquantized MAP decision
                                    boundaries are moved onto them, so that
                                    hard decisions lose nothing when there
                                    are at least as many cells as decision
                                    regions (MI and GMI objectives; the
                                    rate is that of the moved thresholds).
                                    qc_require sets it for BER targets   */
    const struct qc_converter *converter; /* QC_QUANTIZER_CONVERTER: the
                                    converter (quantcap/quantizer.h; cells
                                    2^N); with another kind, `design
                                    --compare` adds it to the comparison */
} qc_design_quantizer;

/* The input: the objective, the input law and what constrains it. */
typedef struct {
    qc_objective objective;
    /* MI objective: the input law (NULL: uniform). Capacity objective:
     * the engine's starting law (NULL: uniform). Must sum to 1. */
    const double *probabilities;
    /* Capacity objective only: an average-cost constraint for the engine. */
    const double *costs;         /* per-level cost (NULL: no constraint)    */
    double budget;               /* Σ r(x)·costs[x] ≤ budget               */
    const struct qc_constraints *constraints; /* peak, power, mean; NULL:
                                    none (not together with costs)          */
    int optimize_levels;         /* 1: move the levels to maximize the
                                    objective (Nelder–Mead, several starts,
                                    thresholds re-designed at each step)   */
    size_t level_starts;         /* starts of that search; 0: 3             */
    const qc_fec *fec;           /* a code to close the link with (figures:
                                    closes, margin, net rate); NULL: none.
                                    A hard-decision code makes the optimal
                                    quantizer keep the MAP decision
                                    boundaries (as keep_decisions)         */
    /* Probabilistic shaping (src/design/shaping.c; NULL: none): a
     * Maxwell–Boltzmann law on the levels, with the levels scaled so that
     * the shaped law keeps the average power of the uniform law on the
     * given levels (so the model's SNR is that of the uniform law). Model
     * gauss only; objective mi or gmi; not with probabilities, costs,
     * constraints or optimize_levels. */
    const qc_shaping *shaping;
} qc_design_input;

/* The numerics. */
typedef struct {
    double tol_bits;             /* engine gap and joint-design tolerance;
                                    0: 1e-9                                 */
    size_t fine_cells;           /* QC_QUANTIZER_OPTIMAL: grid cells N for
                                    the dynamic programme (N ≥ K); 0:
                                    automatic (continuous outputs:
                                    max(2K, c·U) cells of equal width in
                                    the variance-stabilizing coordinate,
                                    U the output range in local noise
                                    scales, c = min(4, max(2, K/4)), see
                                    docs/methods.md; counts:
                                    max(16K, 4096)), reduced so that
                                    K·N ≤ 2^22, never below K. Count
                                    outputs use every count of the support
                                    when it has at most max(N, 65536)      */
    int skip_snr_penalty;        /* 1: leave snr_penalty_db NaN (saves the
                                    root search on the unquantized curve)   */
    size_t blocklength;          /* n > 0: normal approximation at n        */
    double error_rate;           /* block error probability ε in (0, 1),
                                    required with blocklength               */
    /* Progress of a long design (NULL: none): called now and then from
     * the calling thread with the work units done out of an estimated
     * total (0 < done ≤ total; done jumps ahead when a stage stops early,
     * and reaches total when the design is complete). The library never
     * prints: showing it is the caller's business. Used by the capacity
     * objective (the alternations of law and thresholds) and by the level
     * search (its designs); other designs are quick and report nothing. */
    void (*progress)(void *user, size_t done, size_t total);
    void *progress_user;
    /* Unquantized rates already computed, shared by the designs of a run
     * (a sweep's points): the reference and the SNR-penalty search look
     * there first (qc_unquantized_mi_memo). NULL: computed each time. */
    qc_unquantized_memo *unquantized_memo;
} qc_design_numerics;

/* A channel with memory (quantcap/memory.h): the received sample is
 * Σ_i taps[i]·x_{k−i} + noise of the model at that noiseless output. The
 * design is made for the memoryless channel first (its rates stay in the
 * result as the link without interference); then the information rates
 * of the channel with memory are estimated by simulation, and a uniform
 * quantizer's full scale is re-optimized for them. ntaps = 0: memoryless. */
typedef struct {
    const double *taps;          /* h_0..h_L (real parts when coherent)      */
    size_t ntaps;                /* 0: no memory                             */
    size_t symbols;              /* simulated symbols; 0: QC_DESIGN_MEMORY_SYMBOLS */
    uint64_t seed;               /* the simulation's seed                    */
    /* The largest half-width of the final information rate's 95 %
     * interval (bit/symbol; 0: none): the final rates are simulated again
     * on more symbols (the interval of batch means narrows as 1/√n) until
     * the quantized rate's interval is within it, or the design fails
     * naming the symbols it would need beyond QC_DESIGN_MEMORY_MAX_SYMBOLS.
     * The threshold search itself runs on `symbols`. */
    double rate_ci_bits;
    /* Coherent detection (1): the received sample is complex, y_k =
     * Σ_i h_i·x_{k−i} + circular complex Gaussian noise of the model on
     * each quadrature, and the product quantizer cuts I and Q with the
     * same thresholds. The symbols are QAM (channel.dimensions = 2) or
     * the real levels on the in-phase quadrature. 0: one real output. */
    int coherent;
    const double *taps_imag;     /* imaginary parts (NULL: real; coherent only) */
    double truncated_energy;     /* a coherent response's energy outside the
                                    taps, echoed in the result (NaN: none)  */
    /* The figures the final simulation runs (QC_ISI_FIG_* bits of
     * quantcap/memory.h; 0: all of them): a search that reads one figure
     * of each design (the detector's BER, say) asks for that alone, and
     * the result's other simulated figures are NaN. What is run is bit
     * for bit what a run of them all gives (one sequence is drawn). */
    unsigned figures;
} qc_design_memory;

#define QC_DESIGN_MEMORY_SYMBOLS ((size_t)200000)
/* The most symbols an interval target (rate_ci_bits) may ask for. */
#define QC_DESIGN_MEMORY_MAX_SYMBOLS ((size_t)1 << 30)

typedef struct {
    qc_design_channel channel;
    qc_design_quantizer quantizer;
    qc_design_input input;
    qc_design_numerics numerics;
    qc_design_memory memory;
} qc_design_request;

/* Fill a request with defaults: no channel, MI objective, the optimal
 * quantizer, cells 0 (must be set), tol 1e-9, automatic fine grid; every
 * other field zero or NULL. Overwrites the whole request; never fails. */
QC_API void qc_design_request_default(qc_design_request *req);

typedef struct {
    qc_objective objective;      /* echo of the request                      */
    qc_quantizer_kind quantizer;
    size_t cells;                /* K                                        */
    size_t cells_used;           /* cells the quantizer has: K, or fewer for
                                    count outputs whose counts that carry
                                    probability are fewer than K (each then
                                    has its own cell; nthresholds =
                                    cells_used − 1)                         */
    double rate_bits;            /* the objective's value (capacity: the
                                    engine's certified lower bound)        */
    double upper_bound_bits;     /* certified upper bound on the objective
                                    for these thresholds (MI: = rate, exact
                                    up to rounding)                        */
    double unquantized_bits;     /* same levels and input law (capacity: the
                                    quantized channel's optimal law), no
                                    quantizer                              */
    double unquantized_err_bits; /* quadrature error estimate of the above   */
    double loss_bits;            /* unquantized − rate, ≥ 0                  */
    qc_rate_limit rate_limited_by;        /* NONE, or the ceiling (levels,
                                    input entropy, cells) the rate exceeded
                                    within its error and was set to        */
    qc_rate_limit unquantized_limited_by; /* NONE, or the ceiling (levels,
                                    input entropy) or the quantized rate
                                    the unquantized rate was set to        */
    int noiseless_limit;         /* 1: the unquantized rate is the noiseless
                                    limit (some level's output narrower
                                    than the resolution of doubles)        */
    qc_penalty_note snr_penalty_note; /* why snr_penalty_db is NaN       */
    double tol_bits;             /* tolerance the rate is certified to       */
    size_t iterations;           /* engine iterations (capacity objective)   */
    size_t design_iterations;    /* uniform: objective evaluations; Lloyd–
                                    Max: Lloyd iterations; optimal: gradient
                                    refinement iterations; capacity joint
                                    design: alternations (all starts)      */
    size_t fine_cells;           /* optimal: fine-grid cells used; 0 else    */
    size_t decisions_kept;       /* keep_decisions: MAP decision boundaries
                                    the thresholds now include; 0: none
                                    (not asked, or fewer cells than
                                    decision regions)                      */
    double snr_db;               /* operating SNR by the model's notion;
                                    NaN: the model defines none             */
    double snr_penalty_db;       /* snr_db minus the SNR at which the
                                    unquantized receiver (same levels and
                                    law) reaches rate_bits; NaN: undefined
                                    (snr_penalty_note says why)            */
    double mse;                  /* Lloyd–Max: mean-square error of Y about
                                    its reconstruction points; NaN else    */
    qc_convergence design_convergence; /* Lloyd–Max: QC_CONVERGED when its
                                    conditions hold to tolerance (in every
                                    design of a capacity alternation),
                                    QC_NOT_CONVERGED when the round cap
                                    stopped one; designed 2-D cells:
                                    whether the search settled before its
                                    evaluation cap; QC_CONVERGENCE_NONE
                                    else                                   */
    double design_residual;      /* Lloyd–Max: largest distance of a
                                    threshold from the midpoint of its two
                                    reconstruction points (output units;
                                    the worst over an alternation); read
                                    only when design_convergence is set    */
    double *reconstruction;      /* owned: Lloyd–Max reconstruction points
                                    (K conditional means); NULL else       */
    size_t nthresholds;          /* K − 1                                    */
    double *thresholds;          /* owned                                    */
    size_t nlevels;
    double *levels;              /* owned copy                               */
    double *input;               /* owned: the input law used (nlevels)      */
    qc_dmc *channel;             /* owned: the final transition matrix       */
    /* Alphabet and input design (src/alphabet). With dimensions = 2
     * (QAM) every rate, bound and dispersion here is per complex symbol,
     * while levels, input, thresholds and channel are those of one
     * quadrature. */
    unsigned dimensions;         /* 1 or 2                                   */
    double mi_bits;              /* I(X;Y_q) of the reported law             */
    double gmi_bits;             /* BICM GMI, Gray labels; NaN unless the
                                    number of levels is a power of 2       */
    unsigned label_bits;         /* bits per real dimension (0: no labels)   */
    double dispersion_bits2;     /* V: variance of the information density   */
    size_t blocklength;          /* echo; 0: no normal approximation         */
    double error_rate;
    double rate_at_blocklength_bits; /* rate − √(V/n)Q⁻¹(ε) + log2(n)/(2n);
                                    NaN without blocklength; held within
                                    [0, log2 M + log2(1/(1 − ε))/n], the
                                    note saying so when it was not        */
    const char *rate_at_blocklength_note; /* why the bound was given
                                    instead (a static phrase); NULL: none */
    double shaping_gap_db;       /* SNR distance from ½·log2(1 + snr) at
                                    the same rate per dimension (model
                                    gauss); NaN otherwise                   */
    double average_power;        /* E[x²] of the law (QAM: E|x|²)            */
    double average_level;        /* E[x] of the law                          */
    int levels_optimized;        /* 1: levels are the search's result       */
    size_t level_evaluations;    /* objective evaluations of that search     */
    /* Figures the trade quotes (src/design/figures.c), for every design.
     * Per polarization unless the name says otherwise; NaN: undefined. */
    double symbol_error_rate;    /* MAP hard decision per cell on the law   */
    double pre_fec_ber;          /* through the Gray labels; NaN unless the
                                    levels are a power of 2                 */
    double q_factor_db;          /* 20·log10(√2·erfc⁻¹(2·BER))              */
    double entropy_bits;         /* H(X) of the law per symbol              */
    double ngmi;                 /* 1 − (H(X) − GMI)/m                      */
    double symbol_rate;          /* echo (baud); NaN when not given         */
    unsigned polarizations;      /* used for the two figures below          */
    double rate_gbps;            /* rate × symbol rate × polarizations      */
    double spectral_efficiency;  /* rate × polarizations, bit/s/Hz          */
    double photons_per_symbol;   /* mean detected signal photons per use    */
    double bits_per_photon;      /* rate / photons_per_symbol               */
    double photons_per_bit;      /* its inverse                             */
    int fec_given;               /* 1: the request named a code (fec below) */
    qc_fec fec;                  /* echo of the code                        */
    int fec_closes;              /* the figure meets the code's threshold   */
    double fec_margin;           /* hard: Q-factor dB over the threshold's;
                                    soft: NGMI over the threshold           */
    double net_bits;             /* net bits per symbol after the code, all
                                    polarizations (0: does not close)       */
    double net_rate_gbps;        /* net_bits × symbol rate (0: does not
                                    close; NaN without a symbol rate)       */
    const char *fec_note;        /* NULL, or why the code cannot be judged
                                    (a static phrase): fec_closes is then 0
                                    and the three above NaN (a channel with
                                    memory whose detector figure is
                                    undefined, e.g. a coherent one)        */
    /* Pulse-position modulation (request's ppm_slots ≥ 2; else 0 / NaN).
     * rate_bits, upper_bound_bits and unquantized_bits are then per PPM
     * symbol with the soft receiver (every slot's cell), levels, input,
     * thresholds and channel those of one slot (input: 1 − 1/M, 1/M). */
    size_t ppm_slots;            /* M                                        */
    double rate_per_slot_bits;   /* rate_bits / M                            */
    size_t ppm_evaluations;      /* integrand evaluations of the certified
                                    soft rate                              */
    double hard_rate_bits;       /* hard receiver: one threshold per slot,
                                    erasure unless exactly one slot fires;
                                    its capacity per symbol at hard_threshold */
    double hard_threshold;       /* the threshold maximizing it (a slot
                                    fires when its output ≥ this)           */
    double hard_fire_on;         /* P(the pulsed slot fires)                */
    double hard_fire_off;        /* P(an empty slot fires)                  */
    double hard_erasure;         /* P(erasure: none or several fire)        */
    double hard_error;           /* P(one wrong slot fires alone)           */
    /* The converter (QC_QUANTIZER_CONVERTER; src/design/converter.c): the
     * thresholds above are then its transition levels, in full-scale
     * units, compared with gain·y + offset of the receiver output y, and
     * the rates are those of the first draw of its DNL/INL. */
    int converter;               /* 1: the fields below are set             */
    unsigned converter_bits;     /* nominal bits N                          */
    double enob;                 /* effective bits used (N: ideal)          */
    double sinad_db;             /* 6.02·ENOB + 1.76 (exact constants)      */
    double gain, offset;         /* as used (chosen: best, agc)             */
    double converter_noise_rms;  /* own noise at the converter input, full-
                                    scale units (ENOB and jitter)          */
    size_t draws;                /* DNL/INL draws rated (1: no spread)      */
    double draws_mean_bits;      /* mean rate over the draws               */
    double draws_sd_bits;        /* their sample standard deviation (NaN
                                    for one draw)                          */
    double draws_ci95_bits;      /* half-width of the 95 % confidence
                                    interval of the mean (Student t; NaN
                                    for one draw)                          */
    /* Channel with memory (request.memory.ntaps > 0); states = 0 and the
     * rest unset otherwise. Rates by simulation (qc_isi_rate) with the
     * result's levels and law, at memory_thresholds. */
    size_t states;               /* trellis states M^L                       */
    size_t ntaps;
    double *taps;                /* owned copy of the taps                   */
    size_t memory_symbols;       /* symbols simulated per rate               */
    double memory_rate_ci_target; /* echo of request.memory.rate_ci_bits    */
    double information_rate_bits;       /* quantized, sequence detector    */
    double information_rate_ci_bits;    /* its 95 % half-width             */
    double unquantized_information_rate_bits;
    double unquantized_information_rate_ci_bits;
    double symbolwise_rate_bits;        /* exact, ISI treated as noise     */
    double *memory_thresholds;   /* owned (nthresholds): the thresholds the
                                    rates are for: uniform, the full scale
                                    optimized for the information rate;
                                    other strategies, the memoryless ones  */
    double full_scale_factor;    /* memory_thresholds' spread over that of
                                    thresholds (1: unchanged); uniform and
                                    converter settings are searched for
                                    the information rate               */
    int full_scale_at_bound;     /* 1: a search of those settings (the
                                    full scale, a converter's gain or
                                    offset) ended at the farthest point it
                                    tries, at either end, the rate still
                                    rising there: settings beyond it may
                                    do better                             */
    size_t memory_evaluations;   /* simulated rates of the full-scale search */
    int coherent;                /* echo of request.memory.coherent          */
    double *taps_imag;           /* owned (ntaps) when coherent, else NULL   */
    double truncated_energy;     /* echo (NaN: not a truncated response)     */
    double memory_gain;          /* a converter: the gain and offset ahead  */
    double memory_offset;        /* of it on the channel with memory (its
                                    noise then σ/memory_gain at the receiver
                                    output; memory_thresholds are its
                                    transition levels referred to the
                                    receiver output; full_scale_factor is
                                    gain / memory_gain); NaN otherwise     */
    /* The trade's figures on the channel with memory (Gray labels; NaN
     * unless the levels are a power of 2). The symbol-by-symbol receiver,
     * exact from the marginal law of its channel: */
    double symbolwise_pre_fec_ber;
    double symbolwise_ngmi;
    /* The symbol-wise MAP (BCJR) detector, simulated on the rates'
     * sequence, each with its 95 % batch-means half-width: the pre-FEC
     * BER of its decisions, the GMI and NGMI from its bit-wise
     * a-posteriori LLRs; and the same without the ADC. With a FEC code,
     * fec_closes, fec_margin, net_bits and net_rate_gbps above are those
     * of this detector on the channel with memory (its BER for a hard-
     * decision code, its NGMI for a soft one), never those of the link
     * without interference: where that figure is undefined (a coherent
     * channel, on which it is not simulated) the verdict is undefined
     * and fec_note says why. */
    double bcjr_pre_fec_ber, bcjr_pre_fec_ber_ci;
    double bcjr_gmi_bits, bcjr_gmi_ci_bits;
    double bcjr_ngmi, bcjr_ngmi_ci;
    double unquantized_bcjr_pre_fec_ber, unquantized_bcjr_pre_fec_ber_ci;
    double unquantized_bcjr_ngmi, unquantized_bcjr_ngmi_ci;
    /* Probabilistic shaping (src/design/shaping.c): shaping_given is 1
     * when the request gave input.shaping; otherwise 0 and the numbers
     * below NaN. With a shaped law, entropy_bits is H(X), ngmi its NGMI,
     * and with a FEC code net_bits the PAS net rate
     * H(X) − (1 − R_c)·m (Böcherer, Steiner, Schulte 2015). */
    int shaping_given;
    qc_shaping shaping;          /* echo of the request                     */
    double shaping_nu;           /* ν of the law, for the levels as given   */
    double shaping_scale;        /* factor on the given levels that keeps
                                    the uniform law's average power        */
    double uniform_rate_bits;    /* the objective's rate with the uniform
                                    law at the same SNR, with the same
                                    quantizer strategy and cells; NaN when
                                    skipped (numerics.skip_snr_penalty)    */
    double shaping_gain_db;      /* shaping gain: the SNR (dB) at which the
                                    uniform law reaches rate_bits with the
                                    same quantizer strategy and cells,
                                    minus the operating SNR; > 0 when the
                                    shaped law needs less SNR. NaN when
                                    skipped or when the uniform law does
                                    not reach rate_bits within ±32 dB     */
    size_t shaping_evaluations;  /* designs run by the search of `best`     */
    /* A two-dimensional constellation (request channel.iq; src/design/
     * iq_entry.c): iq is 1 and the fields below are set; rates are per
     * complex symbol, nlevels is 0, and thresholds are the in-phase ones
     * of the I/Q pair (none for the polar quantizer). */
    int iq;
    unsigned iq_kind;            /* qc_iq_kind: 0 product, 1 polar          */
    size_t points;               /* M points of the constellation           */
    double *points_xy;           /* owned: x0, y0, x1, y1, ... (2M)          */
    double *point_law;           /* owned: their probabilities (M)           */
    size_t *point_labels;        /* owned: their labels (M), NULL: none     */
    unsigned point_label_bits;   /* label length (0: none)                  */
    const char *labelling;       /* "given", "gray", "searched"; NULL       */
    size_t output_cells;         /* cells of the receiver in all            */
    size_t cells_i, cells_q;     /* product: cells per axis                  */
    double *thresholds_q;        /* owned: product quadrature thresholds    */
    size_t amplitude_cells, phase_cells; /* polar                          */
    double *amplitude_thresholds; /* owned: polar ring radii (A − 1)        */
    double *phase_thresholds;    /* owned: polar sector starts, rad (P)     */
    double phase_noise_sd;       /* residual phase error, rad rms (0: none) */
    unsigned phase_noise_law;    /* qc_phase_law                            */
    double cell_error;           /* cell probabilities: 0 exact (Gaussian
                                    CDF products), else the last change of
                                    their quadrature (target
                                    QC_IQ_QUAD_TOL)                        */
    double iq_start_bits;        /* objective of the uniform cells          */
    size_t iq_evaluations;       /* objective evaluations of the cell design */
    int iq_at_ceiling;           /* 1: the cell design stopped within
                                    QC_IQ_CEILING_GAP_BITS of H(X), which no
                                    cells can pass                          */
    int iq_per_axis;             /* 1: the I/Q pair designed axis by axis
                                    (qc_iq_design_result.per_axis)          */
    int iq_axis_start;           /* qc_iq_design_result.axis_start          */
    double iq_axis_start_bits;   /* qc_iq_design_result.axis_start_bits     */
    int iq_unquantized_per_axis; /* 1: unquantized_bits is the sum of the
                                    two axes' MIs (the constellation
                                    factors; qc_iq_unquantized_mi), 0: a
                                    Gauss–Hermite rule                      */
} qc_design_result;

/* Design (or evaluate, for QC_QUANTIZER_FIXED) a quantizer. Bad requests
 * (cells outside 2..2^16, fine grid smaller than K, unsorted, repeated or
 * miscounted thresholds, bad levels or law) are QC_EINVAL with a message
 * naming the field; a constraint no law can meet is QC_EINFEASIBLE, an
 * engine that stops short of its tolerance QC_ENOCONV, and QC_ENUMERIC,
 * QC_ENOMEM as they come. A channel with memory (req->memory) is checked
 * before the design (taps, states, symbols, a Gaussian-law model, real
 * levels unless memory.coherent, no intensity model when coherent:
 * QC_EINVAL) and a noiseless output the model refuses fails after
 * it (QC_EINVAL naming the symbols). The request and what it points to are never
 * modified. On failure the result is left empty (zeroed: safe to clear,
 * nothing to free). */
QC_API qc_status qc_design(const qc_design_request *req, qc_design_result *res);

/* The checks qc_design makes of a request before any work (levels, law,
 * cells, thresholds, objective against the alphabet), without designing:
 * a study checks every point with it before running any. QC_OK when they
 * pass (the design may still fail later, e.g. to converge); the message
 * names the field otherwise. */
QC_API qc_status qc_design_precheck(const qc_design_request *req);

/* Release what a result owns and zero it; safe on a zeroed result. NULL
 * does nothing. */
QC_API void qc_design_result_clear(qc_design_result *res);

/* All strategies on the same channel (`design --compare`): uniform,
 * Lloyd–Max, optimal, fixed when the request has thresholds, and the
 * converter when it has one (quantizer.converter). */
#define QC_COMPARE_MAX 5
typedef struct {
    size_t count;                         /* strategies run                  */
    qc_quantizer_kind kind[QC_COMPARE_MAX];
    qc_status status[QC_COMPARE_MAX];     /* per strategy                    */
    char *message[QC_COMPARE_MAX];        /* owned: its failure message; NULL
                                             where it succeeded             */
    qc_design_result result[QC_COMPARE_MAX]; /* empty where status != QC_OK */
} qc_design_comparison;

/* The units a report gives the levels and the thresholds of a request:
 * the request's own, else its model type's, else "" (never NULL, also
 * for a NULL request or one without a model). Never fail. */
QC_API const char *qc_design_level_unit(const qc_design_request *req);
QC_API const char *qc_design_output_unit(const qc_design_request *req);

/* What the reported snr_db of a request means, in words (the model
 * type's snr_definition; for QAM on model gauss, Es/N0), or NULL when the
 * model defines no SNR (or req or its model is NULL). Never fails. */
QC_API const char *qc_design_snr_definition(const qc_design_request *req);

/* Run every strategy with the request's objective, channel and cells
 * (req->quantizer.kind is ignored). An invalid request (a channel with
 * memory among them: QC_EINVAL) fails at once with nothing filled; otherwise every entry is filled and the return value is
 * QC_OK, or the first failing strategy's status. Clear with
 * qc_design_comparison_clear (safe on a zeroed comparison). */
QC_API qc_status qc_design_compare(const qc_design_request *req,
                            qc_design_comparison *cmp);
/* Release every result of a comparison and zero it; NULL does nothing. */
QC_API void qc_design_comparison_clear(qc_design_comparison *cmp);

/* ---- the inverse question: what a target requires (require.c) ------- */

typedef enum {
    QC_TARGET_BER = 0,  /* pre-FEC BER at or below the value               */
    QC_TARGET_NGMI = 1, /* NGMI at or above the value                      */
    QC_TARGET_GMI = 2,  /* BICM GMI (bit/symbol) at or above the value     */
    QC_TARGET_RATE = 3, /* the objective's rate (bit/symbol) at or above   */
    QC_TARGET_RATE_PER_SLOT = 4, /* pulse position: rate / M (bit/slot)    */
    QC_TARGET_BITS_PER_PHOTON = 5, /* rate per detected signal photon      */
    QC_TARGET_COUNT
} qc_target_kind;

typedef struct {
    qc_target_kind kind;
    double value;
    int from_fec;       /* 1: the threshold of `fec` ("fec=NAME")          */
    qc_fec fec;
} qc_target;

/* "ber=X", "ngmi=X", "gmi=X", "rate=X", "rate-per-slot=X" (pulse-position
 * modulation), "bits-per-photon=X" (photon counting) or "fec=NAME" (a code of
 * qc_fec_parse: its BER or NGMI threshold). QC_EINVAL naming the word. */
QC_API qc_status qc_target_parse(const char *spec, qc_target *out);

/* "ber", "ngmi", "gmi", "rate", "rate-per-slot", "bits-per-photon"; NULL
 * out of range. */
QC_API const char *qc_target_name(qc_target_kind kind);

/* Build the model and request at `value` of the quantity solved for; the
 * model is the callee's to keep until the next call or the end of
 * qc_require (it frees nothing the caller owns). */
typedef qc_status (*qc_require_build)(void *ctx, double value, const qc_model **model,
                                      qc_design_request *req);

typedef struct {
    qc_target target;
    qc_require_build build;
    void *ctx;
    double lo, hi;     /* search range of the value, lo < hi                 */
    int linear;        /* 1: a positive linear quantity (photons, a power,
                          a noise level): searched on a log scale, ratios
                          reported as 10·log10; 0: a value in dB already   */
    size_t samples;    /* points on the range checked for monotonicity
                          before the root search (≥ 3; 0: 9)               */
    const char *name;  /* the quantity, for messages ("snr-db"); NULL ok  */
    const char *unit;  /* appended to its values (" dB"); NULL: none       */
    int penalty_only;  /* 1: only the penalty is wanted, so where the
                          receiver has no unquantized reference nothing is
                          searched (required NaN, unquantized_note says
                          why)                                             */
} qc_require_request;

typedef struct {
    double required;             /* value meeting the target with the
                                    request's quantizer: the end of the
                                    root's final bracket on the side that
                                    meets it (within root_tolerance_db of
                                    the crossing)                          */
    double unquantized_required; /* the same without the quantizer; NaN when
                                    the unquantized receiver meets the
                                    target over the whole range            */
    double penalty_db;           /* how much more the quantizer needs, dB:
                                    difference of dB values, or 10·log10 of
                                    the ratio of linear ones; NaN as above */
    int increasing;              /* the figure improves as the value grows */
    double best_value;           /* unreachable target: the value where the
                                    figure is best in the range, and that   */
    double best_figure;          /* figure (NaN otherwise)                  */
    size_t designs;              /* designs run                             */
    double root_tolerance_db;    /* the roots' final bracket width: 10⁻⁶ dB,
                                    10⁻⁴ dB where the figure is simulated
                                    (a channel with memory), in dB (10·log10
                                    of the ratio for a linear quantity)    */
    const char *unquantized_note; /* why unquantized_required is NaN when it
                                    has no unquantized reference at all (a
                                    static phrase); NULL otherwise          */
    double range_lo, range_hi;   /* the range searched, where the figure
                                    was checked to cross the target once  */
} qc_require_result;

/* Solve for the value at which the design built by rq->build meets the
 * target (GSL Brent on the bracket found among the samples; Brent,
 * Algorithms for Minimization without Derivatives, 1973, ch. 4), and for
 * the unquantized receiver with the same levels and law. The figure must
 * cross the target once among the samples: QC_EINVAL saying that it is
 * not monotone when it crosses more than once. A target
 * not reached anywhere in the range (or met over all of it) is
 * QC_EINFEASIBLE naming the best figure and where (kept in the result). */
QC_API qc_status qc_require(const qc_require_request *rq, qc_require_result *out);

/* The margin in dB of an operating value over the required one, positive
 * when the operating point does better than needed (dB values: the
 * difference; linear ones: 10·log10 of the ratio). NaN when the operating
 * value lies outside the range searched: beyond it the figure was not
 * checked to be monotone (a launch power past its optimum loses SNR), so
 * the distance to the root says nothing about the target there. */
QC_API double qc_require_margin_db(const qc_require_result *res, int linear,
                                   double operating);

/* The figure of `kind` of a finished design (pre-FEC BER, NGMI, GMI,
 * rate, rate per PPM slot or bits per detected photon; NaN when the
 * design defines none). On a channel with memory the figures of the
 * detector on the trellis: the simulated information rate and the BCJR
 * detector's BER, GMI and NGMI. */
QC_API double qc_design_figure(const qc_design_result *res, qc_target_kind kind);

/* ---- SNR of a model ------------------------------------------------- */

/* Operating SNR in dB by the model's notion (qc_model_type.snr); NaN
 * when the model defines none, an argument is NULL or the SNR is not
 * positive. Sets no message. */
QC_API double qc_model_snr_db(const qc_model *model, const double *levels,
                       const double *input, size_t nlevels);

/* A new model of the same type whose SNR is `gain` times this one's
 * (qc_model_type.scale_snr). QC_EINVAL if the type has no SNR notion or
 * gain is not a positive finite number, or naming the parameter that the
 * scaling would push out of its range; QC_ENOMEM. On failure *out is
 * NULL; `model` is never modified. */
QC_API qc_status qc_model_scale_snr(const qc_model *model, double gain,
                             qc_model **out);

/* SNR penalty of a rate: snr_db minus the SNR (dB) at which the
 * unquantized receiver with the same levels and law reaches rate_bits
 * (Brent root finding on the unquantized curve, scaling the noise with
 * scale_snr). 0 when rate_bits is within the quadrature error of the
 * unquantized rate; *penalty_db is NaN (status QC_OK) when the model
 * defines no SNR, rate_bits ≤ 0, or the unquantized rate never falls to
 * rate_bits in the searched range. QC_EINVAL, QC_ENUMERIC or QC_ENOMEM
 * when the unquantized rate cannot be computed; *penalty_db is then NaN. */
QC_API qc_status qc_snr_penalty_db(const qc_model *model, const double *levels,
                            const double *input, size_t nlevels,
                            double rate_bits, double *penalty_db);

#ifdef __cplusplus
}
#endif

#endif /* QUANTCAP_DESIGN_H */

/* quantcap/alphabet.h — transmit alphabets, input constraints and Gray
 * labels. Part of the public interface of libquantcap (include
 * <quantcap.h> for all of it). SPDX-License-Identifier: GPL-3.0-or-later
 * */
#ifndef QUANTCAP_ALPHABET_H
#define QUANTCAP_ALPHABET_H

#include <stddef.h>

#include "quantcap/capacity.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef enum {
    QC_ALPHABET_LEVELS = 0, /* explicit levels, in the order given          */
    QC_ALPHABET_PAM,        /* pam:M, bipolar: −(M−1), −(M−3), …, M−1       */
    QC_ALPHABET_UPAM,       /* upam:M, intensity: 0, 1/(M−1), …, 1 (OOK = 2) */
    QC_ALPHABET_QAM,        /* qam:M, square QAM: √M-PAM on each quadrature */
    QC_ALPHABET_GRID,       /* N equally spaced candidates on [lo, hi]      */
    QC_ALPHABET_PPM,        /* ppm:M, pulse position: M slots, one pulsed;
                               per-slot levels 0 (empty) and 1 (pulse)     */
} qc_alphabet_kind;

#define QC_ALPHABET_MAX 4096 /* most levels per real dimension */
#define QC_PPM_MAX_SLOTS ((size_t)1 << 20) /* most slots of a PPM symbol */

typedef struct {
    qc_alphabet_kind kind;
    size_t size;         /* M: points per symbol (QAM: per complex symbol;
                            PPM: slots per symbol)                       */
    size_t nlevels;      /* levels per real dimension (QAM: √M)           */
    double *levels;      /* owned, nlevels values                         */
    unsigned dimensions; /* 2 for QAM, else 1                             */
    int intensity;       /* 1 for upam: levels are intensities ≥ 0         */
} qc_alphabet;

/* "pam:M", "upam:M" (2 ≤ M ≤ QC_ALPHABET_MAX), "qam:M" (M a perfect
 * square and a power of 2, 4 ≤ M) or "ppm:M" (2 ≤ M ≤ QC_PPM_MAX_SLOTS:
 * size M, the two per-slot intensity levels 0 and 1). The message names the spec and says
 * what is wrong (QC_EINVAL); QC_ENOMEM. On failure *out is NULL. Free
 * with qc_alphabet_free. */
QC_API qc_status qc_alphabet_parse(const char *spec, qc_alphabet **out);

/* Explicit levels (finite, distinct, 1 ≤ n ≤ QC_ALPHABET_MAX), kept in
 * the order given (copied). QC_EINVAL naming the level or the count,
 * QC_ENOMEM; on failure *out is NULL. */
QC_API qc_status qc_alphabet_from_levels(const double *levels, size_t n,
                                  qc_alphabet **out);

/* n ≥ 2 equally spaced candidate levels lo, …, hi (lo < hi, both finite):
 * the support of a free-form input law. QC_EINVAL naming the bound or
 * count at fault, QC_ENOMEM; on failure *out is NULL. */
QC_API qc_status qc_alphabet_grid(double lo, double hi, size_t n, qc_alphabet **out);
/* Optical powers of the two per-slot levels of M-ary PPM (empty, pulsed)
 * for an average power `average` over the symbol (> 0, finite) and an
 * extinction ratio (pulsed/empty power, > 1; INFINITY: dark empty
 * slots): pulsed = M·average·r/(r + M − 1), empty = pulsed/r. QC_EINVAL
 * naming the value; on failure power is unchanged. */
QC_API qc_status qc_ppm_slot_powers(double average, double ratio, size_t slots,
                                    double power[2]);
/* Release an alphabet and its levels; NULL does nothing. */
QC_API void qc_alphabet_free(qc_alphabet *a);

/* Input constraints. NaN in a field means "no such constraint".
 * For QAM the peak bounds each quadrature (a square region) and the power
 * is per complex symbol, E|x|² = E[x_I²] + E[x_Q²]. */
typedef struct qc_constraints {
    double peak;   /* |x| ≤ peak (> 0); intensity: 0 ≤ x ≤ peak              */
    double power;  /* E[x²] ≤ power (> 0)                                    */
    double mean;   /* E[x] ≤ mean (average optical power for intensity)     */
    int intensity; /* levels are intensities: x ≥ 0 is required as well      */
} qc_constraints;

/* All fields NaN, intensity 0. Never fails. */
QC_API void qc_constraints_none(qc_constraints *c);

/* Apply a peak constraint to an alphabet: a grid loses the candidates
 * outside [−peak, peak] ([0, peak] for intensity); any other alphabet
 * with a level outside is QC_EINVAL naming 'peak-limit' and the level; a grid
 * left with fewer than 2 levels is QC_EINFEASIBLE; a peak that is not a
 * positive number is QC_EINVAL. NaN peak: no change. On failure the
 * alphabet is unchanged. */
QC_API qc_status qc_alphabet_apply_peak(qc_alphabet *a, double peak, int intensity);

/* Check that some input law on `levels` (per real dimension; dimensions
 * 2 for QAM) meets the constraints: every level within the peak, power ≥
 * the smallest E[x²] of any level (QAM: 2·min x²), mean ≥ the smallest
 * level, and a law meeting power and mean together. QC_EINFEASIBLE (or
 * QC_EINVAL for a malformed constraint) naming the key. Reads only. */
QC_API qc_status qc_constraints_check(const qc_constraints *c, const double *levels,
                               size_t nlevels, unsigned dimensions);

/* Binary-reflected Gray code of i: i XOR (i >> 1) (Gray 1953). Never
 * fails. */
QC_API size_t qc_gray_code(size_t i);

/* Labels of n levels: labels[i] = Gray code of the rank of levels[i] in
 * ascending order, so neighbouring levels differ in one bit. *nbits =
 * log2 n. QC_EINVAL naming n unless n is a power of 2 (n ≥ 2); QC_ENOMEM.
 * On failure labels and *nbits are unchanged. */
QC_API qc_status qc_gray_labels(const double *levels, size_t n, size_t *labels,
                         unsigned *nbits);

/* 1 when n ≥ 2 and a power of 2, else 0. Never fails. */
QC_API int qc_is_power_of_two(size_t n);
/* 1 when c sets any constraint, else 0 (also for c NULL). Never fails. */
QC_API int qc_constraints_any(const qc_constraints *c);
/* Values in their domains (peak, power > 0; mean finite; no mean with
 * QAM); QC_EINVAL with a message naming the key. c may be NULL (no
 * constraints: QC_OK). Reads only. */
QC_API qc_status qc_constraints_validate(const qc_constraints *c, unsigned dimensions);
/* Does the law (NULL: uniform) meet the average constraints? QC_OK when
 * it does, else QC_EINFEASIBLE naming the constraint and the law's value.
 * Reads only. */
QC_API qc_status qc_constraints_check_law(const qc_constraints *c, const double *levels,
                                   const double *law, size_t nlevels,
                                   unsigned dimensions);
/* Per-level costs of the average constraints (power first, then mean)
 * into the caller's arrays (nlevels each) and the qc_cost list; returns
 * how many (0, 1 or 2). QAM: the per-quadrature power budget is half the
 * symbol's. Never fails (0 when c is NULL or sets no average
 * constraint); entries past the count returned are left as they were. */
QC_API size_t qc_constraint_costs(const qc_constraints *c, const double *levels,
                           size_t nlevels, unsigned dimensions, double *power_cost,
                           double *mean_cost, qc_cost costs[2]);

/* ---- probabilistic shaping (shaping.c) ------------------------------ */

/* Maxwell–Boltzmann laws p(x) ∝ exp(−ν·x²) on the levels of one real
 * dimension (square QAM: the same law on each quadrature, so that the
 * law of a point is ∝ exp(−ν·|x|²), a product of two). ν refers to the
 * levels as given (pam: odd integers); a design with shaping scales the
 * levels so that the shaped law keeps the average power of the uniform
 * one (docs/alphabets.md). On intensity levels (x ≥ 0: upam, or any
 * levels of a model of optical intensities) the power is the average
 * optical power E[x] and the law of most entropy at a given E[x] is
 * p(x) ∝ exp(−ν·x) (Cover and Thomas, Elements of Information Theory,
 * 2nd ed., 2006, sec. 12.1): the law of ν on the amplitudes √x, so the
 * functions below serve both on the amplitudes of qc_shaping_amplitudes. */
typedef enum {
    QC_SHAPING_NONE = 0, /* "none": the uniform law (ν = 0)               */
    QC_SHAPING_NU,       /* "mb:NU": the law of this ν ≥ 0                */
    QC_SHAPING_ENTROPY,  /* "entropy:H": the law of entropy H(X), bits per
                            symbol (QAM: per complex symbol)             */
    QC_SHAPING_BEST,     /* "best": ν maximizing the design's objective   */
    QC_SHAPING_COUNT
} qc_shaping_kind;

typedef struct {
    qc_shaping_kind kind;
    double value; /* ν (QC_SHAPING_NU) or H(X) in bits (ENTROPY); else 0 */
    int intensity; /* 1: intensity levels, p ∝ exp(−ν·x) at the same E[x];
                      0: p ∝ exp(−ν·x²) at the same E[x²] (parse sets 0) */
} qc_shaping;

/* "none", "mb:NU" (NU ≥ 0, finite), "entropy:H" (H > 0, finite; its
 * upper end depends on the alphabet: qc_mb_entropy_range) or "best".
 * QC_EINVAL naming the spec and what is expected; on failure *out is
 * unchanged. */
QC_API qc_status qc_shaping_parse(const char *spec, qc_shaping *out);

/* The spec of a shaping as qc_shaping_parse reads it ("mb:0.05",
 * "entropy:2.5", "best", "none") into buf (cap bytes, always terminated).
 * Never fails. */
QC_API void qc_shaping_format(const qc_shaping *s, char *buf, size_t cap);

/* The amplitudes whose squares are the energies of the shaped law:
 * out[i] = levels[i] (intensity 0) or √levels[i] (intensity 1: the law
 * ∝ exp(−ν·x) of intensities is the Maxwell–Boltzmann law of √x). out
 * may be levels. QC_EINVAL naming the first intensity level below 0 or
 * not finite; on failure out is unspecified. */
QC_API qc_status qc_shaping_amplitudes(const double *levels, size_t n, int intensity,
                                       double *out);

/* The Maxwell–Boltzmann law of ν on n levels into law[n]. QC_EINVAL
 * naming ν unless it is finite and ≥ 0, or naming the levels (none, or
 * not finite); on failure law is unchanged. */
QC_API qc_status qc_mb_law(const double *levels, size_t n, double nu, double *law);

/* Entropy (bits per symbol: `dimensions` times that of one real
 * dimension) and average power E[x²] per symbol (dimensions·E[x²] of one
 * dimension) of the law of ν. NaN for bad arguments (as qc_mb_law).
 * Sets no message. */
QC_API double qc_mb_entropy_bits(const double *levels, size_t n, unsigned dimensions,
                                 double nu);
QC_API double qc_mb_power(const double *levels, size_t n, unsigned dimensions, double nu);

/* The entropies the family reaches, bits per symbol: *hmax = H at ν = 0
 * (dimensions·log2 n) and *hmin the limit as ν → ∞ (dimensions·log2 of
 * the number of levels of least |x|: 1 per dimension for pam with even
 * M). The family's entropy falls strictly from *hmax to *hmin as ν grows
 * (dH/dν = −ν·Var(x²) in nats). QC_EINVAL for bad levels. */
QC_API qc_status qc_mb_entropy_range(const double *levels, size_t n, unsigned dimensions,
                                     double *hmin, double *hmax);

/* ν ≥ 0 of the law with entropy h_bits (bits per symbol), by GSL's Brent
 * root finder on H(ν) (Brent, Algorithms for Minimization without
 * Derivatives, 1973, ch. 4). QC_EINVAL naming the entropy and the range
 * (hmin, hmax] of qc_mb_entropy_range when it is outside; QC_ENOCONV if
 * the root finder stops short. On failure *nu is unchanged. */
QC_API qc_status qc_mb_nu_for_entropy(const double *levels, size_t n, unsigned dimensions,
                                      double h_bits, double *nu);

#ifdef __cplusplus
}
#endif

#endif /* QUANTCAP_ALPHABET_H */

/* quantcap/iq.h — coherent receivers for two-dimensional constellations
 * under circular Gaussian noise and an optional residual phase error:
 * the I/Q pair (one quantizer per quadrature, rectangular cells) and the
 * polar quantizer (amplitude rings × phase sectors); the exact transition
 * matrix of either, its rates (MI, certified capacity, BICM GMI), and the
 * design of their boundaries. Part of the public interface of libquantcap
 * (include <quantcap.h> for all of it).
 * SPDX-License-Identifier: GPL-3.0-or-later */
#ifndef QUANTCAP_IQ_H
#define QUANTCAP_IQ_H

#include <stddef.h>

#include "quantcap/dmc.h"
#include "quantcap/plane.h"
#include "quantcap/design.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef enum {
    QC_IQ_PRODUCT = 0, /* one quantizer per quadrature: rectangular cells  */
    QC_IQ_POLAR = 1,   /* amplitude rings × phase sectors                  */
} qc_iq_kind;

typedef enum {
    QC_PHASE_GAUSS = 0,    /* φ ~ N(0, s²) (wrapped onto the circle)      */
    QC_PHASE_TIKHONOV = 1, /* p(φ) ∝ exp(κ cos φ), κ = 1/s²               */
} qc_phase_law;

#define QC_IQ_MAX_CELLS 4096      /* most output cells of one receiver   */
#define QC_IQ_QUAD_TOL 1e-13      /* target absolute error of a cell's
                                     probability by quadrature           */
#define QC_IQ_CEILING_GAP_BITS 1e-10 /* a cell design stops once its MI or
                                     GMI is this close to H(X), which no
                                     cells can pass                      */

/* "product" / "polar", "gauss" / "tikhonov"; NULL out of range. */
QC_API const char *qc_iq_kind_name(qc_iq_kind k);
QC_API const char *qc_phase_law_name(qc_phase_law l);
/* QC_EINVAL naming the word and the choices; *out unchanged on failure. */
QC_API qc_status qc_iq_kind_parse(const char *name, qc_iq_kind *out);
QC_API qc_status qc_phase_law_parse(const char *name, qc_phase_law *out);

/* The cells. Product: Ki = nti + 1 cells on the in-phase axis and
 * Kq = ntq + 1 on the quadrature axis (thresholds strictly increasing);
 * output index i·Kq + q. Polar: A = nradii + 1 amplitude rings (radii
 * > 0, strictly increasing; the innermost ring is the disc) and P =
 * nphases sectors [φ_p, φ_{p+1}) with φ_P = φ_0 + 2π (radians, strictly
 * increasing, φ_{P−1} < φ_0 + 2π; P = 1 is the whole circle); output
 * index a·P + p. */
typedef struct {
    qc_iq_kind kind;
    const double *ti;
    size_t nti;
    const double *tq;
    size_t ntq;
    const double *radii;
    size_t nradii;
    const double *phases;
    size_t nphases;
} qc_iq_cells;

/* The channel ahead of the quantizer: y = x·e^{jφ} + n, n circular
 * Gaussian with variance sigma² per quadrature, φ the residual phase
 * error (phase_sd = 0: none). */
typedef struct {
    double sigma;
    double phase_sd;  /* radians, ≥ 0 */
    qc_phase_law phase_law;
} qc_iq_noise;

/* Number of output cells (0 when the description is malformed). */
QC_API size_t qc_iq_cell_count(const qc_iq_cells *q);

/* The transition matrix P(cell | point). Product without phase noise:
 * products of differences of the Gaussian CDF (exact to rounding); with
 * phase noise an integral over φ (Gauss–Hermite rules for a Gaussian
 * error of at most 6 angular widths σ/|x| of the noise, else composite
 * Gauss–Legendre panels), refined until it changes by less than
 * QC_IQ_QUAD_TOL. Polar, with or without phase
 * noise: the radial integral of the Gaussian along each ray in closed
 * form, and over the angle a Fourier series (trapezoid-rule coefficients,
 * the phase error's characteristic function, the sectors in closed form)
 * whose number of angles doubles until no cell changes by more than
 * QC_IQ_QUAD_TOL; without phase noise, a point more than about 33 sigma
 * from the origin (or one the series does not settle within 2^12 angles)
 * has each cell's angular integral by adaptive quadrature instead, to
 * 1e-15.
 * *quad_err (may be NULL) receives the largest change at the last
 * refinement (polar: a bound on it, from the change of the series'
 * coefficients, or the quadrature's error estimate). QC_EINVAL naming
 * the field at fault; QC_ENOCONV when a refinement cannot meet its
 * tolerance; QC_ENOMEM. On failure *out is NULL. */
QC_API qc_status qc_iq_channel(const qc_plane *c, const qc_iq_noise *noise,
                               const qc_iq_cells *q, qc_dmc **out, double *quad_err);

/* Rates of a 2-D channel for the constellation's law. */
typedef struct {
    double mi_bits;          /* I(X;Y) under the constellation's law       */
    double gmi_bits;         /* BICM GMI with the constellation's labels
                                (NaN without labels)                       */
    double ngmi;             /* GMI / H(X)-normalized: 1 − (H(X) − GMI)/m,
                                m the label bits (NaN without labels)      */
    double entropy_bits;     /* H(X)                                       */
    double capacity_bits;    /* certified lower bound (NaN: not asked)     */
    double capacity_upper_bits; /* certified upper bound                   */
    size_t capacity_iterations;
} qc_iq_rates;

/* MI and GMI exactly; with want_capacity the Blahut–Arimoto capacity of
 * the matrix to tol_bits (0: 1e-9). QC_EINVAL, QC_ENOCONV, QC_ENOMEM. */
QC_API qc_status qc_iq_rates_compute(const qc_plane *c, const qc_dmc *ch, int want_capacity,
                                     double tol_bits, qc_iq_rates *r);

/* Unquantized MI of the constellation in circular Gaussian noise (no
 * phase noise): E[log2 p(y|x)/p(y)] by product Gauss–Hermite rules. With
 * nodes = 0 the rule doubles from 24 × 24 points until the MI changes by
 * less than 1e-9 bit, 384 points per axis are reached, or the next rule
 * would take more than 4e8 kernel evaluations (M² n²); otherwise the
 * rule of `nodes` points is compared with that of nodes/2. *err_bits
 * (may be NULL) receives the last change, *nodes_used (may be NULL) the
 * points per axis of the final rule. With nodes = 0 a constellation whose
 * points are every pair of an in-phase and a quadrature value and whose
 * law is the product of its marginals (square QAM) is two independent
 * one-dimensional channels: its MI is the sum of theirs, each by
 * qc_unquantized_mi (adaptive quadrature), *err_bits the sum of their
 * error estimates and *nodes_used 0. QC_EINVAL, QC_ENOMEM, QC_ENUMERIC. */
QC_API qc_status qc_iq_unquantized_mi(const qc_plane *c, double sigma, size_t nodes,
                                      double *mi_bits, double *err_bits, size_t *nodes_used);

/* Design of the boundaries: maximize the MI (or, with labels, the GMI)
 * over the thresholds of the I/Q pair (one set for both axes when shared,
 * else one per axis) or over the radii and sector boundaries of the polar
 * quantizer, from the uniform design, by BFGS (GSL vector_bfgs2) on the
 * exact gradient of log(H(X) − objective), with or without a phase error
 * (ordered boundaries only; disordered steps are refused). For the MI
 * of an I/Q pair without a phase error, when the points are every pair
 * of an in-phase and a quadrature value and their law is the product of
 * its marginals (square QAM with a uniform law), the matrix is the product
 * of two one-dimensional channels and the MI the sum of theirs, so each
 * axis is designed by the one-dimensional MI-optimal design instead (its
 * grid DP, Newton steps and threshold moves; with shared thresholds the
 * two axes must have the same values and law), kept when it is no worse
 * than the uniform cells (to 1e-12 bit, the rounding of the sums). Where
 * the gradient search runs on such an I/Q pair without a phase error (the
 * GMI, when every label bit is a function of one axis, as Gray labels of
 * square QAM are; or an MI design that fell back), it rates the cells and
 * their gradient axis by axis: the same values to rounding, on √M points
 * and √K cells per axis instead of M points and K cells. The
 * search stops where the objective comes within QC_IQ_CEILING_GAP_BITS
 * of H(X), its ceiling (the MI and the GMI never pass it), or not at all
 * when the uniform design is already there. */
typedef struct {
    qc_iq_kind kind;
    size_t cells_i, cells_q;    /* product: cells per axis (≥ 2)           */
    int separate;               /* product: 1 for per-axis thresholds     */
    size_t amplitude_cells;     /* polar: A ≥ 1                           */
    size_t phase_cells;         /* polar: P ≥ 1 (A·P ≥ 2)                  */
    int fixed_phases;           /* polar: keep the equal sectors (phase
                                   boundaries not designed)               */
    qc_objective objective;     /* QC_OBJECTIVE_MI or QC_OBJECTIVE_GMI    */
    size_t max_evaluations;     /* 0: 4000                                */
    int gradient_only;          /* 1: the gradient search on the 2-D matrix
                                   even where the I/Q pair could be
                                   designed, or rated, axis by axis (to
                                   compare)                               */
} qc_iq_design_request;

typedef struct {
    double *ti, *tq, *radii, *phases; /* owned; lengths in cells           */
    qc_iq_cells cells;          /* points into the arrays above            */
    double start_bits;          /* objective of the uniform design          */
    double objective_bits;      /* objective of the final design            */
    size_t evaluations;
    int converged;              /* 1: the search settled (or no search),
                                   or the objective reached its ceiling;
                                   0: max_evaluations stopped it first      */
    int at_ceiling;             /* 1: the search ended (or did not start)
                                   with the objective within
                                   QC_IQ_CEILING_GAP_BITS of H(X); 0 without
                                   a search (uniform cells)                 */
    int per_axis;               /* 1: the I/Q pair was designed axis by
                                   axis by the one-dimensional MI-optimal
                                   design (the points, their law and the
                                   noise factor over the axes), not by BFGS */
    int axis_start;             /* BFGS on an I/Q pair whose points and law
                                   factor but whose objective or noise does
                                   not (the GMI, a phase error): 0 when it
                                   ran from the uniform cells only; 1 when
                                   it also ran from the axis-by-axis design
                                   and its cells were not higher; 2 when
                                   they were, and are the result's         */
    double axis_start_bits;     /* objective of the axis-by-axis design
                                   (NaN when axis_start is 0)              */
} qc_iq_design_result;

/* QC_EINVAL naming the field at fault, QC_ENOMEM, or the channel's
 * errors. On failure the result holds nothing to free. */
QC_API qc_status qc_iq_design(const qc_plane *c, const qc_iq_noise *noise,
                              const qc_iq_design_request *req, qc_iq_design_result *res);
/* The uniform starting design, as qc_iq_design would start. */
QC_API qc_status qc_iq_uniform(const qc_plane *c, const qc_iq_noise *noise,
                               const qc_iq_design_request *req, qc_iq_design_result *res);
QC_API void qc_iq_design_result_free(qc_iq_design_result *res);

/* A two-dimensional constellation and its receiver as a design request
 * takes it (qc_design_request.channel.iq; src/design/iq_entry.c). The
 * noise per quadrature is the request model's 'sigma'. The quantizer
 * part of the request says how the cells come: optimal (designed by
 * qc_iq_design for the objective: mi or gmi; capacity designs for mi and
 * rates the certified capacity of the resulting matrix), uniform (the
 * uniform cells qc_iq_uniform starts from) or fixed (product only: the
 * request's thresholds on both axes); quantizer.cells is the product's
 * cells per axis. */
typedef struct qc_design_iq {
    const qc_plane *plane;      /* points, law and labels (required)       */
    qc_iq_kind kind;
    size_t amplitude_cells;     /* polar: A ≥ 1                             */
    size_t phase_cells;         /* polar: P ≥ 1, A·P ≥ 2                    */
    double phase_sd;            /* residual phase error, rad rms (≥ 0)     */
    qc_phase_law phase_law;
    const char *labelling;      /* how the labels came, for reports       */
} qc_design_iq;

#ifdef __cplusplus
}
#endif

#endif /* QUANTCAP_IQ_H */

/* design_internal.h — what the files of the design stage (src/design)
 * share: the threshold design proper, the joint design of thresholds and
 * input law, the alphabet stages around them, the level search and its
 * constraint set. Not installed. */
#ifndef QC_DESIGN_INTERNAL_H
#define QC_DESIGN_INTERNAL_H

#include "core/internal.h"
#include "quantcap/design.h"
#include "quantcap/iq.h"
#include "quantcap/quantizer.h"

/* Tolerance of the certified rates when the request gives none (bits). */
#define QC_DESIGN_DEFAULT_TOL_BITS 1e-9

/* ---- design.c ----------------------------------------------------------- */

/* qc_design without the alphabet stages (constraints, QAM, GMI, level
 * search, dispersion; input_design.c calls it): the request's alphabet
 * fields are ignored and the result's are left zero. The capacity
 * objective takes `ncosts` (0, 1 or 2) average costs on the law besides
 * the request's own per-level cost (not both). */
qc_status qc_design_thresholds(const qc_design_request *req, const qc_cost *costs,
                               size_t ncosts, qc_design_result *res);

/* The same without the unquantized reference (unquantized_bits,
 * unquantized_err_bits, loss_bits, noiseless_limit and snr_db are left
 * zero or NaN): for designs that rate many quantizers of one channel. */
qc_status qc_design_thresholds_only(const qc_design_request *req, const qc_cost *costs,
                                    size_t ncosts, qc_design_result *res);

/* ---- converter.c -------------------------------------------------------- */

/* qc_design_thresholds for QC_QUANTIZER_CONVERTER: the converter's noise
 * added to the model's (qc_model_add_noise), its transition levels
 * referred to the receiver output through the gain and offset (given,
 * best for the objective, or the AGC rule), for each DNL/INL draw; the
 * result is the first draw's, with the converter fields and the draws'
 * mean and spread. The unquantized reference is the model's own (the
 * converter's noise counts as quantizer loss). */
qc_status qc_design_converter(const qc_design_request *req, const qc_cost *costs,
                              size_t ncosts, qc_design_result *res);

/* Check a request; *cells receives K. `fixed` says whether thresholds
 * must be given and checked. The message names the field. */
qc_status qc_design_check_request(const qc_design_request *req, int fixed, size_t *cells);
/* The alphabet fields of a request (dimensions, constraints, Gray labels
 * for gmi, blocklength); *dims receives 1 or 2. */
qc_status qc_design_check_alphabet(const qc_design_request *req, unsigned *dims);

/* ---- alternation.c ---------------------------------------------------- */

/* The capacity objective: thresholds of req->quantizer and the input law
 * together under `ncosts` average costs. On entry res holds the levels,
 * the starting law (res->input) and room for the thresholds; on return
 * the thresholds, the law, the final channel, its certified rate and
 * bound, and the iteration counts. */
qc_status qc_design_alternation(const qc_design_request *req, const qc_cost *costs,
                                size_t ncosts, qc_design_result *res);

/* ---- rate_limits.c ------------------------------------------------------ */

/* The last step of a design (called once on the final result, per real
 * dimension): hold the rates to log2 levels, the input entropy, log2
 * cells and the data-processing order within their stated errors
 * (flagging what was set to a limit; QC_ENUMERIC beyond the error),
 * recompute the loss, and compute the SNR penalty where it is defined
 * (else NaN with the reason in snr_penalty_note). */
qc_status qc_design_settle(const qc_design_request *req, qc_design_result *res);

/* qc_snr_penalty_db with the unquantized rates of the curve looked up in
 * memo first (snr.c; memo NULL: computed). */
qc_status qc_snr_penalty_db_memo(qc_unquantized_memo *memo, const qc_model *model,
                                 const double *levels, const double *input, size_t nlevels,
                                 double rate_bits, double *penalty_db);

/* Report `done` of `total` work units to the request's progress callback,
 * if any (done clamped to total). */
void qc_design_progress(const qc_design_request *req, size_t done, size_t total);


/* The set of allowed level vectors during level optimization: every
 * level in [lo, hi]; with a law, also E[x²] ≤ power and E[x] ≤ mean.
 * Convex, so the radial map toward a strictly feasible centre keeps a
 * vector inside and its order intact. */
typedef struct {
    size_t n;
    double lo, hi;
    const double *law; /* NULL: only the box (the law is designed)     */
    double power, mean; /* NaN: absent (power per real dimension)      */
    int bounded;        /* the set is bounded                         */
    double *centre;     /* owned, sorted, strictly feasible            */
} qc_level_set;

/* Build the set for `n` levels with law `law` (NULL for the capacity
 * objective) from the constraints; `pattern` (n values) shapes the
 * centre. QC_EINFEASIBLE when no level vector meets the constraints. */
qc_status qc_level_set_init(qc_level_set *s, const qc_constraints *c, const double *law,
                            const double *pattern, size_t n, unsigned dimensions);
void qc_level_set_clear(qc_level_set *s);
/* Sort x and pull it toward the centre until it is feasible. */
void qc_level_set_project(const qc_level_set *s, double *x);

/* ---- input_design.c -------------------------------------------------- */

/* qc_design: the alphabet stages (constraints, QAM, GMI, level search,
 * dispersion and blocklength rates) around qc_design_thresholds. */
qc_status qc_input_design(const qc_design_request *req, qc_design_result *res);

/* ---- ppm_design.c ------------------------------------------------------ */

/* qc_design for pulse-position modulation (req->channel.ppm_slots ≥ 2):
 * the per-slot thresholds, the certified soft rate per symbol, the hard
 * receiver at its best threshold and the unquantized reference. */
qc_status qc_ppm_design(const qc_design_request *req, qc_design_result *res);

/* iq_polar.c: the probabilities of polar cells by a Fourier series in the
 * angle (without a phase error, for a point more than about 33 σ from
 * the origin or one 2^12 angles do not settle, by direct adaptive
 * quadrature over each cell's angles). A workspace holds
 * the phase error's characteristic function, the FFT plans and the
 * quadrature's workspace for one noise and one set of cells (one
 * thread). */
typedef struct qc_polar_series qc_polar_series;
qc_status qc_polar_series_alloc(const qc_iq_noise *noise, qc_polar_series **out);
/* Frees w and the workspaces of its other lanes. */
void qc_polar_series_free(qc_polar_series *w);
/* Lanes for n threads: w is lane 0, and workspaces for the same noise are
 * chained to it up to lane n − 1 (kept, and freed with w). A row computed
 * in any lane has the same bits. QC_ENOMEM (the lanes made so far stay). */
qc_status qc_polar_series_lanes(qc_polar_series *w, size_t n);
/* Lane i of w (i below the n of a successful qc_polar_series_lanes). */
qc_polar_series *qc_polar_series_lane(qc_polar_series *w, size_t i);
/* Row of point (x, y): P(ring a, sector p) at row[a·P + p], not yet
 * normalized; *err raised to the bound on how much the last doubling of
 * the series moved any cell (direct quadrature: its error estimate).
 * With rays not NULL, also what qc_polar_rays gives, from the same series.
 * QC_ENOCONV if 2^22 angles do not settle it (with a phase error) or the
 * quadrature does not reach its tolerance; QC_ENOMEM. */
qc_status qc_polar_row(qc_polar_series *w, const qc_iq_cells *q, double x, double y,
                       double sigma, double *row, double *err, double *rays);
/* The density of point (x, y) integrated along each sector start across
 * each ring, rays[a·P + p] = ∫ f(r, α_p) r dr over ring a, with the phase
 * error (a Fourier series convolved with its law; without a phase error,
 * far from the origin, the ring's closed form). The rate at which P(a,
 * sector p − 1) grows and P(a, sector p) shrinks as α_p grows. */
qc_status qc_polar_rays(qc_polar_series *w, const qc_iq_cells *q, double x, double y,
                        double sigma, double *rays);
/* The phase error's characteristic function c_k = E[e^{jkφ}] for k < n
 * (*ck, owned by w, valid until its next use) and *kcut ≤ n, the first k
 * from which c_k is negligible (below 1e-30). */
qc_status qc_polar_phase_law(qc_polar_series *w, size_t n, const double **ck, size_t *kcut);
/* Sector p of the cells q seen from a point at angle theta: its start
 * relative to the point, in [−π, π), and its width (2π for one sector). */
void qc_polar_sector(const qc_iq_cells *q, size_t p, double theta, double *lo, double *width);
/* Break points for adaptive quadrature over [lo, hi) (hi − lo ≤ 2π) of a
 * kernel peaked at angle 0 (mod 2π): lo, the peaks at 0 and 2π and
 * ±width around them where inside, hi; into pts (8 places); their count. */
size_t qc_polar_peak_breaks(double lo, double hi, double width, double *pts);
/* ∫_{r0}^{r1} f(r, θx + t) r dr: the density of a point at amplitude s
 * (angle θx) in circular Gaussian noise σ, integrated along the ray at
 * angle t from the point's across the ring [r0, r1) (r1 may be ∞). */
double qc_polar_ray_mass(double s, double sigma, double r0, double r1, double t);

/* iq_phase.c: averages over the residual phase error of noise
 * (phase_sd > 0) of nvec values f(φ) for a point at amplitude s in noise
 * σ per quadrature, each refined until no value changes by more than
 * QC_IQ_QUAD_TOL. f writes weight × its values at rotation φ into out (the
 * weight is the wrapped law p(φ) on the circle's trapezoidal rule; with
 * Gauss–Hermite rules 1 for a Gaussian error, the rule's weight times
 * p(φ)/N(φ; 0, sd²) for a Tikhonov one).
 * A workspace holds the
 * rules and room for at most the nvec given to alloc (one thread). */
typedef void (*qc_phase_fn)(double phi, double weight, void *ctx, double *out);
typedef struct qc_phase_average qc_phase_average;
qc_status qc_phase_average_alloc(const qc_iq_noise *noise, size_t nvec, qc_phase_average **out);
void qc_phase_average_free(qc_phase_average *a);
/* ∫ f(φ) p(φ) dφ added into out[0 .. nvec − 1]; *err raised to the last
 * refinement's change. QC_ENOCONV if 2^21 nodes on the circle do not
 * settle it. */
qc_status qc_phase_average_run(qc_phase_average *a, double s, double sigma, size_t nvec,
                               qc_phase_fn f, void *ctx, double *out, double *err);

/* iq_axes.c: a constellation's two axes, when its points are every pair
 * of an in-phase and a quadrature value, once each, and its law is the
 * product of its marginals. */
typedef struct {
    double *x, *px, *y, *py; /* sorted distinct values and marginal laws (one
                                allocation, owned by x)                      */
    size_t nx, ny;
} qc_iq_axes;
/* A law factors when |p(x, y) − p(x)·p(y)| is within this share of
 * p(x, y) + p(x)·p(y) for every point. */
#define QC_IQ_PRODUCT_LAW_TOL 1e-12
/* 1 when c factors so (each axis with at least two values), the axes
 * into *ax; 0 when it does not; −1 out of memory. Free ax with
 * qc_iq_axes_free whatever the answer. */
int qc_iq_plane_axes(const qc_plane *c, qc_iq_axes *ax);
void qc_iq_axes_free(qc_iq_axes *ax);
/* For every point of c, its index on the in-phase axis (ia) and on the
 * quadrature axis (ib) of ax. */
void qc_iq_point_axes(const qc_plane *c, const qc_iq_axes *ax, size_t *ia, size_t *ib);
/* iq_axis_planes.c: the two axes of such a constellation as one-dimensional
 * planes (each axis's values on the in-phase axis, its marginal law, and
 * with labels the bits that are functions of that axis), on which the
 * I/Q pair's MI or GMI and their gradient add without a phase error. */
typedef struct {
    qc_plane plane[2]; /* in-phase, quadrature; arrays in store, labels */
    double *store;
    size_t *labels;
} qc_iq_axis_planes;
/* *ok 1 with the planes when c factors over its axes and (with_labels,
 * when c has labels) every label bit is a function of one axis; *ok 0
 * otherwise (nothing to free). QC_ENOMEM. */
qc_status qc_iq_axis_planes_build(const qc_plane *c, int with_labels, qc_iq_axis_planes *out,
                                  int *ok);
void qc_iq_axis_planes_free(qc_iq_axis_planes *a);
/* 1 when both axes have the same values and law (shared thresholds). */
int qc_iq_axis_planes_same(const qc_iq_axis_planes *a);
/* The MI (gmi 0) or GMI (gmi 1) in bits of the I/Q pair's cells q, as the
 * sum over the axes; NaN on failure (*st says). keep (may be NULL):
 * receives the two axes' matrices (the caller frees them; on failure
 * those not built stay as they were). */
double qc_iq_axes_objective(const qc_iq_axis_planes *a, const qc_iq_noise *noise,
                            const qc_iq_cells *q, int gmi, qc_dmc **keep, qc_status *st);
/* Its gradient in the in-phase (g_i) and quadrature (g_q) thresholds,
 * given the two axes' matrices ch (as qc_iq_axes_objective keeps them). */
qc_status qc_iq_axes_gradient(const qc_iq_axis_planes *a, const qc_iq_noise *noise,
                              const qc_iq_cells *q, qc_dmc *const *ch, int gmi, double *g_i,
                              double *g_q);

/* iq_channel.c: one axis of the I/Q pair, out[k] = P(t_{k−1} ≤ v + n <
 * t_k) for k = 0 .. nt (t_{−1} = −∞, t_nt = ∞), n ~ N(0, σ²). */
void qc_iq_axis_probs(double v, double sigma, const double *t, size_t nt, double *out);
/* iq_channel.c: qc_iq_channel, and for polar cells each point's
 * sector-start densities (qc_polar_rays) from the same series into
 * rays[x·ny + a·P + p] (ny cells per point; rays may be NULL); series:
 * the polar cells' workspace, for this noise, kept from one matrix to the
 * next by a search (NULL: one for this matrix). */
qc_status qc_iq_channel_rays(const qc_plane *c, const qc_iq_noise *noise,
                             const qc_iq_cells *q, qc_dmc **out, double *quad_err,
                             double *rays, qc_polar_series *series);

/* iq_gradient.c: the gradient of the MI (gmi = 0) or the BICM GMI
 * (gmi = 1, in bits) of the polar cells q in the noise (with or without a
 * phase error), given their matrix ch (qc_iq_channel), with respect to
 * the radii (g_radii, q->nradii values) and the sector starts (g_phases,
 * q->nphases values, per radian). Under a phase error, rays (not NULL)
 * holds every point's sector-start densities as qc_iq_channel_rays left
 * them; NULL: computed here. QC_EINVAL if ch does not match; QC_ENOCONV;
 * QC_ENOMEM. */
qc_status qc_polar_gradient(const qc_plane *c, const qc_iq_noise *noise, const qc_iq_cells *q,
                            const qc_dmc *ch, const double *rays, int gmi, double *g_radii,
                            double *g_phases);
/* The same for the I/Q pair's cells q: in the in-phase thresholds (g_i,
 * q->nti values) and the quadrature thresholds (g_q, q->ntq values). */
qc_status qc_product_gradient(const qc_plane *c, const qc_iq_noise *noise,
                              const qc_iq_cells *q, const qc_dmc *ch, int gmi, double *g_i,
                              double *g_q);

/* iq_mirror.c: the I/Q pair's thresholds ti (nti) and tq (ntq) set exactly
 * symmetric about the centre of each axis across which the constellation
 * c is its own mirror image (points and law; for the GMI, gmi 1, labels
 * up to one fixed bit flip), where they mirror one another to within
 * 1e-9 of their smallest gap; shared thresholds (tq a copy of ti) only
 * where both axes mirror about the same centre. Returns how many axes
 * moved (0 to 2). */
int qc_iq_snap_mirror(const qc_plane *c, int gmi, int shared, double *ti, size_t nti,
                      double *tq, size_t ntq);

/* iq_entry.c: a request with channel.iq (a 2-D constellation through the
 * I/Q pair or the polar quantizer). */
qc_status qc_iq_request_design(const qc_design_request *req, qc_design_result *res);
/* ---- shaping.c -------------------------------------------------------- */

/* qc_design for a request with input.shaping: the Maxwell–Boltzmann law
 * (given, from its entropy, or searched for the objective), the levels
 * scaled to the uniform law's power, and the shaping gain. */
qc_status qc_shaped_design(const qc_design_request *req, qc_design_result *res);

/* ---- figures.c -------------------------------------------------------- */

/* Hard-decision error rates, Q-factor, NGMI, rates in the trade's units,
 * photon efficiency and the FEC outcome of a finished result (its
 * channel, law, levels, dimensions, rate and GMI set). */
qc_status qc_design_figures(const qc_design_request *req, qc_design_result *r);

/* ---- level_search.c -------------------------------------------------- */

/* Evaluate the objective at the levels x (n of them): a complete design
 * into *res (the caller clears it). */
typedef qc_status (*qc_level_design)(void *ctx, const double *x, qc_design_result *res);

/* Nelder–Mead (GSL nmsimplex2) over the level vector projected into `set`,
 * from `starts` (≥ 1) starting points: the given levels, equally spaced
 * levels filling the set, and perturbations of the best found (fixed
 * seed). threads_ok: `design` may run in two threads at once (the first
 * two starts then do, outside any parallel construct). best_out receives
 * the best levels (sorted), *rate_bits their objective, *evaluations the
 * designs run. */
qc_status qc_level_search(const qc_level_set *set, const double *start, size_t starts,
                          int threads_ok, qc_level_design design, void *ctx,
                          double *best_out, double *rate_bits, size_t *evaluations);
/* Most designs one start of that search runs for n levels. */
size_t qc_level_search_budget(size_t n);

/* Channels with memory (memory_design.c): check the request's memory
 * part before the design; after it, the simulated rates and the uniform
 * quantizer's full scale for the channel with memory. */
qc_status qc_memory_check(const qc_design_request *req);
qc_status qc_memory_design(const qc_design_request *req, qc_design_result *res);

#endif

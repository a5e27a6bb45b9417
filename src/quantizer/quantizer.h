/* quantizer.h — internal interfaces of the threshold-design module
 * (src/quantizer): cell probabilities into reusable storage, the MI of a
 * threshold vector with its gradient, and the design strategies that
 * qc_design dispatches to. Not installed. */
#ifndef QC_QUANTIZER_H
#define QC_QUANTIZER_H

#include "core/internal.h"
#include "quantcap/quantizer.h"

/* ---- cell_mi.c: I(X;Y_q) as a function of the thresholds ------------- */

/* How far the rate with each level's tails clipped at its support (0 and
 * 1 beyond it, qc_discretize_clipped) may lie from the exact rate, in
 * bits: the support holds all but ~1e-15 of a level's mass. */
#define QC_CLIP_RATE_BITS 1e-13
#define QC_CLIP_RATE_NATS (QC_CLIP_RATE_BITS / QC_LOG2E)

/* Levels from which searches rate the clipped tails where the exact rate
 * would decide the same: a wide alphabet costs levels × cells a rate, of
 * which a level's support reaches a few hundred cells; a small one is
 * cheap to rate exactly, and reaches saturation at the SNRs it is used
 * at, where the far tails alone tell apart thresholds of equal rate. */
#define QC_CLIP_MIN_LEVELS 64

typedef struct {
    const qc_model *model;
    const double *levels;
    const double *input; /* the law; may be changed between evaluations */
    size_t nlevels;
    size_t nt;           /* thresholds: K − 1 */
    qc_dmc *channel;     /* nlevels × K, the last evaluated channel (the
                            rows of levels the law does not send are 0) */
    double *lo, *hi;     /* scratch, nt each */
    double *q;           /* output law, K */
    double *log_q;       /* log q(c), K */
    double *lr;          /* log(P(c|x)/q(c)), nlevels × K (rows sent) */
    double *sup_lo, *sup_hi; /* each level's support (the model's interval
                                holding all but ~1e-15 of its mass)     */
    size_t *band;        /* clip: row x's cells band[2x] .. band[2x + 1]
                            are those its support reaches (others 0)    */
    size_t *written;     /* row x's cells [written[2x], written[2x + 1])
                            may be nonzero (qc_discretize_sent)         */
    int clip;            /* 1: outside its support a level's tails are 0
                            and 1 and its density 0 (qc_discretize_clipped),
                            which moves the rate by < QC_CLIP_RATE_BITS;
                            set by searches whose result is rated again
                            exactly */
    int supports_ordered; /* both ends of the supports never fall from one
                             level to the next (qc_cell_mi_reach)       */
    double *mean, *inv_var; /* a Gaussian law given each level
                               (QC_MODEL_GAUSSIAN_LAW): its mean and
                               1/variance, whose density has the slope
                               −(y − mean)·f/variance; NULL otherwise   */
} qc_cell_mi;

/* Workspace for K − 1 = nt thresholds. */
qc_status qc_cell_mi_alloc(const qc_model *model, const double *levels,
                           const double *input, size_t nlevels, size_t nt,
                           qc_cell_mi **out);
void qc_cell_mi_free(qc_cell_mi *w);

/* Whether level x's tails and density at y are computed (always, unless
 * the workspace clips and y lies outside the level's support). */
static inline int qc_cell_mi_inside(const qc_cell_mi *w, size_t x, double y)
{
    return !w->clip || (y > w->sup_lo[x] && y < w->sup_hi[x]);
}

/* The levels *x0 .. *x1 − 1 outside which none is inside at y
 * (qc_cell_mi_inside): when the workspace clips and its supports are
 * ordered, the run of levels whose support holds y, found by bisection;
 * otherwise all levels. */
void qc_cell_mi_reach(const qc_cell_mi *w, double y, size_t *x0, size_t *x1);

/* I(X;Y_q) in nats for sorted thresholds t (length w->nt); if grad is
 * not NULL, also ∂I/∂t_j = Σ_x r(x) f(t_j|x) [log(P(j|x)/q(j)) −
 * log(P(j+1|x)/q(j+1))] (continuous outputs only). Leaves the channel in
 * w->channel. */
qc_status qc_cell_mi_eval(qc_cell_mi *w, const double *t, double *mi_nats,
                          double *grad);

/* ---- a rate as a function of the thresholds --------------------------- */

/* Objective to maximize: *value (nats) for sorted thresholds t[0..nt). */
typedef qc_status (*qc_threshold_objective)(void *ctx, const double *t,
                                            size_t nt, double *value);

/* Whether the channel at thresholds t (w->nt of them), last evaluated by
 * qc_cell_mi_eval, is its own mirror image: the law and the thresholds
 * symmetric and P(k|x) = P(K − 1 − k | n − 1 − x), to the accuracy of
 * the Newton steps that place thresholds (their last step leaves ~10⁻⁷ of
 * the spacing where the rate is flat). A model whose channel is
 * symmetric at every threshold is taken to be symmetric everywhere. */
int qc_cell_mi_mirrored(const qc_cell_mi *w, const double *t);

/* Whether the channel is its own mirror image about y = mid2/2 at any
 * thresholds, as far as the thresholds t (w->nt of them, whose channel w
 * holds) and their mirror image tell: the law symmetric, and the channel
 * at the mirror image of t (evaluated into w, which is left at t again)
 * the mirror image of the channel at t, to the tolerance of
 * qc_cell_mi_mirrored. A law given each level that is Gaussian with
 * variances that are not symmetric answers 0 without an evaluation. */
qc_status qc_cell_mi_model_mirrored(qc_cell_mi *w, const double *t, double mid2, int *mirrored);

/* The objective I(X;Y_q) of the workspace ctx (a qc_cell_mi), nats. */
qc_status qc_cell_mi_objective(void *ctx, const double *t, size_t nt, double *value);
/* The same with the workspace's tails clipped for this rate only (the
 * screen of the exact rate, qc_rate_screen). */
qc_status qc_cell_mi_clipped_objective(void *ctx, const double *t, size_t nt, double *value);

/* ---- uniform.c -------------------------------------------------------- */

/* Uniform quantizer with K = nt + 1 cells maximizing I(X;Y_q) under the
 * law and model of the workspace w (nt thresholds): cell width 2h/K on the
 * full-scale range [c − h, c + h], outer cells open. Continuous outputs:
 * a scan over h with c at the middle of the level span; from a maximum
 * of the scan, Newton steps on both ends of the range
 * (qc_uniform_newton); at an end of the scan, on a plateau or where
 * Newton cannot settle, the Nelder–Mead simplex on both ends. One
 * threshold: the scan, then Newton steps on it. A density with kinks
 * (QC_MODEL_KINKED_DENSITY): the scan over 33 centres as well, then
 * Brent's search and the simplex. Counts: integer first threshold
 * and integer step. t_out holds nt thresholds; *evals (may be NULL)
 * counts rate evaluations. */
qc_status qc_uniform_search(const qc_model *model, const double *levels,
                            size_t nlevels, size_t nt, qc_cell_mi *w, double *t_out,
                            double *value_out, size_t *evals);

/* The range [*lo_end, *hi_end] of the uniform quantizer with w->nt
 * thresholds raised to a local maximum of I(X;Y_q) by damped Newton steps
 * on the exact gradient and curvature in the two ends (uniform_newton.c;
 * one threshold, (a + b)/2: both ends move together);
 * `scale` as for qc_refine_continuous. Steps that lower the rate are not
 * taken. *mi_nats: the rate at the result (−∞ when the range given holds
 * no increasing thresholds); *evals is raised by the rate evaluations;
 * *converged says whether the steps fell below the resolution (0: no
 * finite curvature, or the iteration cap). Leaves the workspace's channel
 * at the result. */
qc_status qc_uniform_newton(qc_cell_mi *w, double scale, double *lo_end, double *hi_end,
                            double *mi_nats, size_t *evals, int *converged);

/* The nt thresholds a + (b − a)·j/(nt + 1), j = 1 … nt, of the uniform
 * quantizer on [a, b] into t. */
void qc_uniform_thresholds(double a, double b, size_t nt, double *t);

/* qc_tidy_thresholds; screen: where the rule can only remove redundant
 * thresholds (more than are centred, continuous outputs), first rate the
 * merges on the clipped channel and leave t without an exact rate when
 * each costs more than the budget plus twice the clipping's error (the
 * result is the one the exact rate alone gives). qc_tidy_thresholds
 * screens wide alphabets (QC_CLIP_MIN_LEVELS). */
qc_status qc_tidy_thresholds_screened(const qc_model *model, const double *levels,
                                      const double *input, size_t nlevels, size_t nt,
                                      double eps_nats, int screen, double *t);

/* A cheaper rate within err nats of another (the clipped rate of the
 * exact one): a step it puts more than eps + 2·err below the start costs
 * the other rate more than eps too, and need not be rated by it. */
typedef struct {
    qc_threshold_objective f;
    void *ctx;
    double err;
} qc_rate_screen;

/* Where the rate is flat in the range (saturation), a reproducible range
 * among the equally good ones: the half-width h, then the centre c, each
 * moved to the middle of the interval over which `f` stays within eps of
 * its value at t (continuous outputs, nt ≥ 2; counts: t is unchanged).
 * screen (may be NULL) tells steps that cost more than eps without
 * rating them by f; the result is the one f alone gives. */
qc_status qc_uniform_tidy(const qc_model *model, const double *levels, size_t nlevels,
                          size_t nt, qc_threshold_objective f, void *ctx,
                          const qc_rate_screen *screen, double eps, double *t);

/* ---- lloyd_max.c ------------------------------------------------------ */

/* Minimum-MSE quantizer of Y under the mixture Σ r(x) f(y|x) with K = nt
 * + 1 cells (Lloyd 1982, Max 1960). t: nt thresholds out (and in, as the
 * start, when warm_start is set; else the companded start for continuous
 * outputs, the blended quantiles for counts), recon_out: K reconstruction
 * points (conditional means). max_rounds caps the rounds (0: the default
 * QC_LLOYD_MAX_ROUNDS); rep (may be NULL) says how it ended. Not reaching
 * the tolerance is not an error: rep->converged is 0. */
#define QC_LLOYD_MAX_ROUNDS 5000
typedef struct {
    size_t rounds;    /* centroid evaluations (one per Lloyd or Newton round) */
    size_t newton;    /* of which accepted Newton steps                        */
    int converged;    /* 1: residual ≤ tolerance (counts: no threshold moves)  */
    double residual;  /* max_j |t_j − (c_j + c_{j+1})/2| at the result         */
    double tolerance; /* 1e-12 × width of the union of the supports            */
    double mse;       /* mean-square error about the reconstruction points     */
} qc_lloyd_report;
qc_status qc_lloyd_max(const qc_model *model, const double *levels,
                       const double *input, size_t nlevels, size_t nt,
                       int warm_start, size_t max_rounds, double *t, double *recon_out,
                       qc_lloyd_report *rep);

/* ---- fine_grid.c ------------------------------------------------------ */

typedef struct {
    size_t n;        /* fine cells */
    double *bounds;  /* n − 1 strictly increasing boundaries */
    qc_dmc *p;       /* nlevels × n cell probabilities */
    int exact;       /* counts: every count of the support has its cell */
} qc_fine_grid;

/* Default number of fine cells for K cells of a count output (see
 * qc_design_request). */
size_t qc_fine_cells_default(size_t cells);

/* Noise scale of the levels sent with positive probability: the
 * smallest standard deviation of Y given a level (the model's moments;
 * without them the support's width / 16.6, the ±8.3σ of a Gaussian);
 * when every level is narrower than doubles resolve, the union of the
 * supports' width / 16.6, and 1 if that is empty. Always > 0. */
double qc_noise_scale(const qc_model *model, const double *levels, const double *input,
                      size_t nlevels);

/* qc_discretize_into, but thresholds outside a level's support (the
 * model's interval holding all but ~1e-15 of its mass) get the tails 0
 * and 1 without a model call: the automatic grid's channel, where a
 * level's far cells are exactly empty (discretize.c). */
qc_status qc_discretize_clipped(const qc_model *model, const double *levels,
                                size_t nlevels, const double *t, size_t n,
                                double *lo, double *hi, qc_dmc *d);

/* The rows of the levels `input` sends (probability > 0) as
 * qc_discretize_into (clip 0) or qc_discretize_clipped (clip 1) computes
 * them; the rows of the others are set to 0 without a model call, so
 * that a law on few of many levels pays only for those it sends. For the
 * rates of that law, which never read those rows. written: NULL, or two
 * entries per row, the cells [written[2x], written[2x + 1]) of row x that
 * may be nonzero (all others 0; both 0 for a row of zeros): only what
 * lies there outside the new band is cleared, and each becomes its row's
 * new band, so that a clipped channel of many levels, rated again and
 * again, does not clear whole rows. */
qc_status qc_discretize_sent(const qc_model *model, const double *levels,
                             const double *input, size_t nlevels, const double *t,
                             size_t n, int clip, double *lo, double *hi, size_t *written,
                             qc_dmc *d);

/* The two tails of Y given level x at y: *lo = P(Y < y), *hi = P(Y ≥ y)
 * (the model's joint tails where it has them, as the discretizer takes
 * them). */
void qc_tails_at(const qc_model *model, double x, double y, double *lo, double *hi);

/* How many of the increasing t[0..n) lie at or below y (strict: below y). */
size_t qc_count_below(const double *t, size_t n, double y, int strict);

/* Whether neither end of the supports [lo[x], hi[x]] falls from one level
 * to the next (levels in increasing order, noise that does not shrink
 * faster than they rise), so that those holding a point form a run. */
int qc_supports_ordered(const double *lo, const double *hi, size_t n);

/* For ordered supports: the run of levels *a .. *b − 1 whose supports
 * hold y, lo[x] < y < hi[x] (closed: lo[x] ≤ y ≤ hi[x]), by bisection. */
void qc_supports_holding(const double *lo, const double *hi, size_t n, double y, int closed,
                         size_t *a, size_t *b);

/* P(a ≤ Y < b) from the tails at a and at b, taken from the side on which
 * both are small, as the discretizer does (a = −∞: tails 0 and 1; b = +∞:
 * tails 1 and 0). May be slightly negative from rounding. */
static inline double qc_cell_between(double lo_a, double hi_a, double lo_b, double hi_b)
{
    return hi_a < lo_b ? hi_a - hi_b : lo_b - lo_a;
}

/* The grid of the nb boundaries `bounds` (taken over: freed on failure):
 * its nlevels × (nb + 1) cell probabilities (clip: qc_discretize_clipped,
 * a level's cells beyond its support exactly empty). */
qc_status qc_fine_grid_from_bounds(const qc_model *model, const double *levels,
                                   size_t nlevels, double *bounds, size_t nb, int clip,
                                   qc_fine_grid *g);

/* ---- scale_grid.c ---------------------------------------------------- */

/* Size of the automatic grid for K = cells cells, continuous outputs:
 * max(2K, ⌈c·U⌉), U the width of the union of the supports in the
 * variance-stabilizing coordinate u = ∫ dy/s(y) (s the local noise
 * scale, see scale_grid.c) and c = min(4, max(2, K/4)), at most
 * qc_fine_cells_default(K). */
size_t qc_coarse_cells(const qc_model *model, const double *levels, const double *input,
                       size_t nlevels, size_t cells);

/* The n − 1 boundaries (into out) of n cells of equal width in u. */
qc_status qc_scale_bounds(const qc_model *model, const double *levels, const double *input,
                          size_t nlevels, size_t n, double *out);

/* The automatic grid of the optimal strategy for K = cells cells:
 * continuous outputs, qc_coarse_cells(K) cells of equal width in u;
 * counts, qc_fine_grid_build with qc_fine_cells_default(K). */
qc_status qc_coarse_grid_build(const qc_model *model, const double *levels,
                               const double *input, size_t nlevels, size_t cells,
                               qc_fine_grid *g);

/* Fine grid of about `n` cells for the levels (n ≥ cells ≥ 2).
 * Continuous outputs: boundaries at the quantiles of ½·(mixture law under
 * `input`) + ½·(uniform law on the union of the supports), so there are
 * fine cells both where the mass is and in the valleys between levels.
 * Counts: one cell per count 0, 1, …, M − 1 and one for ≥ M (M the top of
 * the support, at least cells − 1) when M + 1 ≤ max(n, 65536); otherwise
 * the rounded continuous construction. */
qc_status qc_fine_grid_build(const qc_model *model, const double *levels,
                             const double *input, size_t nlevels, size_t n,
                             size_t cells, qc_fine_grid *g);
void qc_fine_grid_clear(qc_fine_grid *g);

/* The n − 1 boundaries (into out) of n cells equal in G = ½·mixture law
 * under `input` + ½·uniform law on the union of the supports. */
qc_status qc_blend_quantiles(const qc_model *model, const double *levels,
                             const double *input, size_t nlevels, size_t n,
                             double *out);

/* Count outputs: up to n − 1 distinct integer boundaries in [1, top] at
 * the rounded-up quantiles of G (*nb of them). When that gives fewer than
 * cells − 1 and top ≥ n, evenly spaced counts instead; otherwise the
 * caller completes the list. */
qc_status qc_count_quantiles(const qc_model *model, const double *levels,
                             const double *input, size_t nlevels, double top,
                             size_t n, size_t cells, double *out, size_t *nb);

/* nt thresholds whose density follows the high-resolution MI rule
 * ∝ (f(y)·J(y))^{1/3} (see fine_grid.c), continuous outputs only. */
qc_status qc_companding_thresholds(const qc_model *model, const double *levels,
                                   const double *input, size_t nlevels, size_t nt,
                                   double *out);

/* nt thresholds at the quantiles of the point density λ sampled at
 * lo + k·step (k < m; non-finite or negative samples count as 0), with
 * a 1e-3 share of the uniform density mixed in so that its trapezoid
 * cumulative (into cum, m entries) is strictly increasing; `who` names the
 * caller in the error when two thresholds coincide on the grid. */
qc_status qc_density_quantiles(double *lam, double *cum, size_t m, double lo, double step,
                               size_t nt, const char *who, double *out);

/* Union of the supports of all levels. */
void qc_levels_support(const qc_model *model, const double *levels,
                       size_t nlevels, double *lo, double *hi);

/* ---- refine.c --------------------------------------------------------- */

/* The damped Newton iterations' settings (refine.c, uniform_newton.c). */
#define QC_NEWTON_MAX_ITER 50
#define QC_NEWTON_MAX_DAMP 12     /* damping increases per Newton iteration */
#define QC_NEWTON_SLOPE_STEP 1e-5 /* density slope difference, × noise scale */
#define QC_NEWTON_TOL 1e-11       /* stop when steps fall below this × spacing */
#define QC_NEWTON_ROUNDING 1e-8   /* a rejected step this small (× spacing) ends */
#define QC_NEWTON_QUADRATIC 1e-6  /* an undamped step this small (× spacing) ends:
                                     the next would be below QC_NEWTON_TOL */

/* Continuous refinement of sorted thresholds t (w->nt of them) to a local
 * maximum of I(X;Y_q): damped Newton steps on the exact gradient and the
 * exact tridiagonal Hessian (refine.c); `scale` is the noise scale
 * (qc_noise_scale), which sets the difference step of the density's
 * slope. A step is kept only if the rate does not drop, so on return t is
 * never worse than on entry; *mi_nats holds its MI, *iterations (may be
 * NULL) the Newton iterations. */
qc_status qc_refine_continuous(qc_cell_mi *w, double scale, double *t, double *mi_nats,
                               size_t *iterations);
/* The same, for a trial start that only matters if it can beat
 * `target` (nats): after one iteration it stops once the rate plus four
 * times the gain the Newton model still predicts stays below target (or
 * the model predicts nothing finite), and once every threshold is within
 * 5 % of its spacing of one of `nhomes` local maxima already known
 * (`homes`, w->nt thresholds each, one after the other: the incumbent,
 * former ones, their mirror images), where it would end. */
qc_status qc_refine_trial(qc_cell_mi *w, double scale, double target, const double *homes,
                          size_t nhomes, double *t, double *mi_nats, size_t *iterations);
/* The same as qc_refine_continuous with the first threshold (hold_first)
 * and the last (hold_last) held where they are, towards the local maximum
 * of the cells between the held ends, in at most `steps` Newton
 * iterations (0: until converged); relocate.c rates one slot's thresholds
 * this way. */
qc_status qc_refine_held(qc_cell_mi *w, double scale, int hold_first, int hold_last,
                         size_t steps, double *t, double *mi_nats, size_t *iterations);
/* Gradient g, Hessian diagonal hd and off-diagonal ho (nt − 1) of
 * I(X;Y_q) at the thresholds t whose channel, output law and log ratios
 * the workspace holds (qc_cell_mi_eval was just called at t), by the exact
 * formulas of refine.c; h is the difference step of the density's slope.
 * f: nt × nlevels scratch (f[j·nlevels + x] left holding the density at
 * t_j of each level x that reaches t_j, qc_cell_mi_reach; the other
 * entries are not set), F: nt.
 * Returns 0 when they are not finite (densities beyond the range of
 * doubles, as in the noiseless limit). For a large channel, and a model
 * several threads may evaluate at once, the thresholds are shared among
 * OpenMP threads; each sum runs over the levels in order in one thread,
 * as in the serial loop. */
int qc_cell_mi_derivatives(const qc_cell_mi *w, const double *t, double h, double *g,
                           double *hd, double *ho, double *f, double *F);
/* Integer coordinate search for count thresholds (used when the fine grid
 * could not hold every count): each threshold moves by ±1, ±2, ±4 … while
 * the MI grows. */
qc_status qc_refine_counts(qc_cell_mi *w, double *t, double *mi_nats,
                           size_t *iterations);

/* ---- relocate.c ------------------------------------------------------ */

/* From refined thresholds t (rate *mi_nats, continuous outputs): move a
 * threshold from one slot (between the outputs of neighbouring levels) to
 * another, the moves rated first slot by slot (each slot's rate change
 * with one threshold fewer and one more, refined with its neighbours
 * held), the best then refined whole (qc_refine_trial); a move is kept
 * only if the rate rises, and rounds repeat while one does (a few). t and
 * *mi_nats are updated; *iterations (may be NULL) adds the Newton
 * iterations on the whole quantizer (not the slots' few steps each). */
qc_status qc_relocate_thresholds(qc_cell_mi *w, double scale, double *t, double *mi_nats,
                                 size_t *iterations);

/* ---- optimal.c -------------------------------------------------------- */

/* MI-optimal thresholds for the law `input` on the fine grid `g` (built
 * by qc_fine_grid_build for these levels; it may have been built for
 * another law): qc_dp_quantize, then refinement from the better of the DP
 * result and the companding rule. t_out: nt thresholds. */
qc_status qc_optimal_thresholds(const qc_model *model, const double *levels,
                                const double *input, size_t nlevels, size_t nt,
                                const qc_fine_grid *g, double *t_out,
                                double *mi_nats, size_t *iterations);

/* ---- unquantized_mi.c: pieces shared with unquantized_gmi.c ----------- */

/* Each level's support [lo[i], hi[i]] (the model's interval holding all
 * but ~1e-15 of its mass), the order of the levels by where it starts,
 * those starts in that order and the widest support's width. */
qc_status qc_supports_sorted(const qc_model *model, const double *levels, size_t n,
                             double *lo, double *hi, size_t *order, double *lo_sorted,
                             double *width);

/* First k with sorted[k] ≥ v (n when none). */
size_t qc_first_at_or_above(const double *sorted, size_t n, double v);

/* The mass of a level outside its support [lo, hi] (from the model's
 * CDFs), at least 1e-15 (what the support's contract allows), at most 1. */
double qc_support_tail(const qc_model *model, double level, double lo, double hi);

/* ∫ integrand over the union of the supports [lo[i], hi[i]] of the levels
 * ov[0..nov), cut into panels no wider than a sixteenth of the narrowest
 * support that starts or ends in them, by GSL's QAGS on each; *err sums
 * the panels' error estimates. `what` names the integral in a failure. */
qc_status qc_integrate_union(const double *lo, const double *hi, const size_t *ov,
                             size_t nov, double (*integrand)(double, void *), void *ctx,
                             const char *what, double *val, double *err);

/* ---- decisions.c ------------------------------------------------------ */

/* qc_map_boundaries by the scan of the support on every model (Gaussian-
 * law models otherwise take the crossings of their scores): what the
 * crossings are checked against. */
qc_status qc_map_boundaries_scanned(const qc_model *model, const double *levels,
                                    const double *law, size_t n, double **out, size_t *nout);

/* ---- unquantized_memo.c ---------------------------------------------- */

/* Lookups answered from the store and lookups that computed (for tests
 * and measurements); memo NULL gives zeros. */
void qc_unquantized_memo_counts(qc_unquantized_memo *memo, size_t *hits, size_t *misses);

#endif

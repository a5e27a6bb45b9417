/* quantcap.h — the public interface of libquantcap.
 *
 * quantcap turns a noise model of an optical or fiber receiver into the
 * transition matrix of a quantized channel, rates that matrix with a
 * Blahut–Arimoto capacity engine that certifies its answer with an upper
 * bound, and designs thresholds, input laws and levels.
 *
 * Conventions:
 *  - every function that can fail returns qc_status (QC_OK = 0); the detail
 *    message of the last failure in the calling thread is qc_last_error();
 *  - the library never prints, exits or aborts;
 *  - logarithms are natural inside; functions and fields named *_bits are
 *    in bits;
 *  - objects come in alloc/free pairs and every _free(NULL) does nothing.
 *
 * SPDX-License-Identifier: GPL-3.0-or-later
 */
#ifndef QUANTCAP_H
#define QUANTCAP_H

#include <stddef.h>

#ifdef __cplusplus
extern "C" {
#endif

/* ------------------------------------------------------------------ */
/* Status codes                                                        */
/* ------------------------------------------------------------------ */

typedef enum {
    QC_OK = 0,
    QC_EINVAL,      /* an argument or parameter is out of its domain      */
    QC_EFORMAT,     /* a file or text is malformed                        */
    QC_EIO,         /* a file cannot be opened, read or written           */
    QC_EINFEASIBLE, /* the constraints cannot be met by any input         */
    QC_ENOMEM,      /* out of memory                                      */
    QC_ENOCONV,     /* iteration limit reached before the tolerance       */
    QC_ENUMERIC,    /* a numerical routine failed (non-finite, GSL error) */
    QC_STATUS_COUNT
} qc_status;

/* Short fixed description of a status code ("invalid argument", ...). */
const char *qc_strerror(qc_status status);

/* Detail message of the last failure in this thread, naming the culprit
 * (parameter, file and line, matrix row). Empty string if none. */
const char *qc_last_error(void);

/* True for statuses caused by the caller's input (usage/input error). */
int qc_status_is_input_error(qc_status status);

/* ------------------------------------------------------------------ */
/* Discrete memoryless channels                                        */
/* ------------------------------------------------------------------ */

/* Row-stochastic nx × ny matrix, row-major: p[x*ny + y] = P(y|x). */
typedef struct {
    size_t nx;
    size_t ny;
    double *p;
} qc_dmc;

#define QC_DMC_ROW_TOL 1e-9 /* |row sum − 1| allowed by qc_dmc_check */
#define QC_DMC_MAX_DIM ((size_t)1 << 24) /* largest nx or ny accepted */

/* Allocate an nx × ny matrix of zeros. */
qc_status qc_dmc_alloc(size_t nx, size_t ny, qc_dmc **out);
void qc_dmc_free(qc_dmc *dmc);

/* Entries finite and ≥ 0, every row summing to 1 within QC_DMC_ROW_TOL.
 * On failure the message names the first bad row (1-based) and its sum. */
qc_status qc_dmc_check(const qc_dmc *dmc);

/* Parse a plain-text matrix: one row per line, numbers separated by
 * whitespace and/or commas, '#' starts a comment, blank lines ignored.
 * `name` is used in messages ("name:LINE: ..."). The matrix is checked
 * with qc_dmc_check. */
qc_status qc_dmc_parse(const char *text, size_t len, const char *name,
                       qc_dmc **out);
/* Read and parse a file; a directory or unreadable path is QC_EIO. */
qc_status qc_dmc_read(const char *path, qc_dmc **out);

/* ------------------------------------------------------------------ */
/* Information measures (natural logarithms)                           */
/* ------------------------------------------------------------------ */

#define QC_LOG2E 1.44269504088896340736 /* bits per nat */

/* Entropy −Σ p log p with 0·log 0 = 0. */
double qc_entropy(const double *p, size_t n);
/* Binary entropy h(p) in nats. */
double qc_binary_entropy(double p);
/* Divergence Σ p log(p/q); +inf when some p > 0 meets q = 0. */
double qc_divergence(const double *p, const double *q, size_t n);
/* Output law q = r·P (length ny). */
void qc_output_law(const qc_dmc *dmc, const double *input, double *q);
/* I(X;Y) in nats for input law `input` (length nx, sums to 1). */
qc_status qc_mutual_information(const qc_dmc *dmc, const double *input,
                                double *mi_nats);

/* ------------------------------------------------------------------ */
/* Capacity engine: Blahut–Arimoto with certified bounds               */
/* ------------------------------------------------------------------ */

typedef enum {
    QC_BA_PLAIN = 0,       /* Blahut 1972 / Arimoto 1972 as published      */
    QC_BA_ACCELERATED = 1, /* natural-gradient step, adaptive step size    */
} qc_ba_method;

typedef struct {
    double tol_bits;       /* stop when upper − lower ≤ tol (default 1e-9) */
    size_t max_iterations; /* QC_ENOCONV past this (default 1000000)       */
    qc_ba_method method;   /* default QC_BA_ACCELERATED                    */
    const double *initial; /* starting input law (length nx), NULL: uniform */
    const double *costs;   /* per-input cost (length nx), NULL: none        */
    double budget;         /* average cost allowed, used when costs != NULL */
} qc_ba_options;

void qc_ba_options_default(qc_ba_options *opt);

typedef struct {
    double capacity_bits;    /* certified lower bound: I(r) at the final r */
    double upper_bound_bits; /* certified upper bound on capacity          */
    double gap_bits;         /* upper − lower at stop                      */
    size_t iterations;       /* BA iterations (summed over multiplier search) */
    int cost_active;         /* 1 if the budget constraint binds           */
    double cost;             /* average cost Σ r(x)c(x) (0 without costs)  */
    double multiplier;       /* Lagrange multiplier s, nats per unit cost  */
} qc_capacity_result;

/* Scratch memory for channels up to nx × ny, reusable across runs. */
typedef struct qc_ba_workspace qc_ba_workspace;
qc_status qc_ba_workspace_alloc(size_t nx, size_t ny, qc_ba_workspace **out);
void qc_ba_workspace_free(qc_ba_workspace *ws);

/* Capacity (or capacity–cost) of `dmc`. `ws` may be NULL (allocated
 * internally). `input_out` (length nx, may be NULL) receives the final
 * input law. QC_ENOCONV when the iteration limit is hit; the result then
 * still holds the bounds reached. QC_EINFEASIBLE when the budget is below
 * the cheapest input's cost.
 * Details: rows are used renormalized to sum to exactly 1; capacity_bits
 * is I(X;Y) of the returned law (which meets the budget); the upper
 * bound is max_x D(P(·|x) ‖ q) − s·(c_x − budget) at some output law q
 * and s ≥ 0; max_iterations caps the total over the multiplier search;
 * multiplier is the s that certifies the final upper bound (the slope
 * of C(budget), 0 when the budget does not bind). */
qc_status qc_capacity(const qc_dmc *dmc, const qc_ba_options *opt,
                      qc_ba_workspace *ws, qc_capacity_result *res,
                      double *input_out);

/* ------------------------------------------------------------------ */
/* Noise models                                                        */
/* ------------------------------------------------------------------ */

typedef enum {
    QC_OUTPUT_REAL = 0,  /* continuous output (a voltage, a current)     */
    QC_OUTPUT_COUNTS = 1 /* non-negative integer output (photon counts)  */
} qc_output_kind;

/* One named parameter of a model. A NaN default means "required". */
typedef struct {
    const char *name;    /* CLI flag is --name                          */
    const char *unit;    /* "" when dimensionless                       */
    const char *help;
    double default_value;
    double min;          /* smallest allowed value                      */
    double max;          /* largest allowed value                       */
    int min_exclusive;   /* 1: value must be > min                      */
} qc_param_spec;

#define QC_MODEL_MAX_PARAMS 8

typedef struct qc_model qc_model;

/* A noise model: the conditional law of the receiver output given the
 * transmitted level x. Cells are half-open: a threshold t separates
 * {y < t} from {y ≥ t}; for counts, thresholds are integers. */
typedef struct qc_model_type {
    const char *name;
    const char *summary;        /* one line for `quantcap models`        */
    qc_output_kind output;
    size_t nparams;
    const qc_param_spec *params;
    /* Extra checks beyond each parameter's range (may be NULL). */
    qc_status (*check)(const double *params);
    /* Per-instance state (may be NULL: stateless). */
    qc_status (*init)(const double *params, void **state);
    void (*destroy)(void *state);
    /* P(Y < t | x) and P(Y ≥ t | x); both accurate deep in their tails. */
    double (*below)(const qc_model *m, double x, double t);
    double (*above)(const qc_model *m, double x, double t);
    /* Density of Y at y given x (probability mass for counts). */
    double (*density)(const qc_model *m, double x, double y);
    /* An output interval holding all but ~1e-15 of the mass given x. */
    void (*support)(const qc_model *m, double x, double *lo, double *hi);
    /* Check that x is a valid input level (e.g. x ≥ 0 for intensity). */
    qc_status (*check_level)(const qc_model *m, double x);
} qc_model_type;

struct qc_model {
    const qc_model_type *type;
    double params[QC_MODEL_MAX_PARAMS];
    void *state;
};

extern const qc_model_type qc_model_gauss;

/* All registered model types, NULL-terminated. */
const qc_model_type *const *qc_model_types(void);
/* Look up a type by name; NULL if unknown. */
const qc_model_type *qc_model_type_find(const char *name);
/* Index of a parameter by name, or -1. */
int qc_model_param_index(const qc_model_type *type, const char *name);

/* Create a model instance. `params` holds type->nparams values in the
 * order of type->params (NaN = use the default). Every value is checked
 * against its range; the message names the parameter. */
qc_status qc_model_alloc(const qc_model_type *type, const double *params,
                         qc_model **out);
void qc_model_free(qc_model *model);

/* Check levels against the model (finite, allowed by check_level). */
qc_status qc_model_check_levels(const qc_model *model, const double *levels,
                                size_t nlevels);

/* ------------------------------------------------------------------ */
/* Discretizer                                                         */
/* ------------------------------------------------------------------ */

/* Check thresholds: finite, strictly increasing (and integers for
 * count outputs). The message names the offending threshold (1-based). */
qc_status qc_thresholds_check(const qc_model *model, const double *thresholds,
                              size_t nthresholds);

/* Transition matrix of levels → (nthresholds + 1) cells. Each cell
 * probability is a difference taken on the tail side where it does not
 * cancel, so cells far in a tail stay accurate; entries are never
 * negative or NaN, and each row is renormalized only if it is within
 * QC_DMC_ROW_TOL of 1 (otherwise QC_ENUMERIC). */
qc_status qc_discretize(const qc_model *model, const double *levels,
                        size_t nlevels, const double *thresholds,
                        size_t nthresholds, qc_dmc **out);

/* Mutual information with the unquantized output (continuous density or
 * ideal count resolution) for the given levels and input law, in nats.
 * Adaptive quadrature (GSL QAGS/QAGI) per level; the absolute error
 * estimate is returned in *abserr_nats (may be NULL). */
qc_status qc_unquantized_mi(const qc_model *model, const double *levels,
                            const double *input, size_t nlevels,
                            double *mi_nats, double *abserr_nats);


/* ------------------------------------------------------------------ */
/* Design: thresholds (and input law) for a model and an alphabet      */
/* ------------------------------------------------------------------ */

typedef enum {
    QC_OBJECTIVE_MI = 0,       /* I(X;Y_q) with the given (or uniform) law  */
    QC_OBJECTIVE_CAPACITY = 1, /* capacity of the quantized channel         */
} qc_objective;

typedef enum {
    QC_QUANTIZER_UNIFORM = 0, /* uniform cells, full-scale range optimized  */
    QC_QUANTIZER_FIXED,       /* thresholds given by the caller, evaluated  */
} qc_quantizer_kind;

#define QC_MAX_BITS 16

typedef struct {
    const qc_model *model;
    const double *levels;        /* nlevels input levels                     */
    size_t nlevels;
    const double *probabilities; /* input law for MI; NULL: uniform          */
    size_t cells;                /* K output cells (2^bits)                  */
    qc_objective objective;
    qc_quantizer_kind quantizer;
    const double *thresholds;    /* QC_QUANTIZER_FIXED: K − 1 thresholds     */
    double tol_bits;             /* engine tolerance; 0: 1e-9                */
} qc_design_request;

/* Fill a request with defaults (uniform quantizer, MI objective). */
void qc_design_request_default(qc_design_request *req);

typedef struct {
    double rate_bits;            /* the objective's value                    */
    double upper_bound_bits;     /* certified upper bound on the objective   */
    double unquantized_bits;     /* same levels and input law, no quantizer  */
    double unquantized_err_bits; /* quadrature error estimate of the above   */
    double loss_bits;            /* unquantized − rate                        */
    double tol_bits;             /* tolerance the rate is certified to       */
    size_t iterations;           /* engine iterations (capacity objective)   */
    size_t nthresholds;
    double *thresholds;          /* owned                                    */
    size_t nlevels;
    double *levels;              /* owned copy                               */
    double *input;               /* owned: the input law used (nlevels)      */
    qc_dmc *channel;             /* owned: the final transition matrix       */
} qc_design_result;

/* Design (or evaluate, for QC_QUANTIZER_FIXED) a quantizer. On failure
 * the result is left empty (safe to clear). */
qc_status qc_design(const qc_design_request *req, qc_design_result *res);
/* Release what a result owns and zero it; safe on a zeroed result. */
void qc_design_result_clear(qc_design_result *res);

#ifdef __cplusplus
}
#endif

#endif /* QUANTCAP_H */

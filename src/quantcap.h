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
    int max_exclusive;   /* 1: value must be < max                      */
} qc_param_spec;

#define QC_MODEL_MAX_PARAMS 8

typedef struct qc_model qc_model;

/* A noise model: the conditional law of the receiver output given the
 * transmitted level x. Cells are half-open: a threshold t separates
 * {y < t} from {y ≥ t}; for counts, thresholds are integers. */
/* The physical receiver whose quantities a model's parameters can be
 * derived from (qc_settings_build's physical route; src/models/frontend.c). */
typedef enum {
    QC_FRONTEND_NONE = 0, /* parameters are given directly                 */
    QC_FRONTEND_GAUSS,    /* PIN/APD current, noise at the mean power      */
    QC_FRONTEND_GAUSS_SD, /* PIN/APD current, signal-dependent noise       */
    QC_FRONTEND_APD,      /* APD electrons per slot (integrate and dump)   */
    QC_FRONTEND_PHOTONS,  /* photons counted per slot                      */
} qc_frontend_kind;

/* Settings keys the physical front ends take (for the `keys` lists of the
 * model types below). */
#define QC_KEYS_OPTICAL_POWER "received-dbm", "peak-dbm", "extinction-db"
#define QC_KEYS_PHOTODETECTOR                                                              \
    "responsivity", "thermal-density", "load-resistance", "temperature", "dark-current",   \
        "apd-gain", "apd-k"

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
    /* Mean and variance of Y given x (may be NULL: unknown). */
    qc_status (*moments)(const qc_model *m, double x, double *mean,
                         double *var);
    /* Optional SNR notion, used for SNR penalties of quantizers (leave
     * both NULL when the model has none; the penalty is then NaN).
     * snr: linear signal-to-noise ratio of `levels` sent with law `input`
     *   (gauss: E[x²]/σ²).
     * scale_snr: write into params_out (type->nparams values) the
     *   parameters of the same model type whose snr is `gain` (> 0) times
     *   this model's for the same levels and law, the levels unchanged
     *   (gauss: σ/√gain). Fails with a message naming the parameter when
     *   the scaled value leaves its range. */
    double (*snr)(const qc_model *m, const double *levels,
                  const double *input, size_t nlevels);
    qc_status (*scale_snr)(const qc_model *m, double gain, double *params_out);
    /* Settings keys beyond the parameters that apply to this model (its
     * front end, its SNR route, its data file), NULL-terminated; NULL:
     * none. A key that some other model lists and this one does not is
     * refused with this model (qc_settings_build). */
    const char *const *keys;
    /* The physical front end that derives the parameters (NONE: none). */
    qc_frontend_kind frontend;
    /* Words naming what snr computes, for reports (NULL with no snr). */
    const char *snr_definition;
    /* Units for text output: of the input levels and of the receiver
     * output (thresholds, reconstruction points). "level units" means the
     * unit the caller chose for the levels. NULL is read as "". */
    const char *level_unit;
    const char *output_unit;
} qc_model_type;

/* A model instance. Models with a state (apd caches per-level grids,
 * table holds its data) are used by one thread at a time: a sweep
 * creates one instance per thread. */
struct qc_model {
    const qc_model_type *type;
    double params[QC_MODEL_MAX_PARAMS];
    void *state;
};

extern const qc_model_type qc_model_gauss;
/* Signal-dependent Gaussian: sigma^2(x) = sigma0^2 + a x + b x^2. */
extern const qc_model_type qc_model_gauss_sd;
/* Photon counting: Y ~ Poisson(signal·x + background). */
extern const qc_model_type qc_model_poisson;
/* APD: Poisson primaries × McIntyre gain + Gaussian thermal noise,
 * exact law computed by FFT convolution. */
extern const qc_model_type qc_model_apd;
/* The Gaussian approximation of `apd` (same parameters). */
extern const qc_model_type qc_model_apd_gauss;
/* Optically pre-amplified direct detection: Y = ncx2(2m, 2x)/2. */
extern const qc_model_type qc_model_preamp;
/* Measured densities per level from a file (qc_model_table_load). */
extern const qc_model_type qc_model_table;

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

/* Mean and variance of the output given level x. QC_EINVAL when the
 * level is invalid or the model type has no moments hook. */
qc_status qc_model_moments(const qc_model *model, double x, double *mean,
                           double *var);

/* Create a `table` model from a text file of densities (format in
 * docs/formats.md). Errors name the file and line (QC_EFORMAT), or the
 * path (QC_EIO). */
qc_status qc_model_table_load(const char *path, qc_model **out);
/* The same from text in memory; `name` is used in messages. */
qc_status qc_model_table_parse(const char *text, size_t len, const char *name,
                               qc_model **out);
/* Levels of a table model (borrowed; valid while the model lives). */
qc_status qc_model_table_levels(const qc_model *model, const double **levels,
                                size_t *nlevels);

/* ------------------------------------------------------------------ */
/* Physical receiver front end (SI units; formulas in docs/models.md)  */
/* ------------------------------------------------------------------ */

/* Receiver of intensity-modulated light: PIN (gain 1) or APD. */
typedef struct {
    double responsivity;     /* R, A/W (> 0), required                     */
    double bandwidth;        /* electrical noise bandwidth B, Hz (> 0)     */
    double thermal_density;  /* input-referred noise current, pA/√Hz (≥ 0);
                                NaN: 4kT/R_L from the next two fields      */
    double load_resistance;  /* R_L, ohm (> 0), used if thermal_density NaN */
    double temperature;      /* T, kelvin (> 0), default 290                */
    double dark_current;     /* primary dark current I_d, A (≥ 0), default 0 */
    double gain;             /* APD mean gain M (≥ 1), default 1 (PIN)     */
    double ionization_ratio; /* k in [0, 1], default 0                     */
} qc_receiver;

/* Defaults: responsivity, bandwidth, thermal_density, load_resistance
 * NaN (to be given), temperature 290 K, no dark current, gain 1, k 0. */
void qc_receiver_default(qc_receiver *rx);

/* Excess noise factor F = kM + (1 − k)(2 − 1/M) (McIntyre 1966). */
qc_status qc_excess_noise_factor(double gain, double k, double *factor);

/* Noise variances in A² over the receiver bandwidth at optical power
 * `power_w` (W): shot = 2q(R·P + I_d)M²F·B, thermal = i_n²·B with
 * i_n² = thermal_density² or 4kT/R_L. Either output may be NULL. */
qc_status qc_receiver_noise(const qc_receiver *rx, double power_w,
                            double *shot_var, double *thermal_var);

/* dBm → W. QC_EINVAL when not finite. */
qc_status qc_dbm_to_watt(double dbm, double *watt);

/* Optical powers (W) of `nlevels` ≥ 2 equally spaced intensity levels
 * from P0 to P1 with average (P0 + P1)/2 = 10^(dBm/10) mW and
 * extinction ratio P1/P0 = `extinction_ratio` (linear, > 1, may be +inf). */
qc_status qc_intensity_levels(double power_dbm, double extinction_ratio,
                              size_t nlevels, double *power_w);

/* Parameters (in the order of the model type's params, array of
 * QC_MODEL_MAX_PARAMS) and levels for the Gaussian models. Levels are the
 * mean output currents M·R·P_i (A).
 *  gauss-sd: sigma0² = i_n²B + 2q·I_d·M²F·B, a = 2q·M·F·B, b = 0.
 *  gauss:    sigma² = thermal + shot at the mean power of the levels. */
qc_status qc_frontend_gauss_sd(const qc_receiver *rx, const double *power_w,
                               size_t nlevels, double *params, double *levels);
qc_status qc_frontend_gauss(const qc_receiver *rx, const double *power_w,
                            size_t nlevels, double *params, double *levels);

/* Parameters of `apd` (and `apd-gauss`) for an integrate-and-dump
 * receiver over a slot of `slot_time` s (noise bandwidth 1/(2T); the
 * receiver's `bandwidth` is not used): signal = R·P_max·T/q primaries,
 * background = I_d·T/q, sigma-th = i_n·sqrt(T/2)/q electrons; levels
 * P_i/P_max. */
qc_status qc_frontend_apd(const qc_receiver *rx, double slot_time,
                          const double *power_w, size_t nlevels,
                          double *params, double *levels);

/* Mean detected photons in a slot: n = η·P·T/(h·c/λ). */
qc_status qc_photons_per_slot(double power_w, double slot_time,
                              double wavelength, double efficiency,
                              double *photons);

/* Quantum efficiency η = R·h·c/(q·λ) of a photodiode of responsivity R
 * (A/W) at wavelength λ (m); QC_EINVAL when η would exceed 1. */
qc_status qc_responsivity_to_efficiency(double responsivity, double wavelength,
                                        double *efficiency);

/* Parameters of `poisson`: signal = photons per slot at max(P_i),
 * background = dark_count_rate·T; levels P_i/P_max. */
qc_status qc_frontend_poisson(const double *power_w, size_t nlevels,
                              double slot_time, double wavelength,
                              double efficiency, double dark_count_rate,
                              double *params, double *levels);

#define QC_OSNR_REF_BANDWIDTH 12.5e9 /* Hz: 0.1 nm at 1550 nm */

/* Electrical SNR from OSNR: SNR = OSNR·2·B_ref/(p·R_s) (Essiambre et al.,
 * J. Lightw. Technol. 28(4), 2010). ref_bandwidth ≤ 0 or NaN: 12.5 GHz.
 * polarizations 1 or 2. */
qc_status qc_osnr_to_snr(double osnr_db, double ref_bandwidth,
                         double symbol_rate, int polarizations,
                         double *snr);

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
/* The same, and *noiseless (may be NULL) = 1 when some level's output is
 * narrower than the resolution of doubles and was taken in the noiseless
 * limit: a point mass, distinguishable from every other level. Levels
 * whose output support meets no other level's contribute −log p exactly
 * (no quadrature). */
qc_status qc_unquantized_mi_detail(const qc_model *model, const double *levels,
                                   const double *input, size_t nlevels,
                                   double *mi_nats, double *abserr_nats,
                                   int *noiseless);


/* ------------------------------------------------------------------ */
/* Alphabets, input constraints, bit labels, practitioners' rates      */
/* (src/alphabet; normalizations and methods in docs/alphabets.md)     */
/* ------------------------------------------------------------------ */

typedef enum {
    QC_ALPHABET_LEVELS = 0, /* explicit levels, in the order given          */
    QC_ALPHABET_PAM,        /* pam:M, bipolar: −(M−1), −(M−3), …, M−1       */
    QC_ALPHABET_UPAM,       /* upam:M, intensity: 0, 1/(M−1), …, 1 (OOK = 2) */
    QC_ALPHABET_QAM,        /* qam:M, square QAM: √M-PAM on each quadrature */
    QC_ALPHABET_GRID,       /* N equally spaced candidates on [lo, hi]      */
} qc_alphabet_kind;

#define QC_ALPHABET_MAX 4096 /* most levels per real dimension */

typedef struct {
    qc_alphabet_kind kind;
    size_t size;         /* M: points per symbol (QAM: per complex symbol) */
    size_t nlevels;      /* levels per real dimension (QAM: √M)           */
    double *levels;      /* owned, nlevels values                         */
    unsigned dimensions; /* 2 for QAM, else 1                             */
    int intensity;       /* 1 for upam: levels are intensities ≥ 0         */
} qc_alphabet;

/* "pam:M", "upam:M" (2 ≤ M ≤ QC_ALPHABET_MAX) or "qam:M" (M a perfect
 * square and a power of 2, 4 ≤ M). The message names the spec and says
 * what is wrong. */
qc_status qc_alphabet_parse(const char *spec, qc_alphabet **out);
/* Explicit levels (finite, distinct, 1 ≤ n ≤ QC_ALPHABET_MAX), kept in
 * the order given. */
qc_status qc_alphabet_from_levels(const double *levels, size_t n,
                                  qc_alphabet **out);
/* n ≥ 2 equally spaced candidate levels lo, …, hi (lo < hi, both finite):
 * the support of a free-form input law. */
qc_status qc_alphabet_grid(double lo, double hi, size_t n, qc_alphabet **out);
void qc_alphabet_free(qc_alphabet *a);

/* Input constraints. NaN in a field means "no such constraint".
 * For QAM the peak bounds each quadrature (a square region) and the power
 * is per complex symbol, E|x|² = E[x_I²] + E[x_Q²]. */
typedef struct qc_constraints {
    double peak;   /* |x| ≤ peak (> 0); intensity: 0 ≤ x ≤ peak              */
    double power;  /* E[x²] ≤ power (> 0)                                    */
    double mean;   /* E[x] ≤ mean (average optical power for intensity)     */
    int intensity; /* levels are intensities: x ≥ 0 is required as well      */
} qc_constraints;

/* All fields NaN, intensity 0. */
void qc_constraints_none(qc_constraints *c);

/* Apply a peak constraint to an alphabet: a grid loses the candidates
 * outside [−peak, peak] ([0, peak] for intensity); any other alphabet
 * with a level outside is QC_EINVAL naming 'peak-limit' and the level; a grid
 * left with fewer than 2 levels is QC_EINFEASIBLE. NaN peak: no change. */
qc_status qc_alphabet_apply_peak(qc_alphabet *a, double peak, int intensity);

/* Check that some input law on `levels` (per real dimension; dimensions
 * 2 for QAM) meets the constraints: every level within the peak, power ≥
 * the smallest E[x²] of any level (QAM: 2·min x²), mean ≥ the smallest
 * level, and a law meeting power and mean together. QC_EINFEASIBLE (or
 * QC_EINVAL for a malformed constraint) naming the key. */
qc_status qc_constraints_check(const qc_constraints *c, const double *levels,
                               size_t nlevels, unsigned dimensions);

/* Binary-reflected Gray code of i: i XOR (i >> 1) (Gray 1953). */
size_t qc_gray_code(size_t i);
/* Labels of n levels: labels[i] = Gray code of the rank of levels[i] in
 * ascending order, so neighbouring levels differ in one bit. *nbits =
 * log2 n. QC_EINVAL naming n unless n is a power of 2 (n ≥ 2). */
qc_status qc_gray_labels(const double *levels, size_t n, size_t *labels,
                         unsigned *nbits);

/* Bit-metric (BICM) generalized mutual information in nats, Caire,
 * Taricco, Biglieri, IEEE Trans. IT 44(3), 1998:
 *   GMI = [H(X) − Σ_b H(B_b | Y)]⁺,
 * which is Σ_b I(B_b; Y) when the bits are independent (e.g. a uniform
 * law), and never exceeds I(X;Y). labels[x] < 2^nbits gives the bits of
 * input x (bit b = (labels[x] >> b) & 1), distinct for inputs in use. */
qc_status qc_gmi(const qc_dmc *dmc, const double *input, const size_t *labels,
                 unsigned nbits, double *gmi_nats);
/* The same with the unquantized output (adaptive quadrature, GSL QAGS, or
 * a sum over counts), as qc_unquantized_mi. */
qc_status qc_unquantized_gmi(const qc_model *model, const double *levels,
                             const double *input, size_t nlevels,
                             const size_t *labels, unsigned nbits,
                             double *gmi_nats, double *abserr_nats);

/* Channel dispersion: I(X;Y) and the variance V of the information
 * density i(x;y) = log P(y|x)/P(y) under the law (Polyanskiy, Poor, Verdú,
 * IEEE Trans. IT 56(5), 2010), in nats and nats². Either output may be
 * NULL. */
qc_status qc_dispersion(const qc_dmc *dmc, const double *input, double *mi_nats,
                        double *v_nats2);
/* Normal approximation (same paper): rate − √(V/n)·Q⁻¹(ε) + log2(n)/(2n)
 * in bits, with V in bits². QC_EINVAL naming n or ε when n = 0 or ε is
 * not in (0, 1). */
qc_status qc_normal_approximation(double rate_bits, double v_bits2, size_t n,
                                  double epsilon, double *rate_out_bits);
/* SNR (dB) minus the SNR at which ½·log2(1 + snr) equals rate_bits (per
 * real dimension); NaN when rate_bits ≤ 0 or snr_db is not finite. */
double qc_shaping_gap_db(double snr_db, double rate_bits);

/* Capacity under up to two average costs, Σ r(x)c_k(x) ≤ budget_k, by the
 * engine (qc_capacity) with a single combined cost (1−w)c_1 + w·c_2 and a
 * bisection on w (docs/alphabets.md). Every combined run certifies
 * C ≤ max_x[D_x − s_1 c_1(x) − s_2 c_2(x)] + s_1 β_1 + s_2 β_2; the
 * result holds the smallest such bound and the rate of a law meeting both
 * budgets. */
typedef struct {
    const double *costs; /* per input (length nx)                         */
    double budget;
} qc_cost;

typedef struct {
    double capacity_bits;    /* I(r) of the returned law, which meets every
                                budget                                    */
    double upper_bound_bits; /* certified upper bound                       */
    double gap_bits;
    size_t iterations;       /* engine iterations, all runs                */
    size_t engine_runs;
    double cost[2];          /* Σ r c_k at the returned law                 */
    double multiplier[2];    /* s_k of the bound above (nats per unit cost) */
} qc_costs_result;

/* `opt` gives tolerance, method, iteration limit and start (its costs are
 * ignored; NULL: defaults); ncosts 0, 1 or 2. QC_EINFEASIBLE naming the
 * cost (1 or 2) when no law meets the budgets; QC_ENOCONV when the gap
 * stays above the tolerance (the result then holds the bounds reached). */
qc_status qc_capacity_costs(const qc_dmc *dmc, const qc_ba_options *opt,
                            const qc_cost *costs, size_t ncosts,
                            qc_ba_workspace *ws, qc_costs_result *res,
                            double *input_out);

/* ------------------------------------------------------------------ */
/* Design: thresholds (and input law) for a model and an alphabet      */
/* ------------------------------------------------------------------ */

typedef enum {
    QC_OBJECTIVE_MI = 0,       /* I(X;Y_q) with the given (or uniform) law  */
    QC_OBJECTIVE_CAPACITY = 1, /* capacity of the quantized channel         */
    QC_OBJECTIVE_GMI = 2,      /* BICM GMI with Gray labels, given law      */
    QC_OBJECTIVE_COUNT
} qc_objective;

typedef enum {
    QC_QUANTIZER_UNIFORM = 0, /* uniform cells, full-scale range optimized  */
    QC_QUANTIZER_FIXED,       /* thresholds given by the caller, evaluated  */
    QC_QUANTIZER_LLOYD_MAX,   /* minimum mean-square error (Lloyd, Max)     */
    QC_QUANTIZER_OPTIMAL,     /* MI-optimal: DP on a fine grid + refinement */
    QC_QUANTIZER_COUNT
} qc_quantizer_kind;

#define QC_MAX_BITS 16

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
 * for QC_LIMIT_NONE and values out of range. */
const char *qc_rate_limit_name(qc_rate_limit limit);

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
    QC_PENALTY_COUNT
} qc_penalty_note;
/* A phrase saying why (e.g. "rate saturated at its ceiling"); NULL for
 * QC_PENALTY_DEFINED and values out of range. */
const char *qc_penalty_note_text(qc_penalty_note note);

/* Names used on the command line: "mi", "capacity", "gmi"; "uniform", "fixed",
 * "lloyd-max", "optimal". NULL for values out of range. */
const char *qc_objective_name(qc_objective objective);
const char *qc_quantizer_name(qc_quantizer_kind kind);
/* Look a name up; QC_EINVAL naming the unknown word and the choices. */
qc_status qc_objective_parse(const char *name, qc_objective *out);
qc_status qc_quantizer_parse(const char *name, qc_quantizer_kind *out);
/* cells = 2^bits for 1 ≤ bits ≤ QC_MAX_BITS, else QC_EINVAL. */
qc_status qc_cells_from_bits(int bits, size_t *cells);

typedef struct {
    /* The channel. */
    const qc_model *model;       /* noise model (required)                   */
    const double *levels;        /* nlevels input levels (required)          */
    size_t nlevels;
    /* MI objective: the input law (NULL: uniform). Capacity objective:
     * the engine's starting law (NULL: uniform). Must sum to 1. */
    const double *probabilities;
    /* The quantizer. */
    size_t cells;                /* K output cells, 2..2^QC_MAX_BITS; 0 with
                                    QC_QUANTIZER_FIXED: nthresholds + 1.
                                    Count outputs use at most one cell per
                                    count that carries probability (the
                                    result's cells_used)                    */
    qc_objective objective;
    qc_quantizer_kind quantizer;
    const double *thresholds;    /* QC_QUANTIZER_FIXED: K − 1 thresholds,
                                    strictly increasing (integers ≥ 1 for
                                    count outputs); ignored otherwise      */
    size_t nthresholds;          /* their number; must equal K − 1         */
    /* Numerics. */
    double tol_bits;             /* engine gap and joint-design tolerance;
                                    0: 1e-9                                 */
    size_t fine_cells;           /* QC_QUANTIZER_OPTIMAL: fine-grid cells N
                                    for the dynamic programme (N ≥ K); 0:
                                    automatic (max(16K, 4096), reduced so
                                    that K·N ≤ 2^22, never below K). Count
                                    outputs use every count of the support
                                    when it has at most max(N, 65536)      */
    /* Capacity objective only: an average-cost constraint for the engine. */
    const double *costs;         /* per-level cost (NULL: no constraint)    */
    double budget;               /* Σ r(x)·costs[x] ≤ budget               */
    int skip_snr_penalty;        /* 1: leave snr_penalty_db NaN (saves the
                                    root search on the unquantized curve)   */
    /* Alphabet and input design (src/alphabet, docs/alphabets.md); all
     * zero = off. */
    unsigned dimensions;         /* 0 or 1: real levels; 2: square QAM, the
                                    levels used on each quadrature with the
                                    same thresholds; rates per complex
                                    symbol (`costs`/`budget` then apply to
                                    one quadrature, `constraints` to the
                                    symbol)                                 */
    const struct qc_constraints *constraints; /* peak, power, mean; NULL:
                                    none (not together with costs)          */
    int optimize_levels;         /* 1: move the levels to maximize the
                                    objective (Nelder–Mead, several starts,
                                    thresholds re-designed at each step)   */
    size_t level_starts;         /* starts of that search; 0: 3             */
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
    /* Units of the levels and of the receiver output for reports (NULL:
     * the model type's level_unit / output_unit), e.g. "A" when the
     * levels are photocurrents from the physical front end. */
    const char *level_unit;
    const char *output_unit;
} qc_design_request;

/* Fill a request with defaults: no channel, MI objective, the optimal
 * quantizer, cells 0 (must be set), tol 1e-9, automatic fine grid. */
void qc_design_request_default(qc_design_request *req);

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
    double snr_db;               /* operating SNR by the model's notion;
                                    NaN: the model defines none             */
    double snr_penalty_db;       /* snr_db minus the SNR at which the
                                    unquantized receiver (same levels and
                                    law) reaches rate_bits; NaN: undefined
                                    (snr_penalty_note says why)            */
    double mse;                  /* Lloyd–Max: mean-square error of Y about
                                    its reconstruction points; NaN else    */
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
                                    NaN without blocklength                 */
    double shaping_gap_db;       /* SNR distance from ½·log2(1 + snr) at
                                    the same rate per dimension (model
                                    gauss); NaN otherwise                   */
    double average_power;        /* E[x²] of the law (QAM: E|x|²)            */
    double average_level;        /* E[x] of the law                          */
    int levels_optimized;        /* 1: levels are the search's result       */
    size_t level_evaluations;    /* objective evaluations of that search     */
} qc_design_result;

/* Design (or evaluate, for QC_QUANTIZER_FIXED) a quantizer. Bad requests
 * (cells outside 2..2^16, fine grid smaller than K, unsorted, repeated or
 * miscounted thresholds, bad levels or law) are QC_EINVAL with a message
 * naming the field. On failure the result is left empty (safe to clear). */
qc_status qc_design(const qc_design_request *req, qc_design_result *res);
/* Release what a result owns and zero it; safe on a zeroed result. */
void qc_design_result_clear(qc_design_result *res);

/* All strategies on the same channel (`design --compare`): uniform,
 * Lloyd–Max, optimal, and fixed when the request has thresholds. */
#define QC_COMPARE_MAX 4
typedef struct {
    size_t count;                         /* strategies run                  */
    qc_quantizer_kind kind[QC_COMPARE_MAX];
    qc_status status[QC_COMPARE_MAX];     /* per strategy                    */
    char message[QC_COMPARE_MAX][256];    /* its failure message, or ""      */
    qc_design_result result[QC_COMPARE_MAX]; /* empty where status != QC_OK */
} qc_design_comparison;

/* The units a report gives the levels and the thresholds of a request:
 * the request's own, else its model type's, else "" (never NULL). */
const char *qc_design_level_unit(const qc_design_request *req);
const char *qc_design_output_unit(const qc_design_request *req);
/* What the reported snr_db of a request means, in words (the model
 * type's snr_definition; for QAM on model gauss, Es/N0), or NULL when the
 * model defines no SNR. */
const char *qc_design_snr_definition(const qc_design_request *req);

/* Run every strategy with the request's objective, channel and cells
 * (req->quantizer is ignored). An invalid request fails at once with
 * nothing filled; otherwise every entry is filled and the return value is
 * QC_OK, or the first failing strategy's status. Clear with
 * qc_design_comparison_clear (safe on a zeroed comparison). */
qc_status qc_design_compare(const qc_design_request *req,
                            qc_design_comparison *cmp);
void qc_design_comparison_clear(qc_design_comparison *cmp);

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
 * QC_EINVAL when cells < 1 or cells > ny, or the law is not a law. */
qc_status qc_dp_quantize(const qc_dmc *fine, const double *input,
                         size_t cells, qc_dp_method method, size_t *cuts_out,
                         double *mi_nats);

/* The channel whose outputs are the groups given by `cuts` (cells + 1
 * strictly increasing indices from 0 to fine->ny). */
qc_status qc_dmc_merge(const qc_dmc *fine, const size_t *cuts, size_t cells,
                       qc_dmc **out);

/* ---- SNR of a model ------------------------------------------------- */

/* Operating SNR in dB by the model's notion (qc_model_type.snr); NaN
 * when the model defines none or the SNR is not positive. */
double qc_model_snr_db(const qc_model *model, const double *levels,
                       const double *input, size_t nlevels);
/* A new model of the same type whose SNR is `gain` times this one's
 * (qc_model_type.scale_snr). QC_EINVAL if the type has no SNR notion or
 * gain is not a positive finite number. */
qc_status qc_model_scale_snr(const qc_model *model, double gain,
                             qc_model **out);
/* SNR penalty of a rate: snr_db minus the SNR (dB) at which the
 * unquantized receiver with the same levels and law reaches rate_bits
 * (Brent root finding on the unquantized curve, scaling the noise with
 * scale_snr). 0 when rate_bits is within the quadrature error of the
 * unquantized rate; *penalty_db is NaN (status QC_OK) when the model
 * defines no SNR or rate_bits ≤ 0. */
qc_status qc_snr_penalty_db(const qc_model *model, const double *levels,
                            const double *input, size_t nlevels,
                            double rate_bits, double *penalty_db);

/* ------------------------------------------------------------------ */
/* Text values: strict number parsing shared by the CLI and files      */
/* ------------------------------------------------------------------ */

/* A finite decimal number, the whole text (surrounding blanks allowed).
 * The message says what was wrong ("'abc' is not a number"). */
qc_status qc_parse_double(const char *text, double *out);
/* A whole number in [lo, hi]. */
qc_status qc_parse_size(const char *text, size_t lo, size_t hi, size_t *out);
/* Comma-separated finite numbers; *out is malloc'd (free it). The
 * message names the position of a bad value. */
qc_status qc_parse_list(const char *text, double **out, size_t *n);
/* Levenshtein distance between two names (for "did you mean" hints);
 * names longer than 63 characters count as far from everything (99). */
size_t qc_edit_distance(const char *a, const char *b);
/* The JSON member and CSV column name of a flag or scenario key: the
 * key with '-' written '_' ("snr-db" -> "snr_db"; docs/formats.md).
 * Cut to fit `cap` bytes. */
void qc_field_name(const char *key, char *buf, size_t cap);

#define QC_QUOTE_CHARS 40 /* characters of a field shown in a message */
/* Text (len bytes, NULs included) made safe for a message into buf (cap
 * bytes, at least 8): printable ASCII and well-formed UTF-8 kept, any
 * other byte written as \xNN, and cut with "..." after max_chars
 * characters or where buf is full. Returns buf. */
const char *qc_quote(const char *text, size_t len, size_t max_chars, char *buf,
                     size_t cap);

/* ------------------------------------------------------------------ */
/* Settings: the key = value vocabulary of a design                    */
/* ------------------------------------------------------------------ */

/* The same keys serve `quantcap design` (as --KEY VALUE flags) and
 * scenario files (as KEY = VALUE lines). Model parameters (sigma, ...) are
 * keys too. A qc_settings holds the text of each key given. */
typedef struct {
    const char *key;
    const char *metavar; /* NULL: a switch taking "true"/"false"          */
    const char *help;
} qc_setting_info;

/* The design keys, excluding model parameters; *n receives the count. */
const qc_setting_info *qc_setting_keys(size_t *n);
/* Is `key` a design key or a parameter of some model? */
int qc_setting_known(const char *key);
/* The known key closest to an unknown one (for "did you mean"), or NULL. */
const char *qc_setting_suggest(const char *key);
/* The current name of a key that was renamed (e.g. "power" ->
 * "power-limit"), or NULL when `old` is not an old name. */
const char *qc_setting_renamed(const char *old);

typedef struct qc_settings qc_settings;
qc_status qc_settings_alloc(qc_settings **out);
void qc_settings_free(qc_settings *s);
qc_status qc_settings_copy(const qc_settings *s, qc_settings **out);
/* Set (or replace) one key. The value is checked now: on failure the
 * message says what is wrong with the value ("'0' is not a whole number
 * from 1 to 16"; the caller names the key: the flag, or file:line) and the
 * settings are unchanged. An unknown key is QC_EINVAL. */
qc_status qc_settings_set(qc_settings *s, const char *key, const char *value);
/* The text given for `key`, or NULL. */
const char *qc_settings_get(const qc_settings *s, const char *key);

/* Turn settings into a model instance and a design request. The request
 * points into memory owned by `s` (valid until s is changed or freed);
 * the model is the caller's to free. Cross-key rules (sigma or snr-db,
 * bits or cells, ...) are checked here, naming the keys. */
qc_status qc_settings_build(qc_settings *s, qc_model **model,
                            qc_design_request *req);

/* ------------------------------------------------------------------ */
/* Reports                                                             */
/* ------------------------------------------------------------------ */

/* The JSON object describing one design (model, parameters, request and
 * every result field), as `quantcap design --json` prints it and as a
 * sweep stores each point. *text is malloc'd (free it); numbers carry 17
 * significant digits; non-finite numbers are written as null. */
qc_status qc_design_report_json(const qc_design_request *req,
                                const qc_design_result *res, char **text);

/* ------------------------------------------------------------------ */
/* Scenario files and sweeps (docs/formats.md, "Scenario files")       */
/* ------------------------------------------------------------------ */

/* A scenario: the receiver, the alphabets to compare, the sweep axes and
 * the plots, read from an INI file. Every design key (qc_setting_keys()
 * and the model parameters) is a scenario key with the same meaning. */
typedef struct qc_scenario qc_scenario;

#define QC_SCENARIO_MAX_POINTS 1000000 /* largest grid accepted          */
#define QC_SCENARIO_MAX_BYTES (1 << 20) /* largest scenario file         */

/* Parse a scenario held in memory (len bytes, need not end in NUL).
 * `name` is used in messages ("name:LINE: ..."). Unknown sections or
 * keys (with the closest valid name), bad values and missing keys are
 * QC_EINVAL or QC_EFORMAT with the line named. */
qc_status qc_scenario_parse(const char *text, size_t len, const char *name,
                            qc_scenario **out);
/* Read and parse a file; an unreadable path is QC_EIO. */
qc_status qc_scenario_read(const char *path, qc_scenario **out);
void qc_scenario_free(qc_scenario *sc);

/* Override one key as from the command line: "KEY=VALUE" sets a design
 * key everywhere (the sweep axis of that name takes the value's values;
 * otherwise the base setting, which then also wins over the alphabets);
 * "SECTION.KEY=VALUE" sets a key of one section ("plots.format=png",
 * "alphabet.pam4.levels=-3,-1,1,3", "sweep.bits=1 to 4 step 1"). On failure the
 * scenario is unchanged. */
qc_status qc_scenario_override(qc_scenario *sc, const char *assignment);

/* Check that every grid point builds a model and a design request; the
 * message names the point (alphabet and axis values). */
qc_status qc_scenario_check(const qc_scenario *sc);

/* The grid: alphabets × axis 1 × axis 2 × ... (the last axis varies
 * fastest). */
size_t qc_scenario_npoints(const qc_scenario *sc);
size_t qc_scenario_nalphabets(const qc_scenario *sc);
const char *qc_scenario_alphabet(const qc_scenario *sc, size_t i);
size_t qc_scenario_naxes(const qc_scenario *sc);
const char *qc_scenario_axis_key(const qc_scenario *sc, size_t i);
size_t qc_scenario_axis_size(const qc_scenario *sc, size_t i);
const char *qc_scenario_axis_value(const qc_scenario *sc, size_t i, size_t j);
/* The settings of the grid point of index `index`, from 0 (messages and
 * result files number it index + 1); a new object: free it. */
qc_status qc_scenario_point_settings(const qc_scenario *sc, size_t index,
                                     qc_settings **out);
/* 16 hex digits identifying what the points compute (alphabets, base
 * settings, axes); plots and titles do not enter it. */
const char *qc_scenario_hash(const qc_scenario *sc);

typedef struct {
    const char *out_dir; /* created if missing                              */
    unsigned jobs;       /* parallel threads; 0: one per core               */
    int resume;          /* continue the checkpoint in out_dir              */
    int plots;           /* draw the scenario's plots (default 1)           */
    /* Called after each finished point, from one thread at a time (may be
     * NULL): points done so far (resumed ones included) and in all. */
    void (*progress)(void *user, size_t done, size_t total);
    void *user;
} qc_sweep_options;

void qc_sweep_options_default(qc_sweep_options *opt);

typedef struct {
    size_t points;    /* grid size                                        */
    size_t resumed;   /* finished points taken from the checkpoint        */
    size_t computed;  /* points computed in this run                      */
    size_t failed;    /* points whose design failed (recorded, not fatal) */
    char first_failure[1024]; /* "point 12 (...): message", or ""         */
    int plots_skipped; /* plots asked for but PLplot is not built in       */
    size_t nfiles;
    char **files;      /* paths of the files written (owned)               */
    size_t nnotes;
    char **notes;      /* figures left out, and why (owned)                */
    size_t nremoved;
    char **removed;    /* stale files of an earlier run removed (owned)    */
} qc_sweep_summary;

/* Run every point of the grid (qc_scenario_check first: an input error in
 * the scenario is returned before any work), each exactly as `quantcap
 * design` would with the point's settings, in parallel. Finished points
 * go to out_dir/checkpoint.jsonl as they complete; then results.csv,
 * results.json and the plots are written under temporary names and
 * renamed, and out_dir/manifest.txt lists them: files an earlier sweep
 * listed there that this one does not write again are removed. A point whose design fails (infeasible, no convergence,
 * numerical) is recorded with its message; a design that rejects its
 * request (QC_EINVAL, QC_EFORMAT: the scenario asks for something
 * invalid) stops the sweep with that status, naming the point, and no
 * table is written (finished points stay in the checkpoint). QC_EIO names
 * the file on write failures. */
qc_status qc_sweep_run(const qc_scenario *sc, const qc_sweep_options *opt,
                       qc_sweep_summary *summary);
void qc_sweep_summary_clear(qc_sweep_summary *summary);

/* 1 if this build draws plots (PLplot found at build time). */
int qc_plots_available(void);

#ifdef __cplusplus
}
#endif

#endif /* QUANTCAP_H */

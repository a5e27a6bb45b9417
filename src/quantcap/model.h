/* quantcap/model.h — noise models: the law of the receiver output given
 * each transmitted level, as constant type tables. Part of the public
 * interface of libquantcap (include <quantcap.h> for all of it). SPDX-
 * License-Identifier: GPL-3.0-or-later */
#ifndef QUANTCAP_MODEL_H
#define QUANTCAP_MODEL_H

#include <stddef.h>

#include "quantcap/status.h"

#ifdef __cplusplus
extern "C" {
#endif

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

/* A noise model instance: the conditional law of the receiver output
 * given the transmitted level x. Cells are half-open: a threshold t
 * separates {y < t} from {y ≥ t}; for counts, thresholds are integers.
 * Opaque: made only by qc_model_alloc (or qc_model_table_load), so its
 * parameters are always checked; read with qc_model_get_type,
 * qc_model_param and qc_model_params. Models with a state (apd caches
 * per-level grids, table holds its data) are used by one thread at a
 * time: a sweep creates one instance per thread. */
typedef struct qc_model qc_model;

/* Properties a model type declares, so that no other code compares
 * against a particular model (qc_model_type.properties, OR-ed). */
enum {
    /* levels are optical intensities: x ≥ 0 (constraints, peak, plots) */
    QC_MODEL_INTENSITY = 1u << 0,
    /* the output is the level plus Gaussian noise independent of it, so the
     * Shannon curve ½·log2(1 + snr) is the unquantized reference */
    QC_MODEL_ADDITIVE_GAUSSIAN = 1u << 1,
    /* the model is read from a file of measured densities (its levels come
     * from the file; qc_model_table_load) instead of qc_model_alloc */
    QC_MODEL_FROM_FILE = 1u << 2,
    /* given x the output is Gaussian with the mean and variance of the
     * type's `moments` (gauss, gauss-sd, apd-gauss): added Gaussian noise
     * only adds to that variance (qc_model_add_noise), and memory channels
     * simulate and weigh it so */
    QC_MODEL_GAUSSIAN_LAW = 1u << 3,
    /* the density has kinks (piecewise linear in y: its slope jumps), so
     * rates are not twice differentiable in the thresholds and have local
     * maxima a curvature-based search would settle in (table): searches
     * that need the curvature are not used */
    QC_MODEL_KINKED_DENSITY = 1u << 4,
};

/* The physical receiver whose quantities a model's parameters can be
 * derived from (qc_settings_build's physical route; src/models/frontend.c). */
typedef enum {
    QC_FRONTEND_NONE = 0, /* parameters are given directly                 */
    QC_FRONTEND_GAUSS,    /* PIN/APD current, noise at the mean power      */
    QC_FRONTEND_GAUSS_SD, /* PIN/APD current, signal-dependent noise       */
    QC_FRONTEND_APD,      /* APD electrons per slot (integrate and dump)   */
    QC_FRONTEND_PHOTONS,  /* photons counted per slot                      */
    QC_FRONTEND_PREAMP,   /* optical amplifier, filter, direct detection    */
} qc_frontend_kind;

/* Settings keys the physical front ends take (for the `keys` lists of the
 * model types below). */
#define QC_KEYS_OPTICAL_POWER                                                              \
    "received-dbm", "peak-dbm", "extinction-db", "launch-dbm", "length-km", "loss-db-km",   \
        "connector-loss-db", "splice-loss-db", "penalty-db"
#define QC_KEYS_PHOTODETECTOR                                                              \
    "responsivity", "thermal-density", "load-resistance", "temperature", "dark-current",   \
        "apd-gain", "apd-k"
/* The free-space link in front of a photon-counting or APD receiver
 * (launch-dbm, the transmit power, comes with QC_KEYS_OPTICAL_POWER). */
#define QC_KEYS_FREE_SPACE                                                                 \
    "range-km", "tx-aperture-m", "rx-aperture-m", "pointing-loss-db", "atmosphere-loss-db", \
        "background-radiance", "field-of-view-mrad", "filter-nm"

/* The optical pre-amplifier in front of direct detection. */
#define QC_KEYS_PREAMP                                                                     \
    "gain-db", "nf-db", "optical-bandwidth", "slot-time", "ase-polarizations", "wavelength-nm"

/* The amplified coherent fibre link (its SNR sets the Gaussian noise;
 * launch-dbm, length-km and loss-db-km come with QC_KEYS_OPTICAL_POWER). */
#define QC_KEYS_FIBRE_LINK                                                                 \
    "spans", "span-km", "nf-db", "gain-db", "chromatic-dispersion", "gamma", "channels",     \
        "channel-spacing-ghz", "coherence", "transceiver-snr-db", "wavelength-nm"

typedef struct qc_model_type {
    const char *name;
    const char *summary;        /* one line for `quantcap models`        */
    qc_output_kind output;
    unsigned properties;        /* QC_MODEL_* flags                      */
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
    /* Optional: mean detected signal photons (primary photoelectrons,
     * background excluded) in one use when level x is sent, for
     * photon-counting and APD models; NULL when the model counts none. */
    double (*photons)(const qc_model *m, double x);
    /* Optional: both tails at t at once, *below = P(Y < t | x) and
     * *above = P(Y ≥ t | x), bit for bit the values `below` and `above`
     * give, at less than the cost of calling both (NULL: the discretizer
     * calls both). */
    void (*tails)(const qc_model *m, double x, double t, double *below, double *above);
} qc_model_type;

QC_API extern const qc_model_type qc_model_gauss;

/* Signal-dependent Gaussian: sigma^2(x) = sigma0^2 + a x + b x^2. */
QC_API extern const qc_model_type qc_model_gauss_sd;

/* Photon counting: Y ~ Poisson(signal·x + background). */
QC_API extern const qc_model_type qc_model_poisson;

/* APD: Poisson primaries × McIntyre gain + Gaussian thermal noise,
 * exact law computed by FFT convolution. */
QC_API extern const qc_model_type qc_model_apd;

/* The Gaussian approximation of `apd` (same parameters). */
QC_API extern const qc_model_type qc_model_apd_gauss;

/* Optically pre-amplified direct detection: Y = ncx2(2m, 2x)/2. */
QC_API extern const qc_model_type qc_model_preamp;

/* Measured densities per level from a file (qc_model_table_load). */
QC_API extern const qc_model_type qc_model_table;

/* All registered model types, NULL-terminated (static; never fails). */
QC_API const qc_model_type *const *qc_model_types(void);

/* Look up a type by name; NULL if unknown or name is NULL (no message). */
QC_API const qc_model_type *qc_model_type_find(const char *name);

/* Index of a parameter of `type` by name, or -1 when it has none of that
 * name (no message). */
QC_API int qc_model_param_index(const qc_model_type *type, const char *name);

/* Create a model instance. `params` holds type->nparams values in the
 * order of type->params (NaN = use the default). Every value is checked
 * against its range, then the type's own check and state set up. Fails
 * with QC_EINVAL naming the parameter (or the type's check), QC_ENOMEM,
 * or what the type's init returns (table: use qc_model_table_load); on
 * failure *out is NULL. */
QC_API qc_status qc_model_alloc(const qc_model_type *type, const double *params,
                         qc_model **out);
/* Release an instance and its state; NULL does nothing. */
QC_API void qc_model_free(qc_model *model);

/* The type of a model instance (its name, parameter list, output kind,
 * properties and the law's functions, which take the instance itself:
 * qc_model_get_type(m)->below(m, x, t)). Never NULL for an instance. */
QC_API const qc_model_type *qc_model_get_type(const qc_model *model);

/* Whether several threads may evaluate the instance at once: 1 for the
 * types without a per-instance state, whose functions read only the
 * parameters; 0 for an instance with a state (apd and a law with added
 * converter noise fill caches as they are used; table holds its data),
 * which is used by one thread at a time. The library spreads one large
 * channel's rows over OpenMP threads only for the first kind. */
QC_API int qc_model_thread_safe(const qc_model *model);

/* Parameter i of the instance, in the order of its type's params, as
 * checked by qc_model_alloc (defaults filled in). NaN when i is not below
 * the type's nparams. */
QC_API double qc_model_param(const qc_model *model, size_t i);

/* All the instance's parameters: qc_model_get_type(model)->nparams values
 * (borrowed; valid while the model lives, never modified). */
QC_API const double *qc_model_params(const qc_model *model);

/* Check levels against the model (finite, allowed by check_level). Reads
 * only. QC_EINVAL when nlevels is 0 or a level is not finite or not
 * allowed; the message names the level (1-based) and its value. */
QC_API qc_status qc_model_check_levels(const qc_model *model, const double *levels,
                                size_t nlevels);

/* Mean and variance of the output given level x. QC_EINVAL when the
 * level is invalid or the model type has no moments hook (the message
 * says which); on failure *mean and *var are unchanged. */
QC_API qc_status qc_model_moments(const qc_model *model, double x, double *mean,
                           double *var);

/* Mean detected signal photons per use of `levels` sent with law `input`
 * (NULL: uniform), Σ r(x)·photons(x); NaN when the model type counts no
 * photons (qc_model_type.photons). */
QC_API double qc_model_mean_photons(const qc_model *model, const double *levels,
                                    const double *input, size_t nlevels);

/* Create a `table` model from a text file of densities (format in
 * docs/formats.md). Errors name the file and line (QC_EFORMAT), or the
 * path (QC_EIO); QC_ENOMEM. On failure *out is NULL. */
QC_API qc_status qc_model_table_load(const char *path, qc_model **out);

/* The same from text in memory; `name` is used in messages ("name:LINE:
 * ..."). On failure (QC_EFORMAT, QC_ENOMEM) *out is NULL. */
QC_API qc_status qc_model_table_parse(const char *text, size_t len, const char *name,
                               qc_model **out);

/* Levels of a table model (borrowed; valid while the model lives).
 * QC_EINVAL when the model is not a table; on failure *levels and
 * *nlevels are unchanged. */
QC_API qc_status qc_model_table_levels(const qc_model *model, const double **levels,
                                size_t *nlevels);

/* A model whose output is `base`'s plus independent Gaussian noise of
 * standard deviation sigma (>= 0, in the base's output units): a
 * converter's own input-referred noise (quantcap/quantizer.h). Exact for
 * QC_MODEL_GAUSSIAN_LAW types (the variances add) and for count outputs
 * (a sum over the counts); other continuous laws are convolved with the
 * Gaussian on a grid by FFTW (docs/models.md says on which grid). The new
 * model borrows `base` (it must outlive it), has continuous output (also
 * over a count law), the base's levels, units and moments plus sigma², and
 * no SNR of its own; over a QC_MODEL_GAUSSIAN_LAW base it has that
 * property too (so it can drive a channel with memory). QC_EINVAL for a NULL base or a negative or
 * non-finite sigma, QC_ENOMEM; on failure *out is NULL. */
QC_API qc_status qc_model_add_noise(const qc_model *base, double sigma, qc_model **out);

#ifdef __cplusplus
}
#endif

#endif /* QUANTCAP_MODEL_H */

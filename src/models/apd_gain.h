/* apd_gain.h — shared by the APD models: parameters and the McIntyre
 * single-carrier gain law. Internal. */
#ifndef QC_APD_GAIN_H
#define QC_APD_GAIN_H

#include "core/internal.h"
#include "quantcap/model.h"

enum { APD_SIGNAL, APD_BACKGROUND, APD_GAIN, APD_K, APD_SIGMA_TH, APD_NPARAMS };

/* Largest mean gain of the exact `apd` model at k = 0: its gain law is
 * cut after at most 2^23 points (about 51·M at M = 1e5). */
#define APD_EXACT_MAX_GAIN 1e5

/* Parameter specs of `apd` and `apd-gauss` (same names and units). */
extern const qc_param_spec qc_apd_params[APD_NPARAMS];
/* Settings keys of the APD front end (both APD model types). */
extern const char *const qc_apd_keys[];
/* The same for `apd`, with k < 1 (exclusive). */
extern const qc_param_spec qc_apd_exact_params[APD_NPARAMS];

/* Excess noise factor F = kM + (1 − k)(2 − 1/M) (McIntyre 1966). */
double qc_apd_excess(double gain, double k);

/* Mean primaries λ = signal·x + background. */
double qc_apd_rate(const double *params, double x);
/* Mean primary photoelectrons of the signal at level x (background
 * excluded): the detected photons of qc_model_type.photons. */
double qc_apd_photons(const qc_model *m, double x);

/* Gain pmf g[n] = P(G = n), n = 0..*len−1 (g[0] = 0), of one injected
 * electron (McIntyre, IEEE Trans. Electron Devices 19(6), 1972), cut
 * where the tail left out is below 1e-17 and renormalized. Caller frees
 * *g. QC_EINVAL for k ≥ 1; QC_ENOMEM when the law needs more than
 * max_len points. */
qc_status qc_apd_gain_pmf(double gain, double k, size_t max_len, double **g,
                          size_t *len);

qc_status qc_apd_check_level(const qc_model *m, double x);

/* Work counters of an `apd` instance (for the benchmark). */
typedef struct {
    size_t plans;         /* FFT grids planned (plans + kernel spectra) */
    double plan_seconds;  /* time spent making them                      */
    size_t levels;        /* per-level laws computed                     */
    double level_seconds; /* time spent computing them (execute)         */
} qc_apd_stats;

/* Counters of an `apd` model; QC_EINVAL for another model type. */
qc_status qc_apd_get_stats(const qc_model *m, qc_apd_stats *stats);

#endif

/* settings_internal.h — what settings.c and settings_build.c share. */
#ifndef QC_SETTINGS_INTERNAL_H
#define QC_SETTINGS_INTERNAL_H

#include "core/internal.h"
#include "core/parse.h"
#include "quantcap/iq.h"
#include "quantcap/memory.h"
#include "quantcap/study.h"

#define MAX_ENTRIES 64
#define VALUE_MAX 65536

struct qc_settings {
    size_t n;
    char *key[MAX_ENTRIES];
    char *value[MAX_ENTRIES];
    /* parsed lists, owned, refreshed by qc_settings_build */
    double *levels, *probabilities, *thresholds;
    /* input constraints of the last build (the request points here) */
    qc_constraints constraints;
    /* FEC code of the last build (the request points here) */
    qc_fec fec;
    /* converter of the last build (the request points here) and its
     * measured transition levels (owned) */
    qc_converter converter;
    double *transitions;
    size_t ntransitions;
    /* the amplified fibre link of the last build (the request points here) */
    qc_fibre_link_result fibre;
    /* the unamplified intensity link of the last build (the request
     * points here) */
    qc_intensity_link_result ilink;
    /* taps of a channel with memory of the last build (given or from the
     * response; the request points here) */
    double taps[QC_ISI_MAX_TAPS];
    double taps_imag[QC_ISI_MAX_TAPS];
    /* shaping of the last build (the request points here) */
    qc_shaping shaping;
    /* a two-dimensional constellation of the last build (owned) and its
     * receiver (the request points here; settings_plane.c) */
    qc_plane *plane;
    qc_design_iq iq;
};

/* Labels of a constellation without its own: searched by binary
 * switching with these restarts and seed (fixed: the same labels on every
 * run) up to this many points. */
#define QC_SETTINGS_LABEL_RESTARTS 8
#define QC_SETTINGS_LABEL_SEED 20260101UL
#define QC_SETTINGS_MAX_SEARCH_LABELS 1024

/* settings_plane.c: the key that makes the settings two-dimensional
 * (a 2-D alphabet, a point file, a receiver or phase-noise key), or NULL. */
const char *qc_settings_plane_reason(const qc_settings *s);
/* The model (from the cache when there is one) and a request with
 * channel.iq for two-dimensional settings; `why` is the key that made
 * them so. */
qc_status qc_settings_plane_build(qc_settings *s, const qc_model_type *type, const char *why,
                                  qc_model_cache *cache, const qc_model **model,
                                  qc_design_request *req);
/* settings.c: the number under `key`, or `fallback` when absent (values
 * were checked by qc_settings_set; a parse error here still names the
 * key). */
qc_status qc_settings_number(const qc_settings *s, const char *key, double fallback,
                             double *out);

/* model_cache.c: a model instance of the setting (of type with params,
 * or the measured table of the file `table`), from the cache (borrowed)
 * or new (the caller's) without one; qc_settings_model_put gives it back
 * (releases it to the cache, or frees it). */
qc_status qc_settings_model_get(qc_model_cache *cache, const qc_model_type *type,
                                const double *params, const char *table,
                                const qc_model **out);
void qc_settings_model_put(qc_model_cache *cache, const qc_model *m);

/* settings_converter.c: the converter keys into s->converter and
 * req->quantizer (kind converter when they are given without another
 * quantizer). */
qc_status qc_settings_converter(qc_settings *s, qc_design_request *req);


/* Free the lists parsed by the last build. */
void qc_settings_free_lists(qc_settings *s);
/* Is `key` one of the design keys (not a model parameter)? */
int qc_setting_is_design_key(const char *key);

/* model_cache.c: the store of unquantized rates the cache's designs share
 * (NULL for a NULL cache). */
qc_unquantized_memo *qc_model_cache_memo(qc_model_cache *cache);

/* model_cache.c: the number of the setting an instance on loan from the
 * cache was built for: instances of one setting share it while the cache
 * holds one of them (a setting whose every instance was dropped gets a
 * new number when it comes back); SIZE_MAX for an instance not from it. */
size_t qc_model_cache_setting(qc_model_cache *cache, const qc_model *model);

#endif

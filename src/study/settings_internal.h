/* settings_internal.h — what settings.c and settings_build.c share. */
#ifndef QC_SETTINGS_INTERNAL_H
#define QC_SETTINGS_INTERNAL_H

#include "core/internal.h"
#include "core/parse.h"
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
    /* shaping of the last build (the request points here) */
    qc_shaping shaping;
};

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

#endif

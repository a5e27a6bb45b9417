/* scenario.h — a parsed scenario file (internal: shared by the scenario
 * parser, the sweep runner and the plots): its types (scenario_types.h),
 * look-ups in its sections (scenario_keys.h), and the functions on its
 * ranges, its compiled form and the points of its grid. */
#ifndef QC_SCENARIO_H
#define QC_SCENARIO_H

#include <stddef.h>

#include "core/internal.h"
#include "quantcap/study.h"
#include "study/scenario_keys.h"
#include "study/scenario_types.h"

/* One item of a sweep axis (scenario_range.c). A range `FROM to TO step
 * STEP` or `FROM to TO count N`: *out (malloc'd, *n values, ascending,
 * ending on TO). A single value: *out stays NULL. A malformed range or the
 * old form start:step:stop: QC_EINVAL with a message that starts with loc
 * and names key. */
qc_status sc_range_expand(const char *item, const char *loc, const char *key, double **out,
                          size_t *n);
/* 1 if an item of a value is written as a range ("FROM to ...", "0 step 1"). */
int sc_range_is(const char *value);

/* Grid coordinates of point `index`: alphabet and one value index per axis
 * (the last axis varies fastest). `value_index` has room for naxes. */
void sc_point_coords(const qc_scenario *sc, size_t index, size_t *alphabet,
                     size_t *value_index);

/* The grid, the alphabets and the plots of a parsed scenario, from its
 * sections (scenario_compile.c; any earlier compiled form is cleared
 * first). On failure the compiled form is left empty. */
qc_status sc_compile(qc_scenario *sc);
/* Free the compiled form, keeping the sections. */
void sc_compiled_clear(qc_scenario *sc);

/* "point 12 ([alphabet pam4], snr-db = 3, bits = 2)" for messages. */
void sc_describe_point(const qc_scenario *sc, size_t index, char *buf, size_t cap);

/* qc_scenario_check with the models taken from `cache` (the sweep checks
 * its points with the cache its designs then use); `setting` (NULL, or
 * one per point) receives the number of each point's model setting
 * (qc_model_cache_setting; SIZE_MAX for a point without a model). */
qc_status sc_check_points(const qc_scenario *sc, qc_model_cache *cache, size_t *setting);

#endif

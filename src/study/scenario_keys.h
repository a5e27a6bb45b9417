/* scenario_keys.h — looking things up in a scenario's sections and naming
 * them in messages (internal; scenario_keys.c). */
#ifndef QC_SCENARIO_KEYS_H
#define QC_SCENARIO_KEYS_H

#include <stddef.h>

#include "core/internal.h"
#include "study/scenario_types.h"

/* "file:12" or "--set" (line 0) for messages, into buf; returns buf. */
const char *sc_where(const qc_scenario *sc, int line, char *buf, size_t cap);
/* The first section of a type, or NULL. */
sc_section *sc_section_find(const qc_scenario *sc, const char *type);
/* Closest of `names` (NULL-terminated) to key, or NULL if none is close. */
const char *sc_closest(const char *key, const char *const *names);
/* QC_EINVAL: "file:12: unknown key 'k' in WHERE (did you mean 'near'?)". */
qc_status sc_unknown_key(const qc_scenario *sc, const sc_entry *e, const char *where,
                         const char *near);
/* Index of the sweep axis of `key`, or -1. */
int sc_axis_index(const qc_scenario *sc, const char *key);

#endif

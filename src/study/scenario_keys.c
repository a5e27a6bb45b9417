/* scenario_keys.c — looking things up in a scenario's sections and naming
 * them in messages: the line of an entry ("file:12" or "--set"), a section
 * by type, an unknown key with the nearest known one (edit distance), an
 * axis by key. Shared by the compiler of the scenario (scenario_compile.c)
 * and of its plots (plot_config.c). */
#include "study/scenario_keys.h"

#include "core/internal.h"

#include <stdio.h>
#include <string.h>

const char *sc_where(const qc_scenario *sc, int line, char *buf, size_t cap)
{
    if (line > 0)
        snprintf(buf, cap, "%s:%d", sc->file, line);
    else
        snprintf(buf, cap, "--set");
    return buf;
}

sc_section *sc_section_find(const qc_scenario *sc, const char *type)
{
    for (size_t i = 0; i < sc->nsections; i++)
        if (strcmp(sc->sections[i].type, type) == 0)
            return &sc->sections[i];
    return NULL;
}

/* Closest of `names` (NULL-terminated) to key, or NULL if none is close. */
const char *sc_closest(const char *key, const char *const *names)
{
    const char *best = NULL;
    size_t bd = 4;
    for (size_t i = 0; names[i]; i++) {
        size_t d = qc_edit_distance(key, names[i]);
        if (d < bd) {
            bd = d;
            best = names[i];
        }
    }
    return best;
}

qc_status sc_unknown_key(const qc_scenario *sc, const sc_entry *e, const char *where,
                          const char *near)
{
    char loc[300];
    sc_where(sc, e->line, loc, sizeof loc);
    if (near)
        return qc_fail(QC_EINVAL, "%s: unknown key '%s' in %s (did you mean '%s'?)", loc, e->key,
                       where, near);
    return qc_fail(QC_EINVAL, "%s: unknown key '%s' in %s", loc, e->key, where);
}

int sc_axis_index(const qc_scenario *sc, const char *key)
{
    for (size_t i = 0; i < sc->naxes; i++)
        if (strcmp(sc->axes[i].key, key) == 0)
            return (int)i;
    return -1;
}

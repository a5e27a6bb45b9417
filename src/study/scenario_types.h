/* scenario_types.h — the parsed and compiled form of a scenario file
 * (internal): the sections as written (scenario.c reads them) and what
 * they mean (scenario_compile.c and plot_config.c compile them). The
 * functions are in scenario.h. */
#ifndef QC_SCENARIO_TYPES_H
#define QC_SCENARIO_TYPES_H

#include <stddef.h>

#include "core/internal.h"
#include "quantcap/study.h"
#include "study/plot_config.h"

#define QC_SCENARIO_MAX_AXIS_VALUES 100000
#define QC_SCENARIO_NAME_MAX 32
#define QC_SCENARIO_MAX_AXES 16

/* One `key = value` line as written (line 0: given by an override). */
typedef struct {
    char *key;
    char *value;
    int line;
} sc_entry;

/* One section as written: [type] or [type name]. Repeated headers of the
 * same section add to it. */
typedef struct {
    char *type;
    char *name; /* NULL unless the header has a name ([alphabet pam4]) */
    int line;   /* line of the first header (0: created by an override) */
    sc_entry *entries;
    size_t n, cap;
} sc_section;

/* One alphabet: the base settings plus its own keys. */
typedef struct {
    const char *name;  /* section name, or "default" without sections */
    const char *label; /* for legends: `label`, else the name (without
                          sections: the alphabet key's value)           */
    int line;          /* line of its header (0: none)                   */
    qc_settings *settings;
} sc_alphabet;

/* One sweep axis: a design key and the values it takes, in order. */
typedef struct {
    const char *key;
    int line;
    size_t n;
    char **values;  /* as `quantcap design --KEY VALUE` would take them */
    double *number; /* parsed values when numeric (else NULL)          */
} sc_axis;

/* [require]: the inverse question asked at every point (src/study/require.c). */
typedef struct {
    int on;               /* the section is present                        */
    qc_target target;
    char solve_for[64];   /* the key solved for                            */
    int range_given;
    double lo, hi;        /* the search range when given                   */
} sc_require;

struct qc_scenario {
    char *file; /* name used in messages */
    sc_section *sections;
    size_t nsections;
    /* compiled from the sections by sc_compile */
    const char *title, *description;
    sc_alphabet *alphabets;
    size_t nalphabets;
    sc_axis *axes;
    size_t naxes;
    size_t npoints;
    sc_plots plots;
    sc_require require;
    char hash[17];
};

#endif

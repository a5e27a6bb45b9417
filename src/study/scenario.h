/* scenario.h — the parsed form of a scenario file (internal: shared by the
 * scenario parser, the sweep runner and the plots). */
#ifndef QC_SCENARIO_H
#define QC_SCENARIO_H

#include <stddef.h>

#include "core/internal.h"
#include "quantcap/study.h"

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
    const char *label; /* for legends: `label`, else the name           */
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

typedef enum { SC_FORMAT_SVG = 0, SC_FORMAT_PNG, SC_FORMAT_PDF } sc_format;

typedef struct {
    sc_format format;
    int width, height;   /* page size in pixels                          */
    int x_axis;          /* axis along the rate curves, -1: none        */
    int curve_axis;      /* the bits (or cells) axis, -1: none          */
    int rate_vs_x;       /* draw rate against x                          */
    int rate_vs_bits;    /* draw rate against bits                       */
    size_t *bits_at;     /* x-axis value indices for rate vs bits        */
    size_t nbits_at;
    int density;         /* draw the densities of one point              */
    size_t density_point;/* its grid index                               */
} sc_plots;

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
    char hash[17];
};

/* One item of a sweep axis (scenario_range.c). A range `FROM to TO step
 * STEP` or `FROM to TO count N`: *out (malloc'd, *n values, ascending,
 * ending on TO). A single value: *out stays NULL. A malformed range or the
 * old form start:step:stop: QC_EINVAL with a message that starts with loc
 * and names key. */
qc_status sc_range_expand(const char *item, const char *loc, const char *key, double **out,
                          size_t *n);
/* 1 if an item of a value is written as a range ("FROM to ...", "0 step 1"). */
int sc_range_is(const char *value);

/* "file:12" or "--set" for messages. */
const char *sc_where(const qc_scenario *sc, int line, char *buf, size_t cap);

/* Grid coordinates of point `index`: alphabet and one value index per axis
 * (the last axis varies fastest). `value_index` has room for naxes. */
void sc_point_coords(const qc_scenario *sc, size_t index, size_t *alphabet,
                     size_t *value_index);

/* "point 12 ([alphabet pam4], snr-db = 3, bits = 2)" for messages. */
void sc_describe_point(const qc_scenario *sc, size_t index, char *buf, size_t cap);

/* qc_scenario_check with the models taken from `cache` (the sweep checks
 * its points with the cache its designs then use). */
qc_status sc_check_points(const qc_scenario *sc, qc_model_cache *cache);

#endif

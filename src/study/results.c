/* results.c — the tables of a finished sweep: results.csv (one row per
 * grid point, header row, numbers with 17 significant digits) and
 * results.json (the scenario's grid and every point's settings and design
 * report). Both come from the point records in grid order only, so they do
 * not depend on the number of threads or on a resume. */
#include "study/sweep.h"

#include "core/internal.h"
#include "quantcap/atomic_file.h"
#include "study/scenario.h"
#include "study/scenario_keys.h"

#include <errno.h>
#include <inttypes.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#define JSON_FLAGS (JSON_INDENT(1) | JSON_REAL_PRECISION(17) | JSON_PRESERVE_ORDER)

/* ---------------------------------------------------------------- */
/* A growing text buffer                                              */
/* ---------------------------------------------------------------- */

typedef struct {
    char *s;
    size_t n, cap;
    int oom;
} buffer;

static void put(buffer *b, const char *text, size_t len)
{
    if (b->oom)
        return;
    if (b->n + len + 1 > b->cap) {
        size_t cap = b->cap ? b->cap : 4096;
        while (cap < b->n + len + 1)
            cap *= 2;
        char *grown = realloc(b->s, cap);
        if (!grown) {
            b->oom = 1;
            return;
        }
        b->s = grown;
        b->cap = cap;
    }
    memcpy(b->s + b->n, text, len);
    b->n += len;
    b->s[b->n] = '\0';
}

static void puts_(buffer *b, const char *text) { put(b, text, strlen(text)); }

/* A CSV field, quoted when it holds a comma, quote or line break. */
static void put_field(buffer *b, const char *text)
{
    if (!strpbrk(text, ",\"\r\n")) {
        puts_(b, text);
        return;
    }
    put(b, "\"", 1);
    for (const char *p = text; *p; p++) {
        if (*p == '"')
            put(b, "\"", 1);
        put(b, p, 1);
    }
    put(b, "\"", 1);
}

/* A JSON scalar as CSV text: numbers with 17 significant digits, null and
 * non-finite values empty. */
static void put_scalar(buffer *b, const json_t *v)
{
    char num[64];
    switch (json_typeof(v)) {
    case JSON_INTEGER:
        snprintf(num, sizeof num, "%" JSON_INTEGER_FORMAT, json_integer_value(v));
        puts_(b, num);
        break;
    case JSON_REAL:
        snprintf(num, sizeof num, "%.17g", json_real_value(v));
        puts_(b, num);
        break;
    case JSON_STRING: put_field(b, json_string_value(v)); break;
    case JSON_TRUE: puts_(b, "true"); break;
    case JSON_FALSE: puts_(b, "false"); break;
    default: break;
    }
}

/* An array as one field, its entries separated by blanks; an entry that
 * is an object (a mass point) is its values joined by ':' (level:probability). */
static void put_array(buffer *b, const json_t *a)
{
    buffer inner = {0};
    for (size_t i = 0; i < json_array_size(a); i++) {
        const json_t *e = json_array_get(a, i);
        if (i)
            put(&inner, " ", 1);
        if (json_is_object(e)) {
            const char *key;
            const json_t *v;
            int first = 1;
            json_object_foreach((json_t *)e, key, v)
            {
                if (!first)
                    put(&inner, ":", 1);
                put_scalar(&inner, v);
                first = 0;
            }
        } else {
            put_scalar(&inner, e);
        }
    }
    if (inner.oom)
        b->oom = 1;
    else
        put_field(b, inner.s ? inner.s : "");
    free(inner.s);
}

/* ---------------------------------------------------------------- */
/* Columns                                                            */
/* ---------------------------------------------------------------- */

typedef struct {
    char **name;
    size_t n, cap;
} columns;

static int has_column(const columns *c, const char *name)
{
    for (size_t i = 0; i < c->n; i++)
        if (strcmp(c->name[i], name) == 0)
            return 1;
    return 0;
}

static int add_column(columns *c, const char *name)
{
    if (has_column(c, name))
        return 0;
    if (c->n == c->cap) {
        size_t cap = c->cap ? 2 * c->cap : 32;
        char **grown = realloc(c->name, cap * sizeof *grown);
        if (!grown)
            return -1;
        c->name = grown;
        c->cap = cap;
    }
    if (!(c->name[c->n] = strdup(name)))
        return -1;
    c->n++;
    return 0;
}

static void free_columns(columns *c)
{
    for (size_t i = 0; i < c->n; i++)
        free(c->name[i]);
    free(c->name);
}

/* The report's fields, flattened ("parameters.sigma"), in order of first
 * appearance over the points; a field named like a sweep axis is the
 * axis's column already. */
static int report_columns(const qc_scenario *sc, json_t *const *records, columns *c)
{
    for (size_t i = 0; i < sc->npoints; i++) {
        json_t *r = json_object_get(records[i], "result");
        const char *key;
        json_t *v;
        json_object_foreach(r, key, v)
        {
            int axis = 0;
            for (size_t k = 0; k < sc->naxes; k++) {
                char col[256];
                qc_field_name(sc->axes[k].key, col, sizeof col);
                axis |= strcmp(col, key) == 0;
            }
            if (axis)
                continue;
            if (json_is_object(v)) {
                const char *sub;
                json_t *sv;
                json_object_foreach(v, sub, sv)
                {
                    char name[256];
                    snprintf(name, sizeof name, "%s.%s", key, sub);
                    if (add_column(c, name) != 0)
                        return -1;
                }
            } else if (add_column(c, key) != 0)
                return -1;
        }
    }
    return 0;
}

static json_t *report_field(json_t *result, const char *column)
{
    json_t *v = json_object_get(result, column);
    if (v)
        return v;
    const char *dot = strchr(column, '.');
    if (!dot)
        return NULL;
    char head[256];
    size_t n = (size_t)(dot - column);
    if (n >= sizeof head)
        return NULL;
    memcpy(head, column, n);
    head[n] = '\0';
    return json_object_get(json_object_get(result, head), dot + 1);
}

qc_status qc_results_write_csv(const qc_scenario *sc, json_t *const *records, const char *path)
{
    columns c = {0};
    buffer b = {0};
    if (report_columns(sc, records, &c) != 0) {
        free_columns(&c);
        return qc_fail(QC_ENOMEM, "out of memory writing %s", path);
    }
    /* the alphabet's section NAME; when `alphabet` is itself a sweep
     * axis its values take the column `alphabet` */
    puts_(&b, sc_axis_index(sc, "alphabet") >= 0 ? "point,alphabet_name" : "point,alphabet");
    for (size_t k = 0; k < sc->naxes; k++) {
        char col[256];
        qc_field_name(sc->axes[k].key, col, sizeof col);
        put(&b, ",", 1);
        put_field(&b, col);
    }
    puts_(&b, ",status,error");
    for (size_t j = 0; j < c.n; j++) {
        put(&b, ",", 1);
        put_field(&b, c.name[j]);
    }
    put(&b, "\n", 1);
    size_t vi[QC_SCENARIO_MAX_AXES], alpha;
    for (size_t i = 0; i < sc->npoints; i++) {
        char num[32];
        snprintf(num, sizeof num, "%zu", i + 1); /* points count from 1 */
        puts_(&b, num);
        sc_point_coords(sc, i, &alpha, vi);
        put(&b, ",", 1);
        put_field(&b, sc->alphabets[alpha].name);
        for (size_t k = 0; k < sc->naxes; k++) {
            put(&b, ",", 1);
            put_field(&b, sc->axes[k].values[vi[k]]);
        }
        put(&b, ",", 1);
        put_scalar(&b, json_object_get(records[i], "status"));
        put(&b, ",", 1);
        put_scalar(&b, json_object_get(records[i], "error"));
        json_t *result = json_object_get(records[i], "result");
        for (size_t j = 0; j < c.n; j++) {
            put(&b, ",", 1);
            json_t *v = report_field(result, c.name[j]);
            if (json_is_array(v))
                put_array(&b, v);
            else if (v && !json_is_object(v))
                put_scalar(&b, v);
        }
        put(&b, "\n", 1);
    }
    free_columns(&c);
    qc_status st = b.oom ? qc_fail(QC_ENOMEM, "out of memory writing %s", path)
                         : qc_write_file_atomic(path, b.s, b.n);
    free(b.s);
    return st;
}

/* ---------------------------------------------------------------- */
/* JSON                                                               */
/* ---------------------------------------------------------------- */

static const sc_section *find_section(const qc_scenario *sc, const char *type,
                                      const char *name)
{
    for (size_t i = 0; i < sc->nsections; i++) {
        const sc_section *s = &sc->sections[i];
        if (strcmp(s->type, type) == 0 &&
            (!name || (s->name && strcmp(s->name, name) == 0)))
            return s;
    }
    return NULL;
}

/* Every setting of a point: base, then its alphabet's keys, then the axis
 * values — the flags `quantcap design` takes to redo the point. */
/* The members of "settings" are the keys as written (a map from key to
 * text, the flags `quantcap design` takes), not field names. */
static void set_setting(json_t *o, const char *key, const char *value)
{
    json_object_set_new(o, key, json_string(value));
}

static json_t *point_settings(const qc_scenario *sc, size_t alpha, const size_t *vi)
{
    json_t *o = json_object();
    const char *types[] = {"receiver", "design"};
    for (int t = 0; o && t < 2; t++) {
        const sc_section *s = find_section(sc, types[t], NULL);
        for (size_t k = 0; s && k < s->n; k++)
            set_setting(o, s->entries[k].key, s->entries[k].value);
    }
    const sc_section *a = find_section(sc, "alphabet", sc->alphabets[alpha].name);
    for (size_t k = 0; o && a && k < a->n; k++)
        if (strcmp(a->entries[k].key, "label") != 0)
            set_setting(o, a->entries[k].key, a->entries[k].value);
    for (size_t k = 0; o && k < sc->naxes; k++)
        set_setting(o, sc->axes[k].key, sc->axes[k].values[vi[k]]);
    return o;
}

static json_t *nullable_string(const char *s) { return s ? json_string(s) : json_null(); }

qc_status qc_results_write_json(const qc_scenario *sc, json_t *const *records, const char *path)
{
    json_t *root = json_object(), *scen = json_object(), *alphas = json_array(),
           *axes = json_array(), *points = json_array();
    if (!root || !scen || !alphas || !axes || !points) {
        json_decref(root);
        json_decref(scen);
        json_decref(alphas);
        json_decref(axes);
        json_decref(points);
        return qc_fail(QC_ENOMEM, "out of memory writing %s", path);
    }
    json_object_set_new(root, "format", json_string("quantcap-sweep"));
    json_object_set_new(root, "version", json_integer(1));
    json_object_set_new(scen, "file", json_string(sc->file));
    json_object_set_new(scen, "title", nullable_string(sc->title));
    json_object_set_new(scen, "description", nullable_string(sc->description));
    json_object_set_new(scen, "hash", json_string(sc->hash));
    json_object_set_new(scen, "points", json_integer((json_int_t)sc->npoints));
    for (size_t a = 0; a < sc->nalphabets; a++)
        json_array_append_new(alphas, json_pack("{s:s, s:s}", "name", sc->alphabets[a].name,
                                                "label", sc->alphabets[a].label));
    for (size_t k = 0; k < sc->naxes; k++) {
        json_t *vals = json_array();
        for (size_t j = 0; j < sc->axes[k].n; j++)
            json_array_append_new(vals, json_string(sc->axes[k].values[j]));
        json_array_append_new(axes, json_pack("{s:s, s:o}", "key", sc->axes[k].key, "values",
                                              vals));
    }
    json_object_set_new(scen, "alphabets", alphas);
    json_object_set_new(scen, "axes", axes);
    json_object_set_new(root, "scenario", scen);
    size_t vi[QC_SCENARIO_MAX_AXES], alpha;
    for (size_t i = 0; i < sc->npoints; i++) {
        sc_point_coords(sc, i, &alpha, vi);
        json_t *p = json_object();
        json_object_set_new(p, "point", json_integer((json_int_t)i + 1));
        json_object_set_new(p, "alphabet", json_string(sc->alphabets[alpha].name));
        json_object_set_new(p, "settings", point_settings(sc, alpha, vi));
        json_object_set(p, "status", json_object_get(records[i], "status"));
        json_object_set(p, "error", json_object_get(records[i], "error"));
        json_object_set(p, "result", json_object_get(records[i], "result"));
        json_array_append_new(points, p);
    }
    json_object_set_new(root, "points", points);
    char *text = json_dumps(root, JSON_FLAGS);
    json_decref(root);
    if (!text)
        return qc_fail(QC_ENOMEM, "out of memory writing %s", path);
    size_t len = strlen(text);
    char *withnl = realloc(text, len + 2);
    if (!withnl) {
        free(text);
        return qc_fail(QC_ENOMEM, "out of memory writing %s", path);
    }
    withnl[len] = '\n';
    withnl[len + 1] = '\0';
    qc_status st = qc_write_file_atomic(path, withnl, len + 1);
    free(withnl);
    return st;
}

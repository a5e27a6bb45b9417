/* model_dump.c — reads a JSON list of queries on stdin and prints the
 * model values as JSON, for the scipy cross-checks in tests/models/.
 * Query: {"model": NAME, "params": {NAME: VALUE, ...} | "table": PATH,
 *         "x": LEVEL, "t": [T, ...]}
 * Answer per query: {"below": [...], "above": [...], "density": [...],
 *         "mean": M, "var": V} (below/above/density at each t). */
#include <stdio.h>
#include <stdlib.h>

#include <jansson.h>
#include <math.h>

#include "quantcap.h"

static int fail(const char *what)
{
    fprintf(stderr, "model_dump: %s: %s\n", what, qc_last_error());
    return 1;
}

/* A number, or null where it is not finite (jansson refuses NaN). */
static json_t *number(double v) { return isfinite(v) ? json_real(v) : json_null(); }

static int run(json_t *q, json_t *out)
{
    const char *name = json_string_value(json_object_get(q, "model"));
    const char *table = json_string_value(json_object_get(q, "table"));
    qc_model *m = NULL;
    if (table) {
        if (qc_model_table_load(table, &m) != QC_OK)
            return fail(table);
    } else {
        const qc_model_type *type = qc_model_type_find(name);
        if (!type)
            return fail("unknown model");
        double p[QC_MODEL_MAX_PARAMS];
        for (size_t i = 0; i < QC_MODEL_MAX_PARAMS; i++)
            p[i] = NAN;
        const char *key;
        json_t *val;
        json_object_foreach(json_object_get(q, "params"), key, val)
        {
            int i = qc_model_param_index(type, key);
            if (i < 0)
                return fail(key);
            p[i] = json_number_value(val);
        }
        if (qc_model_alloc(type, p, &m) != QC_OK)
            return fail(name);
    }
    double x = json_number_value(json_object_get(q, "x"));
    json_t *ts = json_object_get(q, "t");
    json_t *below = json_array(), *above = json_array(), *dens = json_array();
    size_t i;
    json_t *tv;
    json_array_foreach(ts, i, tv)
    {
        double t = json_number_value(tv);
        json_array_append_new(below, number(qc_model_get_type(m)->below(m, x, t)));
        json_array_append_new(above, number(qc_model_get_type(m)->above(m, x, t)));
        json_array_append_new(dens, number(qc_model_get_type(m)->density(m, x, t)));
    }
    double mean = NAN, var = NAN;
    if (qc_model_moments(m, x, &mean, &var) != QC_OK) {
        qc_model_free(m);
        return fail("moments");
    }
    json_t *r = json_object();
    json_object_set_new(r, "below", below);
    json_object_set_new(r, "above", above);
    json_object_set_new(r, "density", dens);
    json_object_set_new(r, "mean", json_real(mean));
    json_object_set_new(r, "var", json_real(var));
    json_array_append_new(out, r);
    qc_model_free(m);
    return 0;
}

int main(void)
{
    json_error_t err;
    json_t *in = json_loadf(stdin, 0, &err);
    if (!in || !json_is_array(in)) {
        fprintf(stderr, "model_dump: bad JSON input: %s\n", err.text);
        return 1;
    }
    json_t *out = json_array();
    size_t i;
    json_t *q;
    int rc = 0;
    json_array_foreach(in, i, q) if ((rc = run(q, out)) != 0) break;
    if (rc == 0) {
        char *s = json_dumps(out, JSON_REAL_PRECISION(17));
        puts(s);
        free(s);
    }
    json_decref(in);
    json_decref(out);
    return rc;
}

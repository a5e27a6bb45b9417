/* scenario_compile.c — the meaning of a scenario's sections: base
 * settings, alphabets, sweep axes (lists and ranges, scenario_range.c), the
 * plots asked for (plot_config.c), the grid of points and its hash. Every
 * design key is a scenario key with the same meaning; its values are
 * checked by the same code as the `design` command's flags
 * (qc_settings_set). */
#include "study/scenario.h"

#include "core/internal.h"
#include "core/parse.h"
#include "study/settings_internal.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* ---------------------------------------------------------------- */
/* Helpers                                                            */
/* ---------------------------------------------------------------- */

/* Set a design key into settings, naming the line on failure. */
static qc_status set_key(const qc_scenario *sc, qc_settings *s, const sc_entry *e,
                         const char *where)
{
    char loc[300];
    if (!qc_setting_known(e->key))
        return sc_unknown_key(sc, e, where, qc_setting_suggest(e->key));
    if (sc_range_is(e->value)) {
        sc_where(sc, e->line, loc, sizeof loc);
        if (e->line > 0)
            return qc_fail(QC_EINVAL, "%s: '%s': a range ('%s') is taken only by a [sweep] axis; "
                           "move the key to [sweep]", loc, e->key, e->value);
        return qc_fail(QC_EINVAL, "%s: '%s': a range ('%s') is taken only by a [sweep] axis; "
                       "use --set sweep.%s=...", loc, e->key, e->value, e->key);
    }
    qc_status st = qc_settings_set(s, e->key, e->value);
    if (st != QC_OK) {
        char msg[768];
        snprintf(msg, sizeof msg, "%s", qc_last_error());
        return qc_fail(st, "%s: '%s': %s", sc_where(sc, e->line, loc, sizeof loc), e->key, msg);
    }
    return QC_OK;
}

static int is_list_key(const char *key)
{
    size_t n;
    const qc_setting_info *info = qc_setting_keys(&n);
    for (size_t i = 0; i < n; i++)
        if (strcmp(info[i].key, key) == 0)
            return info[i].metavar && strchr(info[i].metavar, ',') != NULL;
    return 0;
}

static char *trim_copy(const char *p, size_t len)
{
    while (len > 0 && (*p == ' ' || *p == '\t')) {
        p++;
        len--;
    }
    while (len > 0 && (p[len - 1] == ' ' || p[len - 1] == '\t'))
        len--;
    char *s = malloc(len + 1);
    if (s) {
        memcpy(s, p, len);
        s[len] = '\0';
    }
    return s;
}

/* ---------------------------------------------------------------- */
/* Clearing                                                           */
/* ---------------------------------------------------------------- */

static void axis_clear(sc_axis *a)
{
    for (size_t j = 0; j < a->n; j++)
        free(a->values[j]);
    free(a->values);
    free(a->number);
    memset(a, 0, sizeof *a);
}

void sc_compiled_clear(qc_scenario *sc)
{
    for (size_t i = 0; i < sc->nalphabets; i++)
        qc_settings_free(sc->alphabets[i].settings);
    free(sc->alphabets);
    for (size_t i = 0; i < sc->naxes; i++)
        axis_clear(&sc->axes[i]);
    free(sc->axes);
    sc->alphabets = NULL;
    sc->axes = NULL;
    sc->nalphabets = sc->naxes = sc->npoints = 0;
    sc_plots_clear(&sc->plots);
    memset(&sc->require, 0, sizeof sc->require);
    sc->title = sc->description = NULL;
    sc->hash[0] = '\0';
}

/* ---------------------------------------------------------------- */
/* Axes                                                               */
/* ---------------------------------------------------------------- */

static qc_status axis_push(sc_axis *a, size_t *cap, char *value)
{
    if (!value)
        return qc_fail(QC_ENOMEM, "out of memory");
    if (a->n == *cap) {
        size_t c = *cap ? 2 * *cap : 16;
        char **grown = realloc(a->values, c * sizeof *grown);
        if (!grown) {
            free(value);
            return qc_fail(QC_ENOMEM, "out of memory");
        }
        a->values = grown;
        *cap = c;
    }
    a->values[a->n++] = value;
    return QC_OK;
}

/* Append the values of a range item, written with 15 significant digits
 * (so that 0 to 1 step 0.1 gives 0.3, not 0.30000000000000004). */
static qc_status push_range(sc_axis *a, size_t *cap, const double *v, size_t n)
{
    for (size_t k = 0; k < n; k++) {
        char buf[64];
        snprintf(buf, sizeof buf, "%.15g", v[k]);
        if (axis_push(a, cap, strdup(buf)) != QC_OK)
            return QC_ENOMEM;
        if (a->n > QC_SCENARIO_MAX_AXIS_VALUES)
            return QC_OK; /* the caller names the key */
    }
    return QC_OK;
}

/* Sorting axis values to find repeats in O(n log n). */
static _Thread_local const sc_axis *sort_axis;
static _Thread_local int sort_numeric;

static int compare_values(const void *pa, const void *pb)
{
    size_t i = *(const size_t *)pa, j = *(const size_t *)pb;
    if (sort_numeric) {
        double x = sort_axis->number[i], y = sort_axis->number[j];
        if (x != y)
            return x < y ? -1 : 1;
    } else {
        int c = strcmp(sort_axis->values[i], sort_axis->values[j]);
        if (c)
            return c;
    }
    return i < j ? -1 : i > j; /* equal values: the earlier first */
}

/* No value twice on an axis (numbers compare by value). The comparison
 * reads the axis through a thread-local pointer. */
static qc_status check_repeats(const sc_axis *a, int numeric, const char *loc, const char *key)
{
    size_t *order = malloc(a->n * sizeof *order);
    if (!order)
        return qc_fail(QC_ENOMEM, "out of memory");
    for (size_t j = 0; j < a->n; j++)
        order[j] = j;
    sort_axis = a;
    sort_numeric = numeric;
    qsort(order, a->n, sizeof *order, compare_values);
    qc_status st = QC_OK;
    for (size_t j = 1; j < a->n && st == QC_OK; j++) {
        size_t p = order[j - 1], q = order[j];
        if (numeric ? a->number[p] == a->number[q] : strcmp(a->values[p], a->values[q]) == 0)
            st = qc_fail(QC_EINVAL, "%s: '%s': the value %s appears twice", loc, key,
                         a->values[q]);
    }
    free(order);
    return st;
}

static qc_status build_axis(const qc_scenario *sc, const sc_entry *e, sc_axis *a)
{
    char loc[300];
    sc_where(sc, e->line, loc, sizeof loc);
    a->key = e->key;
    a->line = e->line;
    if (!qc_setting_known(e->key))
        return sc_unknown_key(sc, e, "[sweep]", qc_setting_suggest(e->key));
    const int lists = is_list_key(e->key);
    if (lists && !strchr(e->value, ';'))
        return qc_fail(QC_EINVAL,
                       "%s: '%s' takes a list of numbers and cannot be a sweep axis of single "
                       "numbers; separate whole lists with ';' (taps = 1, 0.5; 1, 0.3) or "
                       "give each choice its own [alphabet NAME] section",
                       loc, e->key);
    size_t cap = 0;
    const char *p = e->value;
    /* a key that takes a list: the axis is whole lists separated by ';' */
    for (const char *semi; lists; p = semi + 1) {
        semi = strchr(p, ';');
        size_t len = semi ? (size_t)(semi - p) : strlen(p);
        char *item = trim_copy(p, len);
        if (!item)
            return qc_fail(QC_ENOMEM, "out of memory");
        if (item[0] == '\0') {
            free(item);
            return qc_fail(QC_EINVAL, "%s: '%s': list %zu is empty in '%s'", loc, e->key,
                           a->n + 1, e->value);
        }
        qc_status st = axis_push(a, &cap, item);
        if (st != QC_OK)
            return st;
        if (a->n > QC_SCENARIO_MAX_AXIS_VALUES)
            return qc_fail(QC_EINVAL, "%s: '%s': more than %d values", loc, e->key,
                           QC_SCENARIO_MAX_AXIS_VALUES);
        if (!semi)
            break;
    }
    for (; !lists;) {
        const char *comma = strchr(p, ',');
        size_t len = comma ? (size_t)(comma - p) : strlen(p);
        char *item = trim_copy(p, len);
        if (!item)
            return qc_fail(QC_ENOMEM, "out of memory");
        if (item[0] == '\0') {
            free(item);
            return qc_fail(QC_EINVAL, "%s: '%s': value %zu is empty in '%s'", loc, e->key,
                           a->n + 1, e->value);
        }
        double *range = NULL;
        size_t nrange = 0;
        qc_status st = sc_range_expand(item, loc, e->key, &range, &nrange);
        if (st == QC_OK && !range) {
            st = axis_push(a, &cap, item); /* a single value */
        } else {
            free(item);
            if (st == QC_OK)
                st = push_range(a, &cap, range, nrange);
            free(range);
        }
        if (st != QC_OK)
            return st;
        if (a->n > QC_SCENARIO_MAX_AXIS_VALUES)
            return qc_fail(QC_EINVAL, "%s: '%s': more than %d values", loc, e->key,
                           QC_SCENARIO_MAX_AXIS_VALUES);
        if (!comma)
            break;
        p = comma + 1;
    }
    /* every value must be valid for the key, exactly as a flag would be */
    qc_settings *scratch;
    qc_status st = qc_settings_alloc(&scratch);
    if (st != QC_OK)
        return st;
    int numeric = 1;
    a->number = malloc(a->n * sizeof *a->number);
    if (!a->number) {
        qc_settings_free(scratch);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    for (size_t j = 0; j < a->n && st == QC_OK; j++) {
        st = qc_settings_set(scratch, e->key, a->values[j]);
        if (st != QC_OK) {
            char msg[768];
            snprintf(msg, sizeof msg, "%s", qc_last_error());
            st = qc_fail(st, "%s: '%s': %s", loc, e->key, msg);
            break;
        }
        if (numeric && qc_parse_double(a->values[j], &a->number[j]) != QC_OK)
            numeric = 0;
    }
    qc_settings_free(scratch);
    if (st == QC_OK)
        st = check_repeats(a, numeric, loc, e->key);
    if (!numeric) {
        free(a->number);
        a->number = NULL;
    }
    return st;
}

/* ---------------------------------------------------------------- */
/* Sections                                                           */
/* ---------------------------------------------------------------- */

static qc_status compile_scenario_section(qc_scenario *sc)
{
    static const char *const keys[] = {"title", "description", NULL};
    sc_section *s = sc_section_find(sc, "scenario");
    for (size_t i = 0; s && i < s->n; i++) {
        const sc_entry *e = &s->entries[i];
        if (strcmp(e->key, "title") == 0)
            sc->title = e->value;
        else if (strcmp(e->key, "description") == 0)
            sc->description = e->value;
        else
            return sc_unknown_key(sc, e, "[scenario]", sc_closest(e->key, keys));
    }
    return QC_OK;
}

/* The [receiver] and [design] keys, into `base`. */
static qc_status compile_base(const qc_scenario *sc, qc_settings *base)
{
    const char *types[] = {"receiver", "design"};
    for (int t = 0; t < 2; t++) {
        sc_section *s = sc_section_find(sc, types[t]);
        char where[32];
        snprintf(where, sizeof where, "[%s]", types[t]);
        for (size_t i = 0; s && i < s->n; i++) {
            qc_status st = set_key(sc, base, &s->entries[i], where);
            if (st != QC_OK)
                return st;
        }
    }
    return QC_OK;
}

static qc_status compile_alphabets(qc_scenario *sc, const qc_settings *base)
{
    size_t n = 0;
    for (size_t i = 0; i < sc->nsections; i++)
        n += strcmp(sc->sections[i].type, "alphabet") == 0;
    sc->alphabets = calloc(n ? n : 1, sizeof *sc->alphabets);
    if (!sc->alphabets)
        return qc_fail(QC_ENOMEM, "out of memory");
    qc_status st;
    if (n == 0) {
        sc->nalphabets = 1;
        sc->alphabets[0] = (sc_alphabet){"default", "default", 0, NULL};
        st = qc_settings_copy(base, &sc->alphabets[0].settings);
        /* legends and titles name the alphabet, not the internal name */
        const char *spec = st == QC_OK ? qc_settings_get(sc->alphabets[0].settings, "alphabet")
                                       : NULL;
        sc->alphabets[0].label = spec ? spec : "given levels";
        return st;
    }
    for (size_t i = 0; i < sc->nsections; i++) {
        sc_section *s = &sc->sections[i];
        if (strcmp(s->type, "alphabet") != 0)
            continue;
        sc_alphabet *a = &sc->alphabets[sc->nalphabets++];
        a->name = a->label = s->name;
        a->line = s->line;
        if ((st = qc_settings_copy(base, &a->settings)) != QC_OK)
            return st;
        char where[64];
        snprintf(where, sizeof where, "[alphabet %s]", s->name);
        for (size_t k = 0; k < s->n; k++) {
            const sc_entry *e = &s->entries[k];
            if (strcmp(e->key, "label") == 0) {
                a->label = e->value;
                continue;
            }
            if (!qc_setting_known(e->key)) {
                static const char *const own[] = {"label", NULL};
                const char *near = sc_closest(e->key, own);
                return sc_unknown_key(sc, e, where, near ? near : qc_setting_suggest(e->key));
            }
            if ((st = set_key(sc, a->settings, e, where)) != QC_OK)
                return st;
        }
    }
    return QC_OK;
}

/* Where a key is set outside [sweep] (line, or -1 if nowhere). */
static int set_elsewhere(const qc_scenario *sc, const char *key)
{
    for (size_t i = 0; i < sc->nsections; i++) {
        const sc_section *s = &sc->sections[i];
        if (strcmp(s->type, "receiver") && strcmp(s->type, "design") &&
            strcmp(s->type, "alphabet"))
            continue;
        for (size_t k = 0; k < s->n; k++)
            if (strcmp(s->entries[k].key, key) == 0)
                return s->entries[k].line;
    }
    return -1;
}

static qc_status compile_axes(qc_scenario *sc)
{
    sc_section *s = sc_section_find(sc, "sweep");
    size_t n = s ? s->n : 0;
    sc->axes = calloc(n ? n : 1, sizeof *sc->axes);
    if (!sc->axes)
        return qc_fail(QC_ENOMEM, "out of memory");
    double points = (double)sc->nalphabets;
    if (n > QC_SCENARIO_MAX_AXES) {
        char loc[300];
        return qc_fail(QC_EINVAL, "%s: more than %d sweep axes",
                       sc_where(sc, s->entries[QC_SCENARIO_MAX_AXES].line, loc, sizeof loc),
                       QC_SCENARIO_MAX_AXES);
    }
    for (size_t i = 0; i < n; i++) {
        const sc_entry *e = &s->entries[i];
        sc->naxes = i + 1;
        qc_status st = build_axis(sc, e, &sc->axes[i]);
        if (st != QC_OK)
            return st;
        int other = set_elsewhere(sc, e->key);
        if (other >= 0) {
            char loc[300], at[64];
            if (other > 0)
                snprintf(at, sizeof at, "line %d", other);
            else
                snprintf(at, sizeof at, "--set");
            return qc_fail(QC_EINVAL,
                           "%s: '%s' is a sweep axis and is also set at %s; keep one of "
                           "the two",
                           sc_where(sc, e->line, loc, sizeof loc), e->key, at);
        }
        points *= (double)sc->axes[i].n;
    }
    if (points > QC_SCENARIO_MAX_POINTS)
        return qc_fail(QC_EINVAL, "%s: the grid has %.0f points, more than %d", sc->file, points,
                       QC_SCENARIO_MAX_POINTS);
    sc->npoints = (size_t)points;
    return QC_OK;
}

/* ---------------------------------------------------------------- */
/* Hash: FNV-1a, 64 bits, over what the points compute                */
/* ---------------------------------------------------------------- */

static uint64_t fnv(uint64_t h, const char *s)
{
    for (; *s; s++) {
        h ^= (unsigned char)*s;
        h *= 1099511628211ULL;
    }
    h ^= 0xff; /* field separator */
    h *= 1099511628211ULL;
    return h;
}

/* [require]: target, solve-for and an optional range, checked now. */
static qc_status compile_require(qc_scenario *sc)
{
    static const char *const keys[] = {"target", "solve-for", "range", NULL};
    sc_section *s = sc_section_find(sc, "require");
    sc_require *r = &sc->require;
    if (!s)
        return QC_OK;
    char loc[300];
    const sc_entry *target = NULL, *solve = NULL;
    for (size_t i = 0; i < s->n; i++) {
        const sc_entry *e = &s->entries[i];
        sc_where(sc, e->line, loc, sizeof loc);
        qc_status st;
        if (strcmp(e->key, "target") == 0) {
            target = e;
            if ((st = qc_target_parse(e->value, &r->target)) != QC_OK)
                return qc_fail(st, "%s: 'target': %s", loc, qc_last_error());
        } else if (strcmp(e->key, "solve-for") == 0) {
            solve = e;
            if ((st = qc_setting_check_solvable(e->value)) != QC_OK)
                return qc_fail(st, "%s: 'solve-for': %s", loc, qc_last_error());
            if (strlen(e->value) >= sizeof r->solve_for)
                return qc_fail(QC_EINVAL, "%s: 'solve-for': key too long", loc);
            snprintf(r->solve_for, sizeof r->solve_for, "%s", e->value);
        } else if (strcmp(e->key, "range") == 0) {
            double *v = NULL;
            size_t n = 0;
            st = qc_parse_list(e->value, &v, &n);
            int ok = st == QC_OK && n == 2 && v[0] < v[1];
            if (ok) {
                r->lo = v[0];
                r->hi = v[1];
                r->range_given = 1;
            }
            free(v);
            if (!ok)
                return qc_fail(QC_EINVAL, "%s: 'range': expected LO,HI with LO < HI (got '%s')",
                               loc, e->value);
        } else
            return sc_unknown_key(sc, e, "[require]", sc_closest(e->key, keys));
    }
    sc_where(sc, s->line, loc, sizeof loc);
    if (!target || !solve)
        return qc_fail(QC_EINVAL, "%s: [require] needs 'target' and 'solve-for'", loc);
    if (r->range_given && !qc_setting_in_db(r->solve_for) && !(r->lo > 0.0))
        return qc_fail(QC_EINVAL, "%s: 'range': %s is searched on a log scale; LO must be > 0",
                       loc, r->solve_for);
    r->on = 1;
    return QC_OK;
}

static void compute_hash(qc_scenario *sc)
{
    uint64_t h = 14695981039346656037ULL;
    const char *base[] = {"receiver", "design"};
    for (int t = 0; t < 2; t++) {
        sc_section *s = sc_section_find(sc, base[t]);
        for (size_t i = 0; s && i < s->n; i++) {
            h = fnv(h, s->entries[i].key);
            h = fnv(h, s->entries[i].value);
        }
    }
    for (size_t i = 0; i < sc->nsections; i++) {
        const sc_section *s = &sc->sections[i];
        if (strcmp(s->type, "alphabet") != 0)
            continue;
        h = fnv(h, "[alphabet]");
        h = fnv(h, s->name);
        for (size_t k = 0; k < s->n; k++)
            if (strcmp(s->entries[k].key, "label") != 0) {
                h = fnv(h, s->entries[k].key);
                h = fnv(h, s->entries[k].value);
            }
    }
    const sc_section *rq = sc_section_find(sc, "require");
    for (size_t i = 0; rq && i < rq->n; i++) {
        h = fnv(h, "[require]");
        h = fnv(h, rq->entries[i].key);
        h = fnv(h, rq->entries[i].value);
    }
    for (size_t i = 0; i < sc->naxes; i++) {
        h = fnv(h, "[axis]");
        h = fnv(h, sc->axes[i].key);
        for (size_t j = 0; j < sc->axes[i].n; j++)
            h = fnv(h, sc->axes[i].values[j]);
    }
    snprintf(sc->hash, sizeof sc->hash, "%016llx", (unsigned long long)h);
}

/* ---------------------------------------------------------------- */
/* Compile                                                            */
/* ---------------------------------------------------------------- */

qc_status sc_compile(qc_scenario *sc)
{
    sc_compiled_clear(sc);
    qc_settings *base = NULL;
    qc_status st = qc_settings_alloc(&base);
    if (st == QC_OK)
        st = compile_scenario_section(sc);
    if (st == QC_OK)
        st = compile_base(sc, base);
    if (st == QC_OK)
        st = compile_alphabets(sc, base);
    if (st == QC_OK)
        st = compile_axes(sc);
    if (st == QC_OK) {
        int has_model = 1;
        for (size_t i = 0; i < sc->nalphabets; i++)
            has_model &= qc_settings_get(sc->alphabets[i].settings, "model") != NULL;
        if (!has_model && sc_axis_index(sc, "model") < 0) {
            const sc_section *r = sc_section_find(sc, "receiver");
            char loc[300];
            if (r && r->line > 0)
                sc_where(sc, r->line, loc, sizeof loc);
            else
                snprintf(loc, sizeof loc, "%s", sc->file);
            st = qc_fail(QC_EINVAL, "%s: no 'model' given; set it in [receiver] (see "
                                    "'quantcap models')",
                         loc);
        }
    }
    if (st == QC_OK)
        st = sc_compile_plots(sc);
    if (st == QC_OK)
        st = compile_require(sc);
    qc_settings_free(base);
    if (st != QC_OK) {
        char msg[1024];
        snprintf(msg, sizeof msg, "%s", qc_last_error());
        sc_compiled_clear(sc);
        return qc_fail(st, "%s", msg);
    }
    compute_hash(sc);
    return QC_OK;
}

/* ---------------------------------------------------------------- */
/* Points                                                             */
/* ---------------------------------------------------------------- */

void sc_point_coords(const qc_scenario *sc, size_t index, size_t *alphabet, size_t *value_index)
{
    for (size_t k = sc->naxes; k-- > 0;) {
        value_index[k] = index % sc->axes[k].n;
        index /= sc->axes[k].n;
    }
    *alphabet = index;
}

qc_status qc_scenario_point_settings(const qc_scenario *sc, size_t index, qc_settings **out)
{
    *out = NULL;
    if (index >= sc->npoints)
        return qc_fail(QC_EINVAL, "point %zu is outside the grid of %zu points (points "
                                  "count from 1, indices from 0)",
                       index + 1, sc->npoints);
    size_t alpha, idx[QC_SCENARIO_MAX_AXES];
    sc_point_coords(sc, index, &alpha, idx);
    qc_status st = qc_settings_copy(sc->alphabets[alpha].settings, out);
    for (size_t k = 0; st == QC_OK && k < sc->naxes; k++)
        st = qc_settings_set(*out, sc->axes[k].key, sc->axes[k].values[idx[k]]);
    if (st != QC_OK) {
        qc_settings_free(*out);
        *out = NULL;
    }
    return st;
}

/* "[alphabet pam4], snr-db = 3, bits = 2" for messages. */
static void describe_point(const qc_scenario *sc, size_t index, char *buf, size_t cap)
{
    size_t alpha, vi[QC_SCENARIO_MAX_AXES];
    sc_point_coords(sc, index, &alpha, vi);
    size_t used = (size_t)snprintf(buf, cap, "point %zu (", index + 1);
    if (sc->alphabets[alpha].line || strcmp(sc->alphabets[alpha].name, "default"))
        used += (size_t)snprintf(buf + used, used < cap ? cap - used : 0, "[alphabet %s]%s",
                                 sc->alphabets[alpha].name, sc->naxes ? ", " : "");
    for (size_t k = 0; k < sc->naxes && used < cap; k++)
        used += (size_t)snprintf(buf + used, cap - used, "%s%s = %s", k ? ", " : "",
                                 sc->axes[k].key, sc->axes[k].values[vi[k]]);
    if (used < cap)
        snprintf(buf + used, cap - used, ")");
}

qc_status qc_scenario_check(const qc_scenario *sc)
{
    qc_model_cache *cache = NULL;
    qc_status st = qc_model_cache_alloc(&cache);
    if (st == QC_OK)
        st = sc_check_points(sc, cache, NULL);
    qc_model_cache_free(cache);
    return st;
}

qc_status sc_check_points(const qc_scenario *sc, qc_model_cache *cache, size_t *setting)
{
    for (size_t i = 0; i < sc->npoints; i++) {
        qc_settings *s = NULL;
        const qc_model *m = NULL;
        qc_design_request req;
        qc_status st = qc_scenario_point_settings(sc, i, &s);
        if (st == QC_OK)
            st = qc_settings_build_cached(s, cache, &m, &req);
        if (st == QC_OK && !req.channel.iq) /* a 2-D constellation has points */
            st = qc_model_check_levels(m, req.channel.levels, req.channel.nlevels);
        if (st == QC_OK) /* what the design would refuse at once (gmi on 3 levels) */
            st = qc_design_precheck(&req);
        if (setting)
            setting[i] = qc_model_cache_setting(cache, m);
        qc_model_cache_release(cache, m);
        qc_settings_free(s);
        /* a point asking what cannot be had (an ENOB above the bits) is
         * an outcome recorded when the point runs, not an invalid study */
        if (st != QC_OK && st != QC_EINFEASIBLE) {
            char msg[768], point[300], loc[300];
            snprintf(msg, sizeof msg, "%s", qc_last_error());
            describe_point(sc, i, point, sizeof point);
            size_t alpha, vi[QC_SCENARIO_MAX_AXES];
            sc_point_coords(sc, i, &alpha, vi);
            int line = sc->alphabets[alpha].line;
            if (line > 0)
                sc_where(sc, line, loc, sizeof loc);
            else
                snprintf(loc, sizeof loc, "%s", sc->file);
            return qc_fail(st, "%s: %s: %s", loc, point, msg);
        }
    }
    return QC_OK;
}

void sc_describe_point(const qc_scenario *sc, size_t index, char *buf, size_t cap)
{
    describe_point(sc, index, buf, cap);
}

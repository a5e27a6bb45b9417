/* model_cache.c — the model instances of a run of designs (a sweep's
 * grid points), kept by model setting: the type, its parameter values
 * (bit for bit, defaults filled in) and, for a measured table, the file's
 * path. A design borrows an instance of its setting and gives it back when
 * done; the next design of the same setting gets the same instance, with
 * what it computed so far: an APD model's gain law, FFT plans and
 * per-level laws are made once per sweep and thread instead of once per
 * point, and a table file is read once per thread. Without a cache (one
 * design) qc_settings_model_get makes a new instance for the caller.
 *
 * Threads: each instance is lent to one design at a time (a model instance
 * fills its caches as it is used, so it belongs to one thread at a time,
 * docs/architecture.md); when every instance of a setting is out, a new
 * one is built, so a sweep holds at most one instance per setting and
 * thread. Sharing one instance between threads instead would put a lock
 * around every evaluation of the APD law, which costs more than the
 * rebuilds it saves (about 15% of a sweep's time, measured with perf).
 * One mutex guards the list; instances are built outside it. A failed
 * build is not kept. Instances out on loan are kept; of the others, the
 * MODEL_CACHE_IDLE most recently given back, so that memory stays bounded
 * when every point has its own model.
 *
 * The cache also holds the unquantized rates computed with its models
 * (qc_unquantized_memo, src/quantizer/unquantized_memo.c), which the
 * designs built through it look up: a sweep's points at several
 * resolutions share one unquantized reference and the start of one
 * SNR-penalty search. */
#include "study/settings_internal.h"

#include <math.h>
#include <pthread.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#define MODEL_CACHE_IDLE 8 /* instances not on loan kept for later points */

typedef struct entry {
    const qc_model_type *type;
    double params[QC_MODEL_MAX_PARAMS]; /* defaults filled in; the rest 0 */
    char *table;                        /* file path, or NULL            */
    qc_model *model;                    /* NULL while being built        */
    int lent;                           /* on loan to a design           */
    unsigned long returned;             /* LRU stamp among idle entries  */
    size_t setting;                     /* number of the setting         */
    struct entry *next;
} entry;

struct qc_model_cache {
    pthread_mutex_t lock;
    qc_unquantized_memo *memo; /* unquantized rates of the run's designs */
    entry *head;
    size_t nidle;
    unsigned long clock;
    size_t settings; /* setting numbers handed out */
};

qc_status qc_model_cache_alloc(qc_model_cache **out)
{
    *out = NULL;
    qc_model_cache *c = calloc(1, sizeof *c);
    if (!c)
        return qc_fail(QC_ENOMEM, "out of memory for the model cache");
    if (pthread_mutex_init(&c->lock, NULL) != 0) {
        free(c);
        return qc_fail(QC_ENOMEM, "cannot create the lock of the model cache");
    }
    qc_status st = qc_unquantized_memo_alloc(0, &c->memo);
    if (st != QC_OK) {
        pthread_mutex_destroy(&c->lock);
        free(c);
        return st;
    }
    *out = c;
    return QC_OK;
}

static void entry_free(entry *e)
{
    qc_model_free(e->model);
    free(e->table);
    free(e);
}

void qc_model_cache_free(qc_model_cache *c)
{
    if (!c)
        return;
    for (entry *e = c->head, *next; e; e = next) {
        next = e->next;
        entry_free(e);
    }
    qc_unquantized_memo_free(c->memo);
    pthread_mutex_destroy(&c->lock);
    free(c);
}

static int same_setting(const entry *e, const qc_model_type *type, const double *params,
                        const char *table)
{
    return e->type == type && memcmp(e->params, params, sizeof e->params) == 0 &&
           (e->table && table ? strcmp(e->table, table) == 0 : e->table == table);
}

static void unlink_entry(qc_model_cache *c, entry *e)
{
    for (entry **p = &c->head; *p; p = &(*p)->next)
        if (*p == e) {
            *p = e->next;
            return;
        }
}

qc_status qc_model_cache_get(qc_model_cache *c, const qc_model_type *type,
                             const double *params, const char *table, const qc_model **out)
{
    *out = NULL;
    if (!c || !type)
        return qc_fail(QC_EINVAL, "no model cache or no model type given");
    if (type->nparams > QC_MODEL_MAX_PARAMS)
        return qc_fail(QC_EINVAL, "model '%s' has too many parameters", type->name);
    int from_file = (type->properties & QC_MODEL_FROM_FILE) != 0;
    if (from_file != (table != NULL))
        return qc_fail(QC_EINVAL, from_file ? "model '%s' needs its file"
                                            : "model '%s' is not read from a file",
                       type->name);
    /* the key: given values, defaults where NaN (as qc_model_alloc) */
    double key[QC_MODEL_MAX_PARAMS];
    memset(key, 0, sizeof key);
    for (size_t i = 0; i < type->nparams && !from_file; i++)
        key[i] = params && !isnan(params[i]) ? params[i] : type->params[i].default_value;

    if (pthread_mutex_lock(&c->lock) != 0)
        return qc_fail(QC_ENOMEM, "cannot take the lock of the model cache");
    entry *e;
    for (e = c->head; e && (e->lent || !same_setting(e, type, key, table)); e = e->next)
        ;
    if (e) { /* an idle instance of the setting */
        e->lent = 1;
        c->nidle--;
        pthread_mutex_unlock(&c->lock);
        *out = e->model;
        return QC_OK;
    }
    /* none idle: build one outside the lock, on loan from the start */
    if (!(e = calloc(1, sizeof *e)) || (table && !(e->table = strdup(table)))) {
        free(e);
        pthread_mutex_unlock(&c->lock);
        return qc_fail(QC_ENOMEM, "out of memory for the model cache");
    }
    e->type = type;
    memcpy(e->params, key, sizeof key);
    /* another instance of a setting the cache holds keeps its number */
    entry *same = c->head;
    while (same && !same_setting(same, type, key, table))
        same = same->next;
    e->setting = same ? same->setting : c->settings++;
    e->lent = 1;
    e->next = c->head;
    c->head = e;
    pthread_mutex_unlock(&c->lock);

    qc_model *m = NULL;
    qc_status st = from_file ? qc_model_table_load(table, &m) : qc_model_alloc(type, key, &m);

    pthread_mutex_lock(&c->lock);
    if (st == QC_OK) {
        e->model = m;
    } else {
        unlink_entry(c, e);
        entry_free(e);
    }
    pthread_mutex_unlock(&c->lock);
    *out = m;
    return st;
}

qc_unquantized_memo *qc_model_cache_memo(qc_model_cache *c) { return c ? c->memo : NULL; }

size_t qc_model_cache_setting(qc_model_cache *c, const qc_model *model)
{
    size_t setting = SIZE_MAX;
    if (!c || !model)
        return setting;
    pthread_mutex_lock(&c->lock);
    for (entry *e = c->head; e; e = e->next)
        if (e->model == model) {
            setting = e->setting;
            break;
        }
    pthread_mutex_unlock(&c->lock);
    return setting;
}

void qc_model_cache_release(qc_model_cache *c, const qc_model *model)
{
    if (!c || !model)
        return;
    pthread_mutex_lock(&c->lock);
    entry *e;
    for (e = c->head; e && e->model != model; e = e->next)
        ;
    if (e && e->lent) {
        e->lent = 0;
        e->returned = ++c->clock;
        c->nidle++;
    }
    /* keep the most recently returned idle instances */
    while (c->nidle > MODEL_CACHE_IDLE) {
        entry *old = NULL;
        for (entry *p = c->head; p; p = p->next)
            if (!p->lent && (!old || p->returned < old->returned))
                old = p;
        unlink_entry(c, old);
        entry_free(old);
        c->nidle--;
    }
    pthread_mutex_unlock(&c->lock);
}

qc_status qc_settings_model_get(qc_model_cache *cache, const qc_model_type *type,
                                const double *params, const char *table,
                                const qc_model **out)
{
    if (cache)
        return qc_model_cache_get(cache, type, params, table, out);
    qc_model *m = NULL;
    qc_status st = table ? qc_model_table_load(table, &m) : qc_model_alloc(type, params, &m);
    *out = m;
    return st;
}

void qc_settings_model_put(qc_model_cache *cache, const qc_model *m)
{
    if (cache)
        qc_model_cache_release(cache, m);
    else
        qc_model_free((qc_model *)m); /* made by qc_settings_model_get for this caller */
}

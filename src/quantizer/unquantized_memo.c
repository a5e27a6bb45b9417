/* unquantized_memo.c — unquantized rates already computed, kept for the
 * designs that meet the same channel again. A sweep's points at several
 * resolutions share their unquantized reference (the same model, levels
 * and law), and the SNR-penalty searches of those points walk the same
 * unquantized curve from the same start (src/design/snr.c), so most of
 * the adaptive quadratures of a sweep (qc_unquantized_mi_detail) repeat
 * one made before.
 *
 * The key is everything the rate depends on, bit for bit: the model type,
 * its parameter values, the levels and the law. A model instance's value
 * at a level depends on its parameters and the level alone
 * (docs/architecture.md, Threads), so a value found here is the one a new
 * quadrature would give, to the last bit. Models read from a file are not
 * kept (their parameters do not say which file). Failures are not kept:
 * a second call fails again with its own message.
 *
 * A hash table (FNV-1a over the key's bytes; Fowler, Noll and Vo, IETF
 * draft-eastlake-fnv, 2019) under one mutex; the quadrature runs outside
 * the lock, so two threads may compute the same entry at once and both
 * get the same value. When the entries exceed the byte budget given at
 * allocation the table is emptied and starts again, which keeps the most
 * recent channels (the points of a sweep that share a channel are near
 * each other in grid order). */
#include "quantizer/quantizer.h"

#include <pthread.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#define MEMO_BUCKETS 4096 /* hash chains                                  */

typedef struct memo_entry {
    struct memo_entry *next;
    uint64_t hash;
    size_t nkey;   /* doubles in key[]                                   */
    double mi, abserr;
    int noiseless;
    const qc_model_type *type;
    double key[]; /* params (QC_MODEL_MAX_PARAMS), levels, law         */
} memo_entry;

struct qc_unquantized_memo {
    pthread_mutex_t lock;
    memo_entry *bucket[MEMO_BUCKETS];
    size_t bytes, budget;
    size_t hits, misses;
};

qc_status qc_unquantized_memo_alloc(size_t budget_bytes, qc_unquantized_memo **out)
{
    *out = NULL;
    qc_unquantized_memo *m = calloc(1, sizeof *m);
    if (!m)
        return qc_fail(QC_ENOMEM, "out of memory for the store of unquantized rates");
    if (pthread_mutex_init(&m->lock, NULL) != 0) {
        free(m);
        return qc_fail(QC_ENOMEM, "cannot create the lock of the store of unquantized rates");
    }
    m->budget = budget_bytes ? budget_bytes : QC_UNQUANTIZED_MEMO_BYTES;
    *out = m;
    return QC_OK;
}

/* Empty the table (caller holds the lock or is alone). */
static void memo_clear(qc_unquantized_memo *m)
{
    for (size_t b = 0; b < MEMO_BUCKETS; b++) {
        for (memo_entry *e = m->bucket[b], *next; e; e = next) {
            next = e->next;
            free(e);
        }
        m->bucket[b] = NULL;
    }
    m->bytes = 0;
}

void qc_unquantized_memo_free(qc_unquantized_memo *m)
{
    if (!m)
        return;
    memo_clear(m);
    pthread_mutex_destroy(&m->lock);
    free(m);
}

void qc_unquantized_memo_counts(qc_unquantized_memo *m, size_t *hits, size_t *misses)
{
    size_t h = 0, n = 0;
    if (m) {
        pthread_mutex_lock(&m->lock);
        h = m->hits;
        n = m->misses;
        pthread_mutex_unlock(&m->lock);
    }
    if (hits)
        *hits = h;
    if (misses)
        *misses = n;
}

static uint64_t fnv1a(uint64_t h, const void *data, size_t len)
{
    const unsigned char *p = data;
    for (size_t i = 0; i < len; i++) {
        h ^= p[i];
        h *= 0x100000001b3ULL;
    }
    return h;
}

/* The key of (model, levels, law) into a new entry (NULL: out of memory). */
static memo_entry *make_key(const qc_model *model, const double *levels, const double *input,
                            size_t n)
{
    const qc_model_type *type = qc_model_get_type(model);
    const size_t nkey = QC_MODEL_MAX_PARAMS + 2 * n;
    if (n > (SIZE_MAX - sizeof(memo_entry)) / (3 * sizeof(double)))
        return NULL;
    memo_entry *e = calloc(1, sizeof *e + nkey * sizeof(double));
    if (!e)
        return NULL;
    e->type = type;
    e->nkey = nkey;
    const double *params = qc_model_params(model);
    for (size_t i = 0; i < type->nparams && i < QC_MODEL_MAX_PARAMS; i++)
        e->key[i] = params[i];
    memcpy(e->key + QC_MODEL_MAX_PARAMS, levels, n * sizeof *levels);
    memcpy(e->key + QC_MODEL_MAX_PARAMS + n, input, n * sizeof *input);
    uint64_t h = 0xcbf29ce484222325ULL;
    h = fnv1a(h, &type, sizeof type);
    e->hash = fnv1a(h, e->key, nkey * sizeof(double));
    return e;
}

static int same_key(const memo_entry *a, const memo_entry *b)
{
    return a->hash == b->hash && a->type == b->type && a->nkey == b->nkey &&
           memcmp(a->key, b->key, a->nkey * sizeof(double)) == 0;
}

qc_status qc_unquantized_mi_memo(qc_unquantized_memo *memo, const qc_model *model,
                                 const double *levels, const double *input, size_t nlevels,
                                 double *mi_nats, double *abserr_nats, int *noiseless)
{
    if (!memo || !model || !levels || !input || nlevels == 0 ||
        (qc_model_get_type(model)->properties & QC_MODEL_FROM_FILE))
        return qc_unquantized_mi_detail(model, levels, input, nlevels, mi_nats, abserr_nats,
                                        noiseless);
    memo_entry *k = make_key(model, levels, input, nlevels);
    if (!k)
        return qc_unquantized_mi_detail(model, levels, input, nlevels, mi_nats, abserr_nats,
                                        noiseless);
    const size_t b = (size_t)(k->hash % MEMO_BUCKETS);
    pthread_mutex_lock(&memo->lock);
    for (const memo_entry *e = memo->bucket[b]; e; e = e->next)
        if (same_key(e, k)) {
            *mi_nats = e->mi;
            if (abserr_nats)
                *abserr_nats = e->abserr;
            if (noiseless)
                *noiseless = e->noiseless;
            memo->hits++;
            pthread_mutex_unlock(&memo->lock);
            free(k);
            return QC_OK;
        }
    memo->misses++;
    pthread_mutex_unlock(&memo->lock);

    qc_status st = qc_unquantized_mi_detail(model, levels, input, nlevels, &k->mi,
                                            &k->abserr, &k->noiseless);
    if (st != QC_OK) {
        free(k);
        return st;
    }
    *mi_nats = k->mi;
    if (abserr_nats)
        *abserr_nats = k->abserr;
    if (noiseless)
        *noiseless = k->noiseless;
    const size_t size = sizeof *k + k->nkey * sizeof(double);
    pthread_mutex_lock(&memo->lock);
    int present = 0;
    for (const memo_entry *e = memo->bucket[b]; e && !present; e = e->next)
        present = same_key(e, k); /* another thread computed it meanwhile */
    if (present || size > memo->budget) {
        free(k);
    } else {
        if (memo->bytes + size > memo->budget)
            memo_clear(memo);
        k->next = memo->bucket[b];
        memo->bucket[b] = k;
        memo->bytes += size;
    }
    pthread_mutex_unlock(&memo->lock);
    return QC_OK;
}

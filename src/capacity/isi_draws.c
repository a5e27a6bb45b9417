/* isi_draws.c — a simulated sequence kept for reuse. The simulation of a
 * channel with memory (isi_rate.c) draws, batch by batch, each batch's
 * first state, then a symbol and one standard normal draw per quadrature
 * for every symbol; what it computes from them (the window's mean and
 * noise scale, the thresholds, which figures) does not change the draws.
 * A search that rates many settings on the same seeded sequence (common
 * random numbers) can therefore record them on its first run and replay
 * them on the others, which then give the same bits without the
 * generator's cost. The record belongs to one seed, law, tap count,
 * batch length and kind of output; a run that asks for anything else
 * records anew. */
#include "capacity/isi.h"
#include "core/internal.h"

#include <stdlib.h>
#include <string.h>

/* The largest record kept (bytes); longer sequences are drawn each time. */
#define DRAWS_MAX_BYTES ((size_t)64 << 20)

struct qc_isi_draws {
    int ready;                    /* a whole record is held                 */
    uint64_t seed;
    size_t M, ntaps, warmup, count;
    int coherent;                 /* two normal draws a symbol              */
    size_t per_batch;             /* symbols recorded per batch (tail too)  */
    double *law;                  /* the M probabilities drawn from         */
    size_t s0[QC_ISI_BATCHES];    /* each batch's first state               */
    uint32_t *x;                  /* QC_ISI_BATCHES × per_batch symbols     */
    double *z;                    /* × (coherent ? 2 : 1) normal draws      */
};

qc_status qc_isi_draws_alloc(qc_isi_draws **out)
{
    *out = calloc(1, sizeof **out);
    return *out ? QC_OK : qc_fail(QC_ENOMEM, "out of memory for a kept sequence");
}

void qc_isi_draws_free(qc_isi_draws *d)
{
    if (!d)
        return;
    free(d->law);
    free(d->x);
    free(d->z);
    free(d);
}

/* Whether d's record is the sequence a run with these settings draws,
 * for at least per_batch symbols a batch. */
static int covers(const qc_isi_draws *d, uint64_t seed, const double *law, size_t M,
                  size_t ntaps, size_t warmup, size_t count, size_t per_batch, int coherent)
{
    return d->ready && d->seed == seed && d->M == M && d->ntaps == ntaps &&
           d->warmup == warmup && d->count == count && d->coherent == coherent &&
           d->per_batch >= per_batch && memcmp(d->law, law, M * sizeof *law) == 0;
}

int qc_isi_draws_begin(qc_isi_draws *d, uint64_t seed, const double *law, size_t M,
                       size_t ntaps, size_t warmup, size_t count, size_t per_batch,
                       int coherent)
{
    if (!d)
        return QC_ISI_DRAW;
    if (covers(d, seed, law, M, ntaps, warmup, count, per_batch, coherent))
        return QC_ISI_REPLAY;
    d->ready = 0;
    const size_t zw = coherent ? 2 : 1, n = QC_ISI_BATCHES * per_batch;
    if (per_batch > DRAWS_MAX_BYTES / QC_ISI_BATCHES /
                        (sizeof *d->x + zw * sizeof *d->z))
        return QC_ISI_DRAW;
    uint32_t *x = realloc(d->x, n * sizeof *x);
    if (x)
        d->x = x;
    double *z = x ? realloc(d->z, n * zw * sizeof *z) : NULL;
    if (z)
        d->z = z;
    double *lw = z ? realloc(d->law, M * sizeof *lw) : NULL;
    if (!lw) /* a record is only a saving: without memory for it, draw */
        return QC_ISI_DRAW;
    d->law = lw;
    memcpy(d->law, law, M * sizeof *law);
    d->seed = seed;
    d->M = M;
    d->ntaps = ntaps;
    d->warmup = warmup;
    d->count = count;
    d->coherent = coherent;
    d->per_batch = per_batch;
    return QC_ISI_RECORD;
}

void qc_isi_draws_stream(qc_isi_draws *d, int mode, size_t b, qc_isi_stream *s)
{
    memset(s, 0, sizeof *s);
    if (mode == QC_ISI_DRAW)
        return;
    const size_t zw = d->coherent ? 2 : 1;
    s->mode = mode;
    s->x = d->x + b * d->per_batch;
    s->z = d->z + b * d->per_batch * zw;
    s->s0 = &d->s0[b];
}

void qc_isi_draws_end(qc_isi_draws *d, int mode, int complete)
{
    if (d && mode == QC_ISI_RECORD)
        d->ready = complete;
}

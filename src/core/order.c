/* order.c — the indices that sort an array of doubles: increasing value,
 * NaNs last, ties by index. The comparison is a total order, so the
 * result does not depend on how qsort sorts. */
#include "core/internal.h"

#include <math.h>
#include <stdlib.h>

typedef struct {
    double value;
    size_t index;
} ranked;

static int by_value_then_index(const void *a, const void *b)
{
    const ranked *p = a, *q = b;
    if (p->value < q->value)
        return -1;
    if (p->value > q->value)
        return 1;
    int pn = isnan(p->value) != 0, qn = isnan(q->value) != 0;
    if (pn != qn)
        return pn - qn;
    return (p->index > q->index) - (p->index < q->index);
}

qc_status qc_sort_order(const double *values, size_t n, size_t *order)
{
    ranked *r = qc_malloc_array(n, sizeof *r);
    if (!r && n > 0)
        return qc_fail(QC_ENOMEM, "out of memory");
    for (size_t i = 0; i < n; i++)
        r[i] = (ranked){values[i], i};
    if (n > 0)
        qsort(r, n, sizeof *r, by_value_then_index);
    for (size_t k = 0; k < n; k++)
        order[k] = r[k].index;
    free(r);
    return QC_OK;
}

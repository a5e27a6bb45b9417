/* labels.c — binary-reflected Gray labels (F. Gray, US patent 2,632,058,
 * 1953): neighbouring levels differ in one bit. */
#include "alphabet/alphabet.h"

#include <stdlib.h>

size_t qc_gray_code(size_t i) { return i ^ (i >> 1); }

qc_status qc_gray_labels(const double *levels, size_t n, size_t *labels, unsigned *nbits)
{
    if (!qc_is_power_of_two(n))
        return qc_fail(QC_EINVAL,
                       "Gray labels need a power of 2 levels (got %zu levels)", n);
    size_t *order = qc_malloc_array(n, sizeof *order);
    if (!order)
        return qc_fail(QC_ENOMEM, "out of memory");
    qc_status st = qc_sort_order(levels, n, order);
    if (st != QC_OK) {
        free(order);
        return st;
    }
    for (size_t k = 0; k < n; k++)
        labels[order[k]] = qc_gray_code(k); /* Gray code in level order */
    free(order);
    unsigned b = 0;
    while (((size_t)1 << b) < n)
        b++;
    *nbits = b;
    return QC_OK;
}

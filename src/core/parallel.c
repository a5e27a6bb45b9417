/* parallel.c — when a single computation spreads its rows over OpenMP
 * threads (the rows of a large transition matrix, the densities of a
 * large Newton step). Callers branch on it before entering a parallel
 * region: even a region that does not fork costs about a microsecond,
 * as much as a whole rate evaluation of a small channel. */
#include "core/internal.h"

#ifdef _OPENMP
#include <omp.h>
#endif

/* Below this many entries a parallel region (a few microseconds) would
 * cost more than it saves: PAM-8 at 8 bits has 2056. */
#define PARALLEL_MIN_ENTRIES 65536

int qc_parallel_worth(size_t entries)
{
#ifdef _OPENMP
    return entries >= PARALLEL_MIN_ENTRIES && omp_get_level() == 0 &&
           omp_get_max_threads() > 1;
#else
    (void)entries;
    return 0;
#endif
}

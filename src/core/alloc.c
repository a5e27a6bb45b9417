/* alloc.c — checked allocation. Blocks of LARGE_BLOCK bytes or more (the
 * transition matrices of alphabets of thousands of levels) are marked
 * for transparent huge pages where Linux offers them (madvise(2),
 * MADV_HUGEPAGE): glibc maps such blocks afresh on every allocation, and
 * first touching them page by page took a seventh of a 4096-level
 * design's time in page faults. The advice is only a hint; where it is
 * refused or unknown nothing changes. */
#if defined(__linux__) && !defined(_DEFAULT_SOURCE)
#define _DEFAULT_SOURCE /* madvise and MADV_HUGEPAGE (glibc, musl) */
#endif
#include "core/internal.h"

#include <stdint.h>
#include <stdlib.h>

#if defined(__linux__)
#include <sys/mman.h>
#include <unistd.h>
#endif

#define LARGE_BLOCK ((size_t)32 << 20) /* glibc maps blocks this large */

static void *advise_large(void *p, size_t bytes)
{
#if defined(__linux__) && defined(MADV_HUGEPAGE)
    if (p && bytes >= LARGE_BLOCK) {
        long page = sysconf(_SC_PAGESIZE);
        if (page > 0) {
            uintptr_t a = ((uintptr_t)p + (uintptr_t)page - 1) & ~((uintptr_t)page - 1);
            uintptr_t e = ((uintptr_t)p + bytes) & ~((uintptr_t)page - 1);
            if (e > a)
                (void)madvise((void *)a, e - a, MADV_HUGEPAGE);
        }
    }
#else
    (void)bytes;
#endif
    return p;
}

void *qc_malloc_array(size_t n, size_t size)
{
    if (size != 0 && n > SIZE_MAX / size)
        return NULL;
    size_t bytes = n * size;
    return advise_large(malloc(bytes ? bytes : 1), bytes);
}

void *qc_calloc(size_t n, size_t size)
{
    if (size != 0 && n > SIZE_MAX / size)
        return NULL;
    return advise_large(calloc(n ? n : 1, size ? size : 1), n * size);
}

/* vlog.c — logarithms of an array, two at a time through glibc's vector
 * math library (libmvec, the x86-64 vector function ABI of glibc 2.22 and
 * later) where the build found it, else one at a time with log(3). Used
 * by the inner loops of the capacity engine. */
#include "core/internal.h"

#include <math.h>

#if defined(QC_HAVE_LIBMVEC) && defined(__x86_64__) && defined(__SSE2__)
#include <emmintrin.h>
/* glibc's vector logarithm, two lanes (libmvec, the x86-64 vector
 * function ABI; an ifunc picks the best code for the processor). Its
 * error is below 4 ulp, as glibc documents for libmvec. */
__m128d _ZGVbN2v_log(__m128d x);
#endif

/* out[i] = log in[i] for in[i] > 0, `floor` where in[i] = 0 (in ≥ 0).
 * Normal numbers go two at a time through the vector logarithm. */
void qc_log_floored(const double *in, double *out, size_t n, double floor)
{
    size_t i = 0;
#if defined(QC_HAVE_LIBMVEC) && defined(__x86_64__) && defined(__SSE2__)
    const __m128d tiny = _mm_set1_pd(0x1p-1022);
    for (; i + 2 <= n; i += 2) {
        __m128d v = _mm_loadu_pd(in + i);
        /* subnormal or zero lanes take the scalar path */
        if (_mm_movemask_pd(_mm_cmplt_pd(v, tiny)) != 0) {
            for (size_t k = i; k < i + 2; k++)
                out[k] = in[k] > 0.0 ? log(in[k]) : floor;
            continue;
        }
        _mm_storeu_pd(out + i, _ZGVbN2v_log(v));
    }
#endif
    for (; i < n; i++)
        out[i] = in[i] > 0.0 ? log(in[i]) : floor;
}


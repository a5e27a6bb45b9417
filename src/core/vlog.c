/* vlog.c — logarithms of an array, four (AVX2) or two (SSE) at a time
 * through glibc's vector math library (libmvec, the x86-64 vector
 * function ABI of glibc 2.22 and later) where the build found it, else
 * one at a time with log(3). Used
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

#if defined(QC_HAVE_LIBMVEC) && defined(__x86_64__) && defined(__SSE2__) && \
    defined(__GNUC__) && !defined(__clang__)
#define QC_VLOG_AVX2 1
#pragma GCC push_options
#pragma GCC target("avx2")
#include <immintrin.h>
/* the four-lane variant, for processors with AVX2 */
__m256d _ZGVdN4v_log(__m256d x);

/* As qc_log_floored, four at a time; returns how many it did. */
static size_t log_floored_avx2(const double *in, double *out, size_t n, double floor)
{
    const __m256d tiny = _mm256_set1_pd(0x1p-1022);
    size_t i = 0;
    for (; i + 4 <= n; i += 4) {
        __m256d v = _mm256_loadu_pd(in + i);
        if (_mm256_movemask_pd(_mm256_cmp_pd(v, tiny, _CMP_LT_OQ)) != 0) {
            for (size_t k = i; k < i + 4; k++)
                out[k] = in[k] > 0.0 ? log(in[k]) : floor;
            continue;
        }
        _mm256_storeu_pd(out + i, _ZGVdN4v_log(v));
    }
    return i;
}
#pragma GCC pop_options
#endif

/* out[i] = log in[i] for in[i] > 0, `floor` where in[i] = 0 (in ≥ 0).
 * Normal numbers go four (AVX2) or two at a time through the vector
 * logarithm. */
void qc_log_floored(const double *in, double *out, size_t n, double floor)
{
    size_t i = 0;
#ifdef QC_VLOG_AVX2
    if (__builtin_cpu_supports("avx2"))
        i = log_floored_avx2(in, out, n, floor);
#endif
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


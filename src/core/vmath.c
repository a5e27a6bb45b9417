/* vmath.c — logarithms and exponentials of an array, four (AVX2) or two
 * (SSE2) at a time through glibc's vector math library (libmvec, the
 * x86-64 vector function ABI of glibc 2.22 and later) where the build
 * found it, else one at a time with log(3) and exp(3). A group of lanes
 * with one whose result would leave the normal range takes the scalar
 * function (exponentials that round to 0 are set to 0 instead), so an
 * element's last bit can depend on its neighbours in the array, the same
 * way on every run. Used by
 * the inner loops of the capacity engine and of the rates of channels
 * with memory. libmvec's error is below 4 ulp, as glibc documents. */
#include "core/internal.h"

#include <math.h>

/* exp(x) rounds to 0 below this (e^x < 2^−1075); exp(x) is a normal
 * number inside [EXP_NORMAL_LO, EXP_NORMAL_HI] */
#define EXP_ZERO_BELOW (-745.2)
#define EXP_NORMAL_LO (-708.0)
#define EXP_NORMAL_HI 709.0

#if defined(QC_HAVE_LIBMVEC) && defined(__x86_64__) && defined(__SSE2__)
#define QC_VMATH_SSE2 1
#include <emmintrin.h>
/* glibc's vector logarithm and exponential, two lanes (an ifunc picks the
 * best code for the processor) */
__m128d _ZGVbN2v_log(__m128d x);
__m128d _ZGVbN2v_exp(__m128d x);
#endif

#if defined(QC_VMATH_SSE2) && defined(__GNUC__) && !defined(__clang__)
#define QC_VMATH_AVX2 1
#pragma GCC push_options
#pragma GCC target("avx2")
#include <immintrin.h>
/* the four-lane variants, for processors with AVX2 */
__m256d _ZGVdN4v_log(__m256d x);
__m256d _ZGVdN4v_exp(__m256d x);

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

/* As qc_exp_array, four at a time; returns how many it did. */
static size_t exp_avx2(const double *in, double *out, size_t n)
{
    const __m256d zero_below = _mm256_set1_pd(EXP_ZERO_BELOW);
    const __m256d lo = _mm256_set1_pd(EXP_NORMAL_LO), hi = _mm256_set1_pd(EXP_NORMAL_HI);
    size_t i = 0;
    for (; i + 4 <= n; i += 4) {
        __m256d v = _mm256_loadu_pd(in + i);
        /* lanes whose exponential rounds to 0 are computed as exp(0), then
         * cleared */
        __m256d zero = _mm256_cmp_pd(v, zero_below, _CMP_LT_OQ);
        v = _mm256_andnot_pd(zero, v);
        __m256d inside = _mm256_and_pd(_mm256_cmp_pd(v, lo, _CMP_GE_OQ),
                                       _mm256_cmp_pd(v, hi, _CMP_LE_OQ));
        if (_mm256_movemask_pd(inside) != 0xf) {
            for (size_t k = i; k < i + 4; k++)
                out[k] = exp(in[k]);
            continue;
        }
        _mm256_storeu_pd(out + i, _mm256_andnot_pd(zero, _ZGVdN4v_exp(v)));
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
#ifdef QC_VMATH_AVX2
    if (__builtin_cpu_supports("avx2"))
        i = log_floored_avx2(in, out, n, floor);
#endif
#ifdef QC_VMATH_SSE2
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

/* out[i] = exp in[i] (in and out may be the same array). Groups of four
 * (AVX2) or two lanes whose results are normal numbers or round to 0 go
 * through the vector exponential (those rounding to 0 set to 0); a group
 * with a lane in between (a subnormal result) or above (overflow), or a
 * NaN, takes exp(3) on all its lanes. */
void qc_exp_array(const double *in, double *out, size_t n)
{
    size_t i = 0;
#ifdef QC_VMATH_AVX2
    if (__builtin_cpu_supports("avx2"))
        i = exp_avx2(in, out, n);
#endif
#ifdef QC_VMATH_SSE2
    const __m128d zero_below = _mm_set1_pd(EXP_ZERO_BELOW);
    const __m128d lo = _mm_set1_pd(EXP_NORMAL_LO), hi = _mm_set1_pd(EXP_NORMAL_HI);
    for (; i + 2 <= n; i += 2) {
        __m128d v = _mm_loadu_pd(in + i);
        __m128d zero = _mm_cmplt_pd(v, zero_below);
        v = _mm_andnot_pd(zero, v);
        __m128d inside = _mm_and_pd(_mm_cmpge_pd(v, lo), _mm_cmple_pd(v, hi));
        if (_mm_movemask_pd(inside) != 0x3) {
            for (size_t k = i; k < i + 2; k++)
                out[k] = exp(in[k]);
            continue;
        }
        _mm_storeu_pd(out + i, _mm_andnot_pd(zero, _ZGVbN2v_exp(v)));
    }
#endif
    for (; i < n; i++)
        out[i] = exp(in[i]);
}

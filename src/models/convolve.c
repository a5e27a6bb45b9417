/* convolve.c — linear convolution of sampled densities by the FFT
 * (convolution theorem, zero padding to avoid wrap-around; Cooley &
 * Tukey, Math. Comp. 19, 1965) on FFTW 3 real-to-complex plans (Frigo &
 * Johnson, Proc. IEEE 93(2), 2005). Plans are made once per length with
 * FFTW_ESTIMATE and executed on the struct's own aligned buffers.
 * qc_conv_chirp samples a spectrum at frequencies 2πk/N for any N by the
 * chirp z-transform: nk = (n² + k² − (k − n)²)/2 turns the sum into a
 * convolution (L. I. Bluestein, "A linear filtering approach to the
 * computation of discrete Fourier transform," IEEE Trans. Audio
 * Electroacoust. 18(4), 1970; L. R. Rabiner, R. W. Schafer and C. M.
 * Rader, "The chirp z-transform algorithm," ibid. 17(2), 1969). */
#include "models/convolve.h"

#include "core/internal.h"
#include "quantcap/model.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <pthread.h>

#include <fftw3.h>

struct qc_conv {
    size_t n;
    double *re;           /* n reals              */
    fftw_complex *sp;     /* n/2 + 1 complexes    */
    double complex *tmp;  /* spectrum scratch     */
    fftw_plan fwd, inv;
};

/* A POSIX mutex rather than C11 mtx_t: ThreadSanitizer (GCC 12's
 * libtsan) does not intercept mtx_lock, so it could not see this lock. */
static pthread_mutex_t planner_lock = PTHREAD_MUTEX_INITIALIZER;

size_t qc_conv_good_size(size_t n)
{
    if (n <= 1)
        return 1;
    for (size_t m = n; m < SIZE_MAX / 2; m++) {
        size_t r = m;
        static const size_t primes[] = {2, 3, 5, 7};
        for (size_t i = 0; i < 4; i++)
            while (r % primes[i] == 0)
                r /= primes[i];
        if (r == 1)
            return m;
    }
    return 0;
}

qc_status qc_conv_alloc(size_t n, qc_conv **out)
{
    *out = NULL;
    if (n == 0 || n > ((size_t)1 << 30))
        return qc_fail(QC_EINVAL, "convolution length %zu out of range", n);
    qc_conv *c = calloc(1, sizeof *c);
    if (!c)
        return qc_fail(QC_ENOMEM, "out of memory");
    c->n = n;
    c->re = fftw_alloc_real(n);
    c->sp = fftw_alloc_complex(n / 2 + 1);
    c->tmp = qc_malloc_array(n / 2 + 1, sizeof *c->tmp);
    if (!c->re || !c->sp || !c->tmp)
        goto fail;
    pthread_mutex_lock(&planner_lock);
    c->fwd = fftw_plan_dft_r2c_1d((int)n, c->re, c->sp, FFTW_ESTIMATE);
    c->inv = fftw_plan_dft_c2r_1d((int)n, c->sp, c->re, FFTW_ESTIMATE);
    pthread_mutex_unlock(&planner_lock);
    if (!c->fwd || !c->inv)
        goto fail;
    *out = c;
    return QC_OK;
fail:
    qc_conv_free(c);
    return qc_fail(QC_ENOMEM, "out of memory for a length-%zu FFT", n);
}

void qc_conv_free(qc_conv *c)
{
    if (!c)
        return;
    pthread_mutex_lock(&planner_lock);
    if (c->fwd)
        fftw_destroy_plan(c->fwd);
    if (c->inv)
        fftw_destroy_plan(c->inv);
    pthread_mutex_unlock(&planner_lock);
    fftw_free(c->re);
    fftw_free(c->sp);
    free(c->tmp);
    free(c);
}

size_t qc_conv_length(const qc_conv *c) { return c->n; }
size_t qc_conv_spectrum_length(const qc_conv *c) { return c->n / 2 + 1; }

void qc_conv_forward(qc_conv *c, const double *x, size_t nx,
                     double complex *spectrum)
{
    if (nx > c->n)
        nx = c->n;
    memcpy(c->re, x, nx * sizeof *x);
    memset(c->re + nx, 0, (c->n - nx) * sizeof *x);
    fftw_execute_dft_r2c(c->fwd, c->re, c->sp);
    memcpy(spectrum, c->sp, (c->n / 2 + 1) * sizeof *spectrum);
}

void qc_conv_inverse(qc_conv *c, const double complex *spectrum, double *y)
{
    /* c2r destroys its input: work on the struct's buffer */
    memcpy(c->sp, spectrum, (c->n / 2 + 1) * sizeof *spectrum);
    fftw_execute_dft_c2r(c->inv, c->sp, c->re);
    double scale = 1.0 / (double)c->n;
    for (size_t i = 0; i < c->n; i++)
        y[i] = c->re[i] * scale;
}

qc_status qc_conv_linear(qc_conv *c, const double *a, size_t na,
                         const double *b, size_t nb, double *y)
{
    if (na == 0 || nb == 0)
        return qc_fail(QC_EINVAL, "convolution of an empty sequence");
    if (na + nb - 1 > c->n)
        return qc_fail(QC_EINVAL,
                       "convolution of lengths %zu and %zu needs %zu points "
                       "(plan has %zu)",
                       na, nb, na + nb - 1, c->n);
    size_t ns = c->n / 2 + 1;
    qc_conv_forward(c, a, na, c->tmp);
    memcpy(c->re, b, nb * sizeof *b);
    memset(c->re + nb, 0, (c->n - nb) * sizeof *b);
    fftw_execute_dft_r2c(c->fwd, c->re, c->sp);
    double complex *sp = (double complex *)c->sp;
    for (size_t i = 0; i < ns; i++)
        sp[i] *= c->tmp[i];
    fftw_execute_dft_c2r(c->inv, c->sp, c->re);
    double scale = 1.0 / (double)c->n;
    for (size_t i = 0; i < na + nb - 1; i++)
        y[i] = c->re[i] * scale;
    return QC_OK;
}

/* e^{−iπ m²/N}, the phase reduced exactly: m² mod 2N in integers
 * (m < 2^30, so m² fits). */
static double complex chirp(uint64_t m, uint64_t N)
{
    uint64_t r = (m * m) % (2 * N);
    double a = 3.14159265358979323846 * ((double)r / (double)N);
    return cos(a) - I * sin(a);
}

qc_status qc_conv_chirp(const double *x, size_t nx, size_t N, size_t K,
                        double complex *X)
{
    if (nx == 0 || K == 0 || N == 0)
        return qc_fail(QC_EINVAL, "chirp transform of %zu points at %zu of %zu "
                                  "frequencies",
                       nx, K, N);
    size_t P = qc_conv_good_size(nx + K - 1);
    if (P == 0 || P > ((size_t)1 << 30))
        return qc_fail(QC_EINVAL, "chirp transform needs %zu + %zu points", nx, K);
    if (N > ((size_t)1 << 60))
        return qc_fail(QC_EINVAL, "chirp transform period %zu too long", N);
    fftw_complex *a = fftw_alloc_complex(P), *b = fftw_alloc_complex(P);
    fftw_plan fwd = NULL, inv = NULL;
    qc_status st = QC_OK;
    if (!a || !b) {
        st = qc_fail(QC_ENOMEM, "out of memory for a length-%zu FFT", P);
        goto done;
    }
    pthread_mutex_lock(&planner_lock);
    fwd = fftw_plan_dft_1d((int)P, a, a, FFTW_FORWARD, FFTW_ESTIMATE);
    inv = fftw_plan_dft_1d((int)P, a, a, FFTW_BACKWARD, FFTW_ESTIMATE);
    pthread_mutex_unlock(&planner_lock);
    if (!fwd || !inv) {
        st = qc_fail(QC_ENOMEM, "out of memory for a length-%zu FFT", P);
        goto done;
    }
    double complex *A = (double complex *)a, *B = (double complex *)b;
    memset(A, 0, P * sizeof *A);
    memset(B, 0, P * sizeof *B);
    for (size_t n = 0; n < nx; n++)
        A[n] = x[n] * chirp(n, N);
    for (size_t m = 0; m < K; m++)
        B[m] = conj(chirp(m, N));
    for (size_t m = 1; m < nx; m++) /* negative lags k − n < 0 */
        B[P - m] = conj(chirp(m, N));
    fftw_execute_dft(fwd, a, a);
    fftw_execute_dft(fwd, b, b);
    for (size_t i = 0; i < P; i++)
        A[i] *= B[i];
    fftw_execute_dft(inv, a, a);
    double scale = 1.0 / (double)P;
    for (size_t k = 0; k < K; k++)
        X[k] = A[k] * scale * chirp(k, N);
done:
    pthread_mutex_lock(&planner_lock);
    if (fwd)
        fftw_destroy_plan(fwd);
    if (inv)
        fftw_destroy_plan(inv);
    pthread_mutex_unlock(&planner_lock);
    fftw_free(a);
    fftw_free(b);
    return st;
}

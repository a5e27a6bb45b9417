/* convolve.h — linear convolution of sampled densities on FFTW, with
 * plans made once per transform length and reused (plan/execute).
 * Internal to the library (tests may use it). A qc_conv is used by one
 * thread at a time; creating plans is serialized internally, since the
 * FFTW planner is not thread-safe. */
#ifndef QC_CONVOLVE_H
#define QC_CONVOLVE_H

#include <complex.h>
#include <stddef.h>

#include "core/internal.h"
#include "quantcap/model.h"

typedef struct qc_conv qc_conv;

/* Smallest length ≥ n of the form 2^a·3^b·5^c·7^d (fast for FFTW);
 * 0 on overflow. */
size_t qc_conv_good_size(size_t n);

/* Plans and buffers for real transforms of length n ≥ 1. */
qc_status qc_conv_alloc(size_t n, qc_conv **out);
void qc_conv_free(qc_conv *c);

/* Transform length n and spectrum length n/2 + 1. */
size_t qc_conv_length(const qc_conv *c);
size_t qc_conv_spectrum_length(const qc_conv *c);

/* Spectrum of x[0..nx) zero-padded to n (nx ≤ n). */
void qc_conv_forward(qc_conv *c, const double *x, size_t nx,
                     double complex *spectrum);
/* Inverse of a spectrum, scaled by 1/n: y[0..n) (circular result). */
void qc_conv_inverse(qc_conv *c, const double complex *spectrum, double *y);

/* Linear convolution y[0..na+nb−1) = a * b. QC_EINVAL if na + nb − 1
 * exceeds the length n or either input is empty. */
qc_status qc_conv_linear(qc_conv *c, const double *a, size_t na,
                         const double *b, size_t nb, double *y);

/* Samples of the discrete-time Fourier transform of x[0..nx) at the K
 * frequencies 2πk/N, k = 0..K−1 (N need not be a transform length):
 *   X[k] = Σ_n x[n] e^{−2πi nk/N}   (the sign of qc_conv_forward),
 * by the chirp z-transform (Bluestein's algorithm), three complex FFTs of
 * a length ≥ nx + K − 1. QC_EINVAL for nx or K = 0 or N = 0. */
qc_status qc_conv_chirp(const double *x, size_t nx, size_t N, size_t K,
                        double complex *X);

#endif

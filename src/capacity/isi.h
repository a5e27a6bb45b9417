/* isi.h — the trellis of a channel with intersymbol interference, shared
 * by the files of the memory-channel engine (isi_channel.c builds it,
 * isi_rate.c runs the forward recursion on it). Private to src/capacity. */
#ifndef QC_CAPACITY_ISI_H
#define QC_CAPACITY_ISI_H

#include <stdint.h>

#define QC_ISI_LN2 0.69314718055994530942
#define QC_ISI_PI 3.14159265358979323846

#include "quantcap/dmc.h"
#include "quantcap/memory.h"
#include "quantcap/model.h"
#include "quantcap/quantizer.h"

/* Windows t = x_k + M·x_{k−1} + … + M^L·x_{k−L} (T = M^(L+1) of them);
 * the state before x_k is t / M, the state after it is t mod S. */
typedef struct {
    size_t M, S, T, K, ntaps;  /* M: symbols (QAM: levels²)                  */
    const double *taps, *levels, *thresholds; /* borrowed from the request */
    int coherent;              /* 1: complex output, I and Q quantized      */
    size_t nlevels;            /* levels per quadrature                      */
    double *sym_re, *sym_im;   /* the M symbols (coherent; NULL otherwise)   */
    double *tap_re, *tap_im;   /* copies of the taps (coherent)              */
    double *mean_q, *sd_q, *inv_sd_q; /* the Q quadrature's law (T; coherent)*/
    qc_dmc *window_dmc_q;      /* T × K cells of Q (coherent)                */
    double *law, *logp;     /* input law and its log (M)                     */
    double *state_prior;    /* the i.i.d. law of a state (S)                 */
    double *noiseless;      /* noiseless output of each window (T)           */
    double *mean, *sd;      /* the Gaussian output law of each window (T)    */
    double *inv_sd;         /* 1 / sd (T)                                    */
    double *log_weight;     /* log p(x_k) − log sd of each window (T)        */
    qc_dmc *window_dmc;     /* T × K cell probabilities (NULL: no thresholds)*/
} qc_isi_channel;

/* Check the request and build its trellis; on failure *out is NULL. */
qc_status qc_isi_channel_build(const qc_isi_request *req, qc_isi_channel **out);
void qc_isi_channel_free(qc_isi_channel *ch);

/* The memoryless channel x_{k−d} → quantized y_k, d the main cursor (the
 * largest |h_d|), the other symbols of the window averaged. Coherent: the
 * output is the joint cell a + K·b of I (a) and Q (b), M × K². */
qc_status qc_isi_symbolwise_dmc(const qc_isi_channel *ch, qc_dmc **out);

/* One step of the normalized forward recursion: next[s'] = Σ_{t: t mod S
 * = s'} a[t / M]·w[t], then next is scaled to sum 1; returns the sum
 * before scaling (the step's likelihood up to w's common factor). */
double qc_isi_forward_step(const qc_isi_channel *ch, const double *a, const double *w,
                           double *next);

/* The same step with branch weights w[t]·w2[t] (the product formed
 * first): a coherent link's I and Q cell probabilities; w2 = NULL is
 * qc_isi_forward_step. */
double qc_isi_forward_step_pair(const qc_isi_channel *ch, const double *a, const double *w,
                                const double *w2, double *next);

/* A kept sequence (isi_draws.c): how a run's batches get their draws. */
enum { QC_ISI_DRAW, QC_ISI_RECORD, QC_ISI_REPLAY };

/* One batch's view of a kept sequence: in QC_ISI_RECORD mode the draws
 * are written to x (symbols), z (normal draws, 2 per symbol when
 * coherent) and *s0 (the first state); in QC_ISI_REPLAY mode read from
 * them; in QC_ISI_DRAW mode (all NULL) drawn only. */
typedef struct {
    int mode;
    uint32_t *x;
    double *z;
    size_t *s0;
} qc_isi_stream;

/* How a run with these settings gets its draws from d (NULL: drawn):
 * QC_ISI_REPLAY when d holds them (per_batch symbols a batch, the tail
 * included), else QC_ISI_RECORD when d can hold them (then recorded by
 * the run), else QC_ISI_DRAW. */
int qc_isi_draws_begin(qc_isi_draws *d, uint64_t seed, const double *law, size_t M,
                       size_t ntaps, size_t warmup, size_t count, size_t per_batch,
                       int coherent);
/* Batch b's view for that mode. */
void qc_isi_draws_stream(qc_isi_draws *d, int mode, size_t b, qc_isi_stream *s);
/* After the run: a record is kept only when every batch drew it whole. */
void qc_isi_draws_end(qc_isi_draws *d, int mode, int complete);

/* One simulated batch, as the detector needs it: for symbol k the
 * continuous output y[k], its cell among the thresholds and the true
 * window; the figures count symbols first .. first + count − 1 (the
 * warm-up before and a tail after give both recursions their context). */
typedef struct {
    const double *y;
    const uint32_t *cell, *window;
    size_t n, first, count;
} qc_isi_trace;

/* What the detector found on one batch (per bit / per symbol). */
typedef struct {
    double ber;              /* posterior-expected bit errors of the MAP
                                symbol decisions, per bit                */
    double ber_counted;      /* errors counted against the true bits     */
    double bit_entropy_bits; /* Σ_b −log2 P(b_true | y), mean per symbol */
} qc_isi_detection;

/* The symbol-wise MAP (BCJR) detector on one batch (isi_bcjr.c); lik as
 * in isi_rate.c (p(x_t)·P(cell | t) at lik[cell·T + t]), used unless
 * `unquantized`. Returns 0, 1 when a likelihood vanished, −1 when out of
 * memory; sets no message (it runs inside the parallel batches). */
int qc_isi_bcjr(const qc_isi_channel *ch, const double *lik, const qc_isi_trace *tr,
                const size_t *labels, unsigned nbits, int unquantized, qc_isi_detection *out);

#endif

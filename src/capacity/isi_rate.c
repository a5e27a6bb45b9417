/* isi_rate.c — information rates of a channel with intersymbol
 * interference and i.i.d. inputs by the simulation-based method of
 * D. M. Arnold, H.-A. Loeliger, P. O. Vontobel, A. Kavčić and W. Zeng,
 * "Simulation-based computation of information rates for channels with
 * memory", IEEE Trans. IT 52(8), 2006:
 *
 *   I ≈ (1/n)·[log p(y^n | x^n, s_0) − log p(y^n)],
 *
 * on one long simulated sequence, with p(y^n) from the forward recursion
 * (the sum-product algorithm on the trellis, normalized at every step:
 * log p(y^n) = Σ_k log λ_k). The quantized rate uses the cell
 * probabilities of each window (qc_discretize) as likelihoods; the
 * unquantized rate uses the Gaussian densities, taken relative to their
 * largest so that no step underflows. Both follow the same simulated
 * continuous outputs, the quantized ones being their cells, so the gap
 * between them is estimated with common random numbers.
 *
 * The interval is by batch means: QC_ISI_BATCHES independent sequences,
 * batch b with its own generator seeded from (seed, b) by the SplitMix64
 * finalizer (G. L. Steele, D. Lea, C. H. Flood, "Fast splittable
 * pseudorandom number generators", OOPSLA 2014), a warm-up of 100·L
 * symbols not counted (the start's bias fades), and the Student-t 95 %
 * half-width of the batch estimates. The batches are independent, so they
 * run in parallel (OpenMP) and are combined in batch order: the thread
 * count never changes a bit of the result. Generator: GSL's MT19937,
 * Gaussian draws by the ziggurat (gsl_ran_gaussian_ziggurat).
 *
 * Coherent links: the sample is complex, its I and Q independent given
 * the window (circular noise), so a branch's likelihood is the product of
 * the two quadratures' cell probabilities (product quantizer) or Gaussian
 * densities; the I draw comes before the Q draw of each symbol.
 *
 * With bit labels, each batch of a real channel keeps its outputs, draws
 * a tail of as many symbols as its warm-up after the counted ones (so the
 * rates above are unchanged) and runs the symbol-wise MAP detector over it
 * (isi_bcjr.c); its BER and GMI get batch-means intervals as the rates
 * do. A coherent channel gets the symbol-by-symbol figures only. The
 * request's mask runs some of the four simulated figures alone; the
 * draws do not depend on it, so those run are the same to the bit. With
 * a kept sequence (isi_draws.c) the draws are recorded once and replayed
 * by the runs after, again to the bit. */
#include "quantcap/figures.h"
#include "capacity/isi.h"
#include "core/internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_rng.h>

#define WARMUP_PER_TAP 100 /* symbols of warm-up per tap of memory */

static uint64_t splitmix64(uint64_t z)
{
    z += 0x9e3779b97f4a7c15ull;
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ull;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebull;
    return z ^ (z >> 31);
}

/* What one batch needs besides the shared channel. */
typedef struct {
    double *buf;               /* the allocation the arrays below live in;
                                  aq/nq and au/nu swap at every step      */
    double *aq, *nq, *au, *nu; /* forward messages (S each)               */
    double *wu, *eu;           /* unquantized weights and exponents (T)   */
    gsl_rng *rng;
    double est_q, est_u;       /* the batch's estimates, nats             */
    int failed;                /* a step's likelihood vanished (1), out of
                                  memory (−1)                             */
    double *ty;                /* with labels: the batch's outputs,      */
    uint32_t *tcell, *twin;    /* their cells and true windows            */
    qc_isi_detection det_q, det_u; /* the detector's figures              */
    qc_isi_stream seq;         /* the draws recorded or replayed, if kept */
} batch_ws;

/* The cell of a continuous output among n sorted thresholds. */
static size_t cell_of(const double *thr, size_t n, double y)
{
    /* cells are half-open: y < t_0 is cell 0, t_{j−1} ≤ y < t_j is cell j */
    size_t lo = 0, hi = n;
    while (lo < hi) {
        size_t mid = (lo + hi) / 2;
        if (y >= thr[mid])
            lo = mid + 1;
        else
            hi = mid;
    }
    return lo;
}

/* One step of the forward recursion from the weights w (times w2 unless
 * NULL): the messages advance (*a and *next swap); returns the step's
 * normaliser λ. */
static double advance(const qc_isi_channel *ch, double **a, double **next, const double *w,
                      const double *w2)
{
    const double lambda = qc_isi_forward_step_pair(ch, *a, w, w2, *next);
    double *tmp = *a;
    *a = *next;
    *next = tmp;
    return lambda;
}

/* The quantized step: a forward step on the cell's weights w (times w2
 * unless NULL) and, for a counted symbol, log P(cell | true window) −
 * log λ (ptrue the former) into *sum_q. 0 when either vanished. */
static int quantized_step(const qc_isi_channel *ch, batch_ws *b, const double *w,
                          const double *w2, double ptrue, int counted, double *sum_q)
{
    const double lam_q = advance(ch, &b->aq, &b->nq, w, w2);
    if (!(lam_q > 0.0) || !(ptrue > 0.0))
        return 0;
    if (counted)
        *sum_q += log(ptrue) - log(lam_q);
    return 1;
}

/* The continuous-output step once b->eu holds the log-weights (largest
 * emax) of every window: weights exp(e − emax), a forward step, and, for
 * a counted symbol, log p(y | t) − log Σ = (e_t − logp) − (log λ + emax)
 * into *sum_u (the common Gaussian constant cancels). 0 when the
 * likelihood vanished. */
static int unquantized_step(const qc_isi_channel *ch, batch_ws *b, double emax, size_t t,
                            size_t x, int counted, double *sum_u)
{
    for (size_t j = 0; j < ch->T; j++)
        b->wu[j] = b->eu[j] - emax;
    qc_exp_array(b->wu, b->wu, ch->T);
    const double lam_u = advance(ch, &b->au, &b->nu, b->wu, NULL);
    if (!(lam_u > 0.0))
        return 0;
    if (counted)
        *sum_u += (b->eu[t] - ch->logp[x]) - (log(lam_u) + emax);
    return 1;
}

/* A batch's first state (the symbols before the first counted one,
 * drawn from the law) and the forward recursions at the state prior. */
static size_t batch_start(const qc_isi_channel *ch, const gsl_ran_discrete_t *draw,
                          batch_ws *b)
{
    size_t s = 0;
    if (b->seq.mode == QC_ISI_REPLAY) {
        s = *b->seq.s0;
    } else {
        for (size_t i = 0, mul = 1; i + 1 < ch->ntaps; i++, mul *= ch->M)
            s += mul * gsl_ran_discrete(b->rng, draw);
        if (b->seq.mode == QC_ISI_RECORD)
            *b->seq.s0 = s;
    }
    memcpy(b->aq, ch->state_prior, ch->S * sizeof *b->aq);
    memcpy(b->au, ch->state_prior, ch->S * sizeof *b->au);
    b->failed = 0;
    return s;
}

/* Symbol k of the batch, x (drawn from the law, or replayed), and its
 * window t = x + M·s; the state s moves on to t mod S. */
static size_t next_window(const qc_isi_channel *ch, const gsl_ran_discrete_t *draw,
                          batch_ws *b, size_t k, size_t *s, size_t *x)
{
    if (b->seq.mode == QC_ISI_REPLAY) {
        *x = b->seq.x[k];
    } else {
        *x = gsl_ran_discrete(b->rng, draw);
        if (b->seq.mode == QC_ISI_RECORD)
            b->seq.x[k] = (uint32_t)*x;
    }
    const size_t t = *x + ch->M * *s;
    *s = t % ch->S;
    return t;
}

/* Standard normal draw i of the batch (drawn, or replayed). */
static double normal_draw(batch_ws *b, size_t i)
{
    if (b->seq.mode == QC_ISI_REPLAY)
        return b->seq.z[i];
    const double z = gsl_ran_gaussian_ziggurat(b->rng, 1.0);
    if (b->seq.mode == QC_ISI_RECORD)
        b->seq.z[i] = z;
    return z;
}

/* One batch: warm-up, then `count` counted symbols. lik[y·T + t] =
 * p(x_t)·P(y | t) are the quantized step weights. */
static void run_batch(const qc_isi_channel *ch, const gsl_ran_discrete_t *draw,
                      const double *lik, size_t warmup, size_t count, unsigned fig,
                      const qc_isi_request *req, batch_ws *b)
{
    const int rate_q = (fig & QC_ISI_FIG_RATE) != 0;
    const int rate_u = (fig & QC_ISI_FIG_UNQUANTIZED_RATE) != 0;
    const size_t T = ch->T, K = ch->K;
    const double *pq = ch->window_dmc->p;
    size_t s = batch_start(ch, draw, b);
    double sum_q = 0.0, sum_u = 0.0;
    for (size_t k = 0; k < warmup + count; k++) {
        size_t x;
        const size_t t = next_window(ch, draw, b, k, &s, &x);
        const double y = ch->mean[t] + ch->sd[t] * normal_draw(b, k);
        const size_t c = cell_of(ch->thresholds, K - 1, y);
        if (b->ty) {
            b->ty[k] = y;
            b->tcell[k] = (uint32_t)c;
            b->twin[k] = (uint32_t)t;
        }
        if (rate_q &&
            !quantized_step(ch, b, lik + c * T, NULL, pq[t * K + c], k >= warmup, &sum_q)) {
            b->failed = 1;
            return;
        }
        if (rate_u) {
            /* log of p(x)·φ(y; mean, sd), relative to the largest */
            double emax = -INFINITY;
            for (size_t j = 0; j < T; j++) {
                const double d = (y - ch->mean[j]) * ch->inv_sd[j];
                const double e = ch->log_weight[j] - 0.5 * d * d;
                b->eu[j] = e;
                emax = e > emax ? e : emax;
            }
            if (!unquantized_step(ch, b, emax, t, x, k >= warmup, &sum_u)) {
                b->failed = 1;
                return;
            }
        }
    }
    b->est_q = rate_q ? sum_q / (double)count : NAN;
    b->est_u = rate_u ? sum_u / (double)count : NAN;
    if (!b->ty)
        return;
    /* the detector: a tail after the counted symbols, then BCJR */
    const size_t n = 2 * warmup + count;
    for (size_t k = warmup + count; k < n; k++) {
        size_t x;
        const size_t t = next_window(ch, draw, b, k, &s, &x);
        const double y = ch->mean[t] + ch->sd[t] * normal_draw(b, k);
        b->ty[k] = y;
        b->tcell[k] = (uint32_t)cell_of(ch->thresholds, K - 1, y);
        b->twin[k] = (uint32_t)t;
    }
    qc_isi_trace tr = {.y = b->ty, .cell = b->tcell, .window = b->twin, .n = n,
                       .first = warmup, .count = count};
    int rc = 0;
    if (fig & QC_ISI_FIG_DETECTOR)
        rc = qc_isi_bcjr(ch, lik, &tr, req->labels, req->label_bits, 0, &b->det_q);
    if (rc == 0 && (fig & QC_ISI_FIG_UNQUANTIZED_DETECTOR))
        rc = qc_isi_bcjr(ch, lik, &tr, req->labels, req->label_bits, 1, &b->det_u);
    b->failed = rc;
}

/* One batch of a coherent channel: as run_batch, with complex samples.
 * lik[a·T + t] = p(x_t)·P_I(a | t), pq[b·T + t] = P_Q(b | t). */
static void run_batch_coherent(const qc_isi_channel *ch, const gsl_ran_discrete_t *draw,
                               const double *lik, const double *pq_t, size_t warmup,
                               size_t count, unsigned fig, batch_ws *b)
{
    const int rate_q = (fig & QC_ISI_FIG_RATE) != 0;
    const int rate_u = (fig & QC_ISI_FIG_UNQUANTIZED_RATE) != 0;
    const size_t T = ch->T, K = ch->K;
    const double *pi = ch->window_dmc->p, *pq = ch->window_dmc_q->p;
    size_t s = batch_start(ch, draw, b);
    double sum_q = 0.0, sum_u = 0.0;
    for (size_t k = 0; k < warmup + count; k++) {
        size_t x;
        const size_t t = next_window(ch, draw, b, k, &s, &x);
        const double zi = normal_draw(b, 2 * k);
        const double zq = normal_draw(b, 2 * k + 1);
        const double yi = ch->mean[t] + ch->sd[t] * zi;
        const double yq = ch->mean_q[t] + ch->sd_q[t] * zq;
        const size_t ci = cell_of(ch->thresholds, K - 1, yi);
        const size_t cq = cell_of(ch->thresholds, K - 1, yq);
        /* quantized: the joint cell's weights, li·lq */
        if (rate_q && !quantized_step(ch, b, lik + ci * T, pq_t + cq * T,
                                      pi[t * K + ci] * pq[t * K + cq], k >= warmup, &sum_q)) {
            b->failed = 1;
            return;
        }
        if (rate_u) {
            double emax = -INFINITY;
            for (size_t j = 0; j < T; j++) {
                const double di = (yi - ch->mean[j]) * ch->inv_sd[j];
                const double dq = (yq - ch->mean_q[j]) * ch->inv_sd_q[j];
                const double e = ch->log_weight[j] - 0.5 * (di * di + dq * dq);
                b->eu[j] = e;
                emax = e > emax ? e : emax;
            }
            if (!unquantized_step(ch, b, emax, t, x, k >= warmup, &sum_u)) {
                b->failed = 1;
                return;
            }
        }
    }
    b->est_q = rate_q ? sum_q / (double)count : NAN;
    b->est_u = rate_u ? sum_u / (double)count : NAN;
}

static void mean_ci(const double *v, size_t n, double *mean, double *half)
{
    double m = 0.0;
    for (size_t i = 0; i < n; i++)
        m += v[i];
    m /= (double)n;
    double ss = 0.0;
    for (size_t i = 0; i < n; i++)
        ss += (v[i] - m) * (v[i] - m);
    const double sd = sqrt(ss / (double)(n - 1));
    *mean = m;
    *half = gsl_cdf_tdist_Pinv(0.975, (double)(n - 1)) * sd / sqrt((double)n);
}

qc_status qc_isi_rate(const qc_isi_request *req, qc_isi_result *out)
{
    qc_gsl_init();
    qc_status st;
    qc_isi_channel *ch = NULL;
    double *lik = NULL, *lik_q = NULL, *est = NULL;
    batch_ws *ws = NULL;
    gsl_ran_discrete_t *draw = NULL;
    const size_t B = QC_ISI_BATCHES;
    if (req && req->nthresholds == 0)
        return qc_fail(QC_EINVAL, "memory channel: the ADC needs at least one threshold");
    if (req && req->symbols < B * QC_ISI_MIN_BATCH)
        return qc_fail(QC_EINVAL,
                       "symbols: %zu simulated symbols are too few; at least %zu are needed "
                       "(%zu batches of %zu)",
                       req->symbols, B * QC_ISI_MIN_BATCH, B, QC_ISI_MIN_BATCH);
    if ((st = qc_isi_channel_build(req, &ch)) != QC_OK)
        return st;
    if (req->labels && !ch->coherent &&
        (st = qc_check_labels(ch->law, ch->M, req->labels, req->label_bits)) != QC_OK) {
        qc_isi_channel_free(ch);
        return st;
    }
    const size_t T = ch->T, S = ch->S, K = ch->K;
    /* the exact symbol-by-symbol rate first: it refuses what it cannot
     * hold before the simulation runs */
    double symbolwise = NAN, symbolwise_ber = NAN, symbolwise_gmi = NAN;
    {
        qc_dmc *d = NULL;
        double mi = NAN, gmi = NAN;
        qc_hard_figures hard;
        if ((st = qc_isi_symbolwise_dmc(ch, &d)) == QC_OK)
            st = qc_mutual_information(d, ch->law, &mi);
        if (st == QC_OK && req->labels && !ch->coherent &&
            (st = qc_hard_decision(d, ch->law, req->labels, req->label_bits, 1, &hard)) ==
                QC_OK &&
            (st = qc_gmi(d, ch->law, req->labels, req->label_bits, &gmi)) == QC_OK) {
            symbolwise_ber = hard.pre_fec_ber;
            symbolwise_gmi = gmi / QC_ISI_LN2;
        }
        qc_dmc_free(d);
        if (st != QC_OK)
            goto done;
        symbolwise = mi / QC_ISI_LN2;
    }
    /* the figures run: those the mask keeps of what the request allows
     * (the BCJR detector's on real channels with labels) */
    unsigned fig = QC_ISI_FIG_RATE;
    if (req->unquantized)
        fig |= QC_ISI_FIG_UNQUANTIZED_RATE;
    if (req->labels && !ch->coherent)
        fig |= QC_ISI_FIG_DETECTOR | (req->unquantized ? QC_ISI_FIG_UNQUANTIZED_DETECTOR : 0u);
    if (req->figures)
        fig &= req->figures;
    const int detect = (fig & (QC_ISI_FIG_DETECTOR | QC_ISI_FIG_UNQUANTIZED_DETECTOR)) != 0;
    const size_t count = req->symbols / B;
    const size_t warmup = WARMUP_PER_TAP * (ch->ntaps - 1);

    lik = qc_malloc_array(K * T, sizeof *lik);
    ws = calloc(B, sizeof *ws);
    est = qc_malloc_array(9 * B, sizeof *est);
    draw = gsl_ran_discrete_preproc(ch->M, ch->law);
    if (!lik || !ws || !est || !draw) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    for (size_t t = 0; t < T; t++)
        for (size_t y = 0; y < K; y++)
            lik[y * T + t] = ch->law[t % ch->M] * ch->window_dmc->p[t * K + y];
    if (ch->coherent) {
        if (!(lik_q = qc_malloc_array(K * T, sizeof *lik_q))) {
            st = qc_fail(QC_ENOMEM, "out of memory");
            goto done;
        }
        for (size_t t = 0; t < T; t++)
            for (size_t y = 0; y < K; y++)
                lik_q[y * T + t] = ch->window_dmc_q->p[t * K + y];
    }
    for (size_t b = 0; b < B; b++) {
        ws[b].aq = ws[b].buf = qc_malloc_array(4 * S + 2 * T, sizeof(double));
        ws[b].rng = gsl_rng_alloc(gsl_rng_mt19937);
        if (!ws[b].aq || !ws[b].rng) {
            st = qc_fail(QC_ENOMEM, "out of memory");
            goto done;
        }
        ws[b].nq = ws[b].aq + S;
        ws[b].au = ws[b].aq + 2 * S;
        ws[b].nu = ws[b].aq + 3 * S;
        ws[b].wu = ws[b].aq + 4 * S;
        ws[b].eu = ws[b].aq + 4 * S + T;
        gsl_rng_set(ws[b].rng, (unsigned long)splitmix64(req->seed ^ splitmix64(b + 1)));
        if (detect) {
            const size_t n = 2 * warmup + count;
            ws[b].ty = qc_malloc_array(n, sizeof *ws[b].ty);
            ws[b].tcell = qc_malloc_array(n, sizeof *ws[b].tcell);
            ws[b].twin = qc_malloc_array(n, sizeof *ws[b].twin);
            if (!ws[b].ty || !ws[b].tcell || !ws[b].twin) {
                st = qc_fail(QC_ENOMEM, "out of memory");
                goto done;
            }
        }
    }
    /* the draws: from a kept sequence when the request has one that holds
     * them (isi_draws.c), else drawn (and recorded when it can hold them) */
    const size_t per_batch = warmup + count + (detect ? warmup : 0);
    const int mode = qc_isi_draws_begin(req->draws, req->seed, ch->law, ch->M, ch->ntaps,
                                        warmup, count, per_batch, ch->coherent);
    for (size_t b = 0; b < B; b++)
        qc_isi_draws_stream(req->draws, mode, b, &ws[b].seq);
    {
        /* the batches in OpenMP threads, unless this runs inside a parallel
         * region already (a sweep's point, even with one thread: a point's
         * work stays in its thread); each batch has its own generator and
         * sums, so the result is the same on any number of threads */
        const int in_threads = qc_parallel_can_fork();
        (void)in_threads; /* unused without OpenMP */
#ifdef _OPENMP
#pragma omp parallel for schedule(dynamic, 1) if (in_threads)
#endif
        for (size_t b = 0; b < B; b++) {
            if (ch->coherent)
                run_batch_coherent(ch, draw, lik, lik_q, warmup, count, fig, &ws[b]);
            else
                run_batch(ch, draw, lik, warmup, count, fig, req, &ws[b]);
        }
    }
    {
        int complete = 1;
        for (size_t b = 0; b < B; b++)
            complete &= ws[b].failed == 0;
        qc_isi_draws_end(req->draws, mode, complete);
    }
    for (size_t b = 0; b < B; b++) {
        if (ws[b].failed < 0) {
            st = qc_fail(QC_ENOMEM, "out of memory");
            goto done;
        }
        if (ws[b].failed) {
            st = qc_fail(QC_ENUMERIC,
                         "memory channel: batch %zu met an output whose likelihood "
                         "underflows; the noise is too small for this simulation",
                         b + 1);
            goto done;
        }
        est[b] = ws[b].est_q / QC_ISI_LN2;
        est[B + b] = ws[b].est_u / QC_ISI_LN2;
    }
    double hx = 0.0;
    for (size_t x = 0; x < ch->M; x++)
        if (ch->law[x] > 0.0)
            hx -= ch->law[x] * log2(ch->law[x]);
    for (size_t b = 0; detect && b < B; b++) {
        est[2 * B + b] = ws[b].det_q.ber;
        est[3 * B + b] = ws[b].det_q.ber_counted;
        est[4 * B + b] = hx - ws[b].det_q.bit_entropy_bits;
        est[5 * B + b] = ws[b].det_u.ber;
        est[6 * B + b] = hx - ws[b].det_u.bit_entropy_bits;
    }
    memset(out, 0, sizeof *out);
    out->rate_bits = out->rate_ci_bits = NAN;
    out->unquantized_bits = out->unquantized_ci_bits = NAN;
    if (fig & QC_ISI_FIG_RATE)
        mean_ci(est, B, &out->rate_bits, &out->rate_ci_bits);
    if (fig & QC_ISI_FIG_UNQUANTIZED_RATE)
        mean_ci(est + B, B, &out->unquantized_bits, &out->unquantized_ci_bits);
    out->symbolwise_bits = symbolwise;
    out->symbolwise_ber = symbolwise_ber;
    out->symbolwise_gmi_bits = symbolwise_gmi;
    out->bcjr_ber = out->bcjr_ber_ci = out->bcjr_ber_counted = out->bcjr_ber_counted_ci = NAN;
    out->bcjr_gmi_bits = out->bcjr_gmi_ci_bits = NAN;
    out->unquantized_bcjr_ber = out->unquantized_bcjr_ber_ci = NAN;
    out->unquantized_bcjr_gmi_bits = out->unquantized_bcjr_gmi_ci_bits = NAN;
    if (fig & QC_ISI_FIG_DETECTOR) {
        mean_ci(est + 2 * B, B, &out->bcjr_ber, &out->bcjr_ber_ci);
        mean_ci(est + 3 * B, B, &out->bcjr_ber_counted, &out->bcjr_ber_counted_ci);
        mean_ci(est + 4 * B, B, &out->bcjr_gmi_bits, &out->bcjr_gmi_ci_bits);
    }
    if (fig & QC_ISI_FIG_UNQUANTIZED_DETECTOR) {
        mean_ci(est + 5 * B, B, &out->unquantized_bcjr_ber, &out->unquantized_bcjr_ber_ci);
        mean_ci(est + 6 * B, B, &out->unquantized_bcjr_gmi_bits,
                &out->unquantized_bcjr_gmi_ci_bits);
    }
    out->states = S;
    out->batches = B;
    out->symbols = count * B;
done:
    if (ws)
        for (size_t b = 0; b < B; b++) {
            free(ws[b].buf);
            free(ws[b].ty);
            free(ws[b].tcell);
            free(ws[b].twin);
            if (ws[b].rng)
                gsl_rng_free(ws[b].rng);
        }
    free(ws);
    free(est);
    free(lik);
    free(lik_q);
    if (draw)
        gsl_ran_discrete_free(draw);
    qc_isi_channel_free(ch);
    return st;
}

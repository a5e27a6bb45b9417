/* test_isi_trellis.c — the index arithmetic of the trellis of a channel
 * with memory: the forward step (isi_channel.c; one weight per branch or
 * the product of two, as a coherent link has) and the detector's window
 * posteriors and backward step (isi_bcjr.c) read states in runs instead
 * of dividing indices, and must give the same bits as the sums written
 * with t / M and t mod S, for alphabets of 2 to 5, 8 and 16 symbols (3
 * and 5 are not powers of two) and 1 to 4 taps (one tap: S = 1, not a
 * multiple of M). The detector's file is compiled into this test so that its static
 * helpers can be called; its public function then comes from here. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "../../src/capacity/isi_bcjr.c"

#define TEST_RNG_SEED 0x7e111500d1ceULL /* messages and weights below */
#include "test_helpers.h"

static qc_isi_channel *channel(size_t M, size_t ntaps)
{
    double sigma = 0.3;
    qc_model *model = NULL;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &model), QC_OK);
    static double levels[16], taps[4] = {1.0, 0.45, -0.2, 0.1};
    for (size_t i = 0; i < M; i++)
        levels[i] = -1.0 + 2.0 * (double)i / (double)(M - 1);
    qc_isi_request req = {.model = model, .levels = levels, .nlevels = M, .taps = taps,
                          .ntaps = ntaps, .symbols = 10000, .seed = 1};
    qc_isi_channel *ch = NULL;
    assert_int_equal(qc_isi_channel_build(&req, &ch), QC_OK);
    assert_int_equal(ch->M, M);
    qc_model_free(model);
    return ch;
}

static void fill(double *v, size_t n)
{
    for (size_t i = 0; i < n; i++)
        v[i] = uniform01();
}

static void expect_same_bits(const double *got, const double *want, size_t n,
                             const char *what, size_t M, size_t ntaps)
{
    if (memcmp(got, want, n * sizeof *got) != 0)
        fail_msg("%s, %zu symbols, %zu taps: the bits differ from the indexed sum", what,
                 M, ntaps);
}

static void test_runs_match_indexed_sums(void **state)
{
    (void)state;
    /* 2, 4, 8 and 16 have unrolled copies of their own, 3 and 5 do not */
    static const size_t sizes[] = {2, 3, 4, 5, 8, 16};
    for (size_t m = 0; m < sizeof sizes / sizeof sizes[0]; m++)
        for (size_t ntaps = 1, M = sizes[m]; ntaps <= 4; ntaps++) {
            if (qc_isi_states(M, ntaps) == 0)
                continue;
            qc_isi_channel *ch = channel(M, ntaps);
            const size_t S = ch->S, T = ch->T;
            double *a = malloc(S * sizeof *a), *w = malloc(T * sizeof *w);
            double *beta = malloc(S * sizeof *beta), *got = malloc(T * sizeof *got);
            double *want = malloc(T * sizeof *want);
            assert_true(a && w && beta && got && want);
            fill(a, S);
            fill(w, T);
            fill(beta, S);

            /* forward: next[s] = Σ_{hi} a[(s + hi·S) / M]·w[s + hi·S], then
             * scaled by the sum */
            const double lambda = qc_isi_forward_step(ch, a, w, got);
            for (size_t s = 0; s < S; s++) {
                want[s] = a[s / M] * w[s];
                for (size_t hi = 1; hi < M; hi++)
                    want[s] += a[(s + hi * S) / M] * w[s + hi * S];
            }
            double sum = 0.0;
            for (size_t s = 0; s < S; s++)
                sum += want[s];
            assert_true(fabs(lambda - sum) <= 1e-14 * sum);
            for (size_t s = 0; s < S; s++)
                want[s] *= 1.0 / lambda;
            expect_same_bits(got, want, S, "forward step", M, ntaps);

            /* the same with branch weights w·w2 (a coherent link's I and Q) */
            double *w2 = malloc(T * sizeof *w2);
            assert_non_null(w2);
            fill(w2, T);
            const double lambda2 = qc_isi_forward_step_pair(ch, a, w, w2, got);
            for (size_t s = 0; s < S; s++) {
                want[s] = a[s / M] * (w[s] * w2[s]);
                for (size_t hi = 1; hi < M; hi++)
                    want[s] += a[(s + hi * S) / M] * (w[s + hi * S] * w2[s + hi * S]);
            }
            for (size_t s = 0; s < S; s++)
                want[s] *= 1.0 / lambda2;
            expect_same_bits(got, want, S, "forward step with two weights", M, ntaps);
            free(w2);

            /* the windows' posteriors and their sum, in the order of t */
            const double z = window_posterior(a, w, beta, S, M, got);
            double zref = 0.0;
            for (size_t t = 0; t < T; t++) {
                want[t] = a[t / M] * w[t] * beta[t % S];
                zref += want[t];
            }
            expect_same_bits(got, want, T, "window posteriors", M, ntaps);
            expect_same_bits(&z, &zref, 1, "their sum", M, ntaps);

            /* backward */
            backward_step(w, beta, S, M, got);
            for (size_t s = 0; s < S; s++)
                want[s] = 0.0;
            for (size_t t = 0; t < T; t++)
                want[t / M] += w[t] * beta[t % S];
            expect_same_bits(got, want, S, "backward step", M, ntaps);

            free(a);
            free(w);
            free(beta);
            free(got);
            free(want);
            qc_isi_channel_free(ch);
        }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_runs_match_indexed_sums),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

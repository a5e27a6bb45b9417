/* test_alphabet.c — the alphabet module without the capacity engine:
 * alphabet specs and level grids, the peak applied to an alphabet,
 * feasibility of constraints, Gray labels, the BICM GMI (quantized and
 * unquantized), the dispersion of closed-form channels, the normal
 * approximation and the shaping gap, QAM as two quadratures, the gmi
 * objective, level optimization for the MI objective, and the bad-input
 * paths through the library. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#define TEST_RNG_SEED 12345 /* random channels and laws below */
#include "test_helpers.h"

#include <math.h>
#include <stdlib.h>
#include <stdio.h>
#include <string.h>

#include <gsl/gsl_math.h> /* M_SQRT2, M_LN2 */

#include "core/internal.h" /* qc_bit_term */
#include "quantcap.h"

#define TOL_TIGHT 1e-12 /* rounding                                   */
#define TOL_SUM 1e-10   /* bits: sums over a few thousand terms        */
#define TOL_QUAD 1e-8   /* bits: adaptive quadrature against quadrature */
#define TOL_LEVEL 2e-3  /* level units: Nelder–Mead optimum            */
#define TOL_FINE 2e-3   /* bits: 12-bit quantizer against unquantized  */
#define TOL_FORMULA 1e-10  /* bits: a closed formula evaluated two ways */
#define TOL_GAP_DB 1e-9    /* dB: shaping gap of a rate on the Shannon curve */
#define TOL_DESIGN 1e-6    /* bits: a designed 1-bit rate against its closed form */
#define TOL_EXACT 0.0 /* a parsed setting is the decimal number given */
#define TOL_QUAD_ERR 1e-9 /* bits: error estimate of an adaptive quadrature */

static qc_model *gauss(double sigma)
{
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    return m;
}

static void request(qc_design_request *r, const qc_model *m, const double *levels, size_t n,
                    size_t cells)
{
    qc_design_request_default(r);
    r->channel.model = m;
    r->channel.levels = levels;
    r->channel.nlevels = n;
    r->quantizer.cells = cells;
    r->numerics.skip_snr_penalty = 1;
}

/* ---- alphabets ------------------------------------------------------- */

static void test_alphabet_specs(void **state)
{
    (void)state;
    qc_alphabet *a;
    /* pam:M: odd integers −(M−1)…M−1, amplitudes (2m − 1 − M) (Proakis &
     * Salehi, Digital Communications, 5th ed., §3.2; section from memory) */
    assert_int_equal(qc_alphabet_parse("pam:4", &a), QC_OK);
    assert_int_equal(a->nlevels, 4);
    assert_int_equal(a->dimensions, 1);
    assert_true(a->levels[0] == -3.0 && a->levels[1] == -1.0 && a->levels[3] == 3.0);
    assert_false(a->intensity);
    qc_alphabet_free(a);
    assert_int_equal(qc_alphabet_parse("upam:2", &a), QC_OK); /* OOK */
    assert_true(a->levels[0] == 0.0 && a->levels[1] == 1.0 && a->intensity);
    qc_alphabet_free(a);
    assert_int_equal(qc_alphabet_parse("upam:4", &a), QC_OK);
    assert_near(a->levels[1], 1.0 / 3.0, TOL_TIGHT);
    qc_alphabet_free(a);
    /* square 16-QAM = 4-PAM on each quadrature (same source) */
    assert_int_equal(qc_alphabet_parse("qam:16", &a), QC_OK);
    assert_int_equal(a->size, 16);
    assert_int_equal(a->nlevels, 4);
    assert_int_equal(a->dimensions, 2);
    assert_true(a->levels[0] == -3.0 && a->levels[3] == 3.0);
    qc_alphabet_free(a);
    assert_int_equal(qc_alphabet_parse("qam:1024", &a), QC_OK);
    assert_int_equal(a->nlevels, 32);
    qc_alphabet_free(a);

    struct {
        const char *spec, *needle;
    } bad[] = {
        {"qam:8", "perfect square"}, {"qam:32", "perfect square"},
        {"qam:36", "power of 2"},    {"qam:9", "power of 2"},
        {"pam:1", "size"},           {"pam:x", "size"},
        {"psk:8", "unknown kind"},   {"pam4", "form"},
        {"upam:5000", "size"},
    };
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        a = (qc_alphabet *)1;
        assert_int_equal(qc_alphabet_parse(bad[i].spec, &a), QC_EINVAL);
        assert_null(a);
        assert_message(bad[i].needle);
        assert_message("alphabet");
    }
}

static void test_levels_and_grid(void **state)
{
    (void)state;
    qc_alphabet *a;
    const double lv[3] = {2.0, -1.0, 0.5};
    assert_int_equal(qc_alphabet_from_levels(lv, 3, &a), QC_OK);
    assert_true(a->levels[0] == 2.0 && a->kind == QC_ALPHABET_LEVELS); /* order kept */
    qc_alphabet_free(a);
    const double rep[3] = {1.0, 2.0, 1.0};
    assert_int_equal(qc_alphabet_from_levels(rep, 3, &a), QC_EINVAL);
    assert_message("repeats");

    assert_int_equal(qc_alphabet_grid(-2.0, 2.0, 5, &a), QC_OK);
    assert_int_equal(a->nlevels, 5);
    assert_true(a->levels[0] == -2.0 && a->levels[4] == 2.0);
    assert_near(a->levels[1], -1.0, TOL_TIGHT);
    qc_alphabet_free(a);
    assert_int_equal(qc_alphabet_grid(0.0, 1.0, 1, &a), QC_EINVAL);
    assert_message("level-grid");
    assert_int_equal(qc_alphabet_grid(1.0, 1.0, 4, &a), QC_EINVAL);
    assert_message("LO must be below HI");
    assert_int_equal(qc_alphabet_grid(2.0, 1.0, 4, &a), QC_EINVAL);
    assert_message("level-grid");
    assert_int_equal(qc_alphabet_grid(0.0, INFINITY, 4, &a), QC_EINVAL);
}

static void test_peak_on_alphabets(void **state)
{
    (void)state;
    qc_alphabet *a;
    /* a grid loses the candidates outside [−A, A] */
    assert_int_equal(qc_alphabet_grid(-3.0, 3.0, 7, &a), QC_OK);
    assert_int_equal(qc_alphabet_apply_peak(a, 2.0, 0), QC_OK);
    assert_int_equal(a->nlevels, 5);
    assert_true(a->levels[0] == -2.0 && a->levels[4] == 2.0);
    /* NaN: no peak */
    assert_int_equal(qc_alphabet_apply_peak(a, NAN, 0), QC_OK);
    assert_int_equal(a->nlevels, 5);
    /* a peak that keeps one candidate is infeasible */
    assert_int_equal(qc_alphabet_apply_peak(a, 0.5, 0), QC_EINFEASIBLE);
    assert_message("peak");
    /* ... and leaves the grid as it was */
    assert_int_equal(a->nlevels, 5);
    for (size_t i = 0; i < 5; i++)
        assert_true(a->levels[i] == -2.0 + (double)i);
    qc_alphabet_free(a);
    /* intensity: [0, A] */
    assert_int_equal(qc_alphabet_grid(-1.0, 1.0, 5, &a), QC_OK);
    assert_int_equal(qc_alphabet_apply_peak(a, 0.5, 1), QC_OK);
    assert_int_equal(a->nlevels, 2);
    assert_true(a->levels[0] == 0.0 && a->levels[1] == 0.5);
    qc_alphabet_free(a);
    /* a grid entirely outside */
    assert_int_equal(qc_alphabet_grid(3.0, 4.0, 3, &a), QC_OK);
    assert_int_equal(qc_alphabet_apply_peak(a, 1.0, 0), QC_EINFEASIBLE);
    assert_message("peak");
    qc_alphabet_free(a);
    /* a named alphabet with a level outside is an error naming 'peak' */
    assert_int_equal(qc_alphabet_parse("pam:4", &a), QC_OK);
    assert_int_equal(qc_alphabet_apply_peak(a, 2.0, 0), QC_EINVAL);
    assert_message("peak-limit: level 1 (-3)");
    assert_int_equal(qc_alphabet_apply_peak(a, 3.0, 0), QC_OK);
    assert_int_equal(qc_alphabet_apply_peak(a, -1.0, 0), QC_EINVAL);
    qc_alphabet_free(a);
}

static void test_constraint_feasibility(void **state)
{
    (void)state;
    qc_constraints c;
    const double pam[4] = {-3.0, -1.0, 1.0, 3.0};
    qc_constraints_none(&c);
    assert_true(isnan(c.peak) && isnan(c.power) && isnan(c.mean));
    assert_int_equal(qc_constraints_check(&c, pam, 4, 1), QC_OK);
    /* power below the smallest E[x²] of any level (x² = 1) */
    c.power = 0.5;
    assert_int_equal(qc_constraints_check(&c, pam, 4, 1), QC_EINFEASIBLE);
    assert_message("power");
    c.power = 1.0;
    assert_int_equal(qc_constraints_check(&c, pam, 4, 1), QC_OK);
    /* QAM: the smallest E|x|² is 2·min x² */
    assert_int_equal(qc_constraints_check(&c, pam, 4, 2), QC_EINFEASIBLE);
    assert_message("E|x|^2");
    c.power = NAN;
    /* mean below the smallest level */
    c.mean = -3.5;
    assert_int_equal(qc_constraints_check(&c, pam, 4, 1), QC_EINFEASIBLE);
    assert_message("mean");
    c.mean = -1.0;
    assert_int_equal(qc_constraints_check(&c, pam, 4, 2), QC_EINVAL); /* no mean for QAM */
    assert_message("mean");
    /* each alone feasible, together not: levels {−3, 1}, power 2 needs
     * P(−3) ≤ 1/8, mean −1 needs P(−3) ≥ 1/2 */
    const double two[2] = {-3.0, 1.0};
    c.power = 2.0;
    assert_int_equal(qc_constraints_check(&c, two, 2, 1), QC_EINFEASIBLE);
    assert_message("power-limit and mean-limit");
    c.mean = 0.0; /* P(−3) ≥ 1/4: still incompatible with ≤ 1/8 */
    assert_int_equal(qc_constraints_check(&c, two, 2, 1), QC_EINFEASIBLE);
    c.mean = 0.5; /* P(−3) ≥ 1/8: the point 1/8 meets both */
    assert_int_equal(qc_constraints_check(&c, two, 2, 1), QC_OK);
    /* peak */
    qc_constraints_none(&c);
    c.peak = 2.0;
    assert_int_equal(qc_constraints_check(&c, pam, 4, 1), QC_EINVAL);
    assert_message("peak");
    c.peak = 0.0;
    assert_int_equal(qc_constraints_check(&c, pam, 4, 1), QC_EINVAL);
    assert_message("peak-limit: must be a positive number");
    c.peak = 3.0;
    c.intensity = 1; /* [0, 3] */
    assert_int_equal(qc_constraints_check(&c, pam, 4, 1), QC_EINVAL);
}

/* ---- Gray labels ------------------------------------------------------ */

static unsigned popcount(size_t v)
{
    unsigned c = 0;
    for (; v; v >>= 1)
        c += v & 1;
    return c;
}

static void test_gray_labels(void **state)
{
    (void)state;
    /* binary-reflected Gray code 0,1,3,2,6,7,5,4 (Gray, US patent
     * 2,632,058, 1953) */
    const size_t want[8] = {0, 1, 3, 2, 6, 7, 5, 4};
    for (size_t i = 0; i < 8; i++)
        assert_int_equal(qc_gray_code(i), want[i]);
    /* neighbours differ in one bit, every label used once */
    for (size_t n = 2; n <= 1024; n *= 2) {
        double *lv = malloc(n * sizeof *lv);
        size_t *lab = malloc(n * sizeof *lab);
        char *seen = calloc(n, 1);
        for (size_t i = 0; i < n; i++)
            lv[i] = (double)(n - 1 - i) * 0.5; /* descending: labels by rank */
        unsigned nbits;
        assert_int_equal(qc_gray_labels(lv, n, lab, &nbits), QC_OK);
        assert_int_equal((size_t)1 << nbits, n);
        for (size_t i = 0; i < n; i++) {
            assert_true(lab[i] < n && !seen[lab[i]]);
            seen[lab[i]] = 1;
        }
        for (size_t i = 0; i + 1 < n; i++) /* level i+1 is just below level i */
            assert_int_equal(popcount(lab[i] ^ lab[i + 1]), 1);
        assert_int_equal(lab[n - 1], 0); /* the lowest level has rank 0 */
        free(lv);
        free(lab);
        free(seen);
    }
    double three[3] = {0, 1, 2};
    size_t lab[3];
    unsigned nb;
    assert_int_equal(qc_gray_labels(three, 3, lab, &nb), QC_EINVAL);
    assert_message("power of 2");
}

/* ---- GMI ---------------------------------------------------------------- */

/* Σ_b I(B_b; Y) computed from the definition (Caire, Taricco, Biglieri,
 * IEEE Trans. IT 44(3), 1998, eq. for the BICM capacity), nats. */
static double gmi_by_definition(const qc_dmc *d, const double *r, const size_t *lab,
                                unsigned nbits)
{
    double g = 0.0;
    for (unsigned b = 0; b < nbits; b++) {
        double pb[2] = {0, 0};
        for (size_t x = 0; x < d->nx; x++)
            pb[(lab[x] >> b) & 1] += r[x];
        for (size_t y = 0; y < d->ny; y++) {
            double j[2] = {0, 0}, py = 0.0;
            for (size_t x = 0; x < d->nx; x++) {
                j[(lab[x] >> b) & 1] += r[x] * d->p[x * d->ny + y];
                py += r[x] * d->p[x * d->ny + y];
            }
            for (int v = 0; v < 2; v++)
                if (j[v] > 0.0)
                    g += j[v] * log(j[v] / (pb[v] * py));
        }
    }
    return g;
}

/* H(X) − Σ_b H(B_b|Y) summed output by output, each output's masses
 * over the inputs in order: the order of qc_gmi's sums, which gathers
 * outputs in blocks and must give these bits. */
static double gmi_output_by_output(const qc_dmc *d, const double *r, const size_t *lab,
                                   unsigned nbits)
{
    double hb = 0.0, joint[2 * 8];
    for (size_t y = 0; y < d->ny; y++) {
        memset(joint, 0, sizeof joint);
        for (size_t x = 0; x < d->nx; x++) {
            double p = r[x] * d->p[x * d->ny + y];
            if (!(p > 0.0))
                continue;
            for (unsigned b = 0; b < nbits; b++)
                joint[2 * b + ((lab[x] >> b) & 1)] += p;
        }
        for (unsigned b = 0; b < nbits; b++)
            hb += qc_bit_term(joint[2 * b], joint[2 * b + 1]);
    }
    double g = qc_entropy(r, d->nx) - hb;
    return g > 0.0 ? g : 0.0;
}

/* qc_gmi of channels wider than one block of outputs (a partial last
 * block, a third of the entries 0, a law with zeros; the widest shared
 * among threads where there are several) is, to the last bit, the sum
 * taken output by output. Each input's outputs crowd near its
 * own place, so that the rate is above 0 and H(X) and the bits' share
 * are close enough for their order of addition to show in its last bits. */
static void test_gmi_blocks(void **state)
{
    (void)state;
    const size_t widths[4] = {63, 64, 301, 2100};
    for (int k = 0; k < 4; k++) {
        const unsigned nbits = 5;
        const size_t nx = 32, ny = widths[k];
        qc_dmc *d = random_dmc(nx, ny, 0.3);
        for (size_t x = 0; x < nx; x++) {
            double *row = d->p + x * ny, s = 0.0;
            row[x * ny / nx] += 1.0;
            for (size_t y = 0; y < ny; y++)
                s += row[y];
            for (size_t y = 0; y < ny; y++)
                row[y] /= s;
        }
        double r[32];
        size_t lab[32];
        random_law(r, nx, 0.2);
        for (size_t x = 0; x < nx; x++)
            lab[x] = x ^ (x >> 1); /* Gray */
        double g;
        assert_int_equal(qc_gmi(d, r, lab, nbits, &g), QC_OK);
        const double want = gmi_output_by_output(d, r, lab, nbits);
        assert_true(want > 0.05);
        assert_memory_equal(&g, &want, sizeof g);
        qc_dmc_free(d);
    }
}

/* The dispersion of a channel large enough to share its rows among
 * threads (where there are several) is, to the last bit, the two passes
 * taken row by row in one thread: 40 inputs (some unsent) × 2000
 * outputs, a third of the entries 0. */
static void test_dispersion_rows(void **state)
{
    (void)state;
    enum { NX = 40, NY = 2000 };
    qc_dmc *d = random_dmc(NX, NY, 0.3);
    double r[NX], q[NY];
    random_law(r, NX, 0.2);
    qc_output_law(d, r, q);
    for (size_t y = 0; y < NY; y++)
        q[y] = q[y] > 0.0 ? log(q[y]) : -INFINITY;
    double mean = 0.0, var = 0.0;
    for (int pass = 0; pass < 2; pass++)
        for (size_t x = 0; x < NX; x++) {
            if (!(r[x] > 0.0))
                continue;
            double acc = 0.0;
            for (size_t y = 0; y < NY; y++) {
                const double p = d->p[x * NY + y];
                if (!(p > 0.0) || !(q[y] > -INFINITY))
                    continue;
                double i = log(p) - q[y];
                acc += pass == 0 ? p * i : p * (i - mean) * (i - mean);
            }
            if (pass == 0)
                mean += r[x] * acc;
            else
                var += r[x] * acc;
        }
    double mi, v;
    assert_int_equal(qc_dispersion(d, r, &mi, &v), QC_OK);
    assert_true(mean > 0.0 && var > 0.0);
    assert_memory_equal(&mi, &mean, sizeof mi);
    assert_memory_equal(&v, &var, sizeof v);
    qc_dmc_free(d);
}

static void test_gmi_properties(void **state)
{
    (void)state;
    for (int trial = 0; trial < 60; trial++) {
        unsigned nbits = 1 + (unsigned)(uniform01() * 4); /* 2..16 inputs */
        size_t nx = (size_t)1 << nbits, ny = 2 + (size_t)(uniform01() * 40);
        qc_dmc *d = random_dmc(nx, ny, 0.0);
        double *r = malloc(nx * sizeof *r), *lv = malloc(nx * sizeof *lv);
        size_t *lab = malloc(nx * sizeof *lab);
        for (size_t x = 0; x < nx; x++)
            lv[x] = uniform01();
        assert_int_equal(qc_gray_labels(lv, nx, lab, &nbits), QC_OK);
        random_law(r, nx, 0.0);
        double g, mi;
        assert_int_equal(qc_gmi(d, r, lab, nbits, &g), QC_OK);
        assert_int_equal(qc_mutual_information(d, r, &mi), QC_OK);
        /* GMI ≤ MI (G. Caire, G. Taricco, E. Biglieri, "Bit-interleaved
         * coded modulation", IEEE Trans. Inf. Theory 44(3), 1998) */
        assert_true(g <= mi + TOL_TIGHT);
        assert_true(g >= 0.0);
        if (nx == 2) /* one bit: the bit is the input */
            assert_near(g, mi, TOL_TIGHT);
        /* uniform law: independent bits, Σ_b I(B_b; Y) */
        for (size_t x = 0; x < nx; x++)
            r[x] = 1.0 / (double)nx;
        assert_int_equal(qc_gmi(d, r, lab, nbits, &g), QC_OK);
        assert_near(g, gmi_by_definition(d, r, lab, nbits), TOL_TIGHT);
        assert_int_equal(qc_mutual_information(d, r, &mi), QC_OK);
        assert_true(g <= mi + TOL_TIGHT);
        qc_dmc_free(d);
        free(r);
        free(lv);
        free(lab);
    }
    /* noiseless channel: GMI = MI = log M */
    qc_dmc *id;
    assert_int_equal(qc_dmc_alloc(8, 8, &id), QC_OK);
    for (size_t x = 0; x < 8; x++)
        id->p[x * 8 + x] = 1.0;
    double r[8], g;
    size_t lab[8];
    for (size_t x = 0; x < 8; x++) {
        r[x] = 0.125;
        lab[x] = qc_gray_code(x);
    }
    assert_int_equal(qc_gmi(id, r, lab, 3, &g), QC_OK);
    assert_near(g, 3.0 * M_LN2, TOL_TIGHT);
    /* a cell whose mass under one level is subnormal (7.4e-323) while the
     * other level's is of order one, as photon counting at 100 photons
     * per pulse gives: the ratio of the two overflows, yet the one-bit
     * GMI is the MI, about 1 bit (it came out 0) */
    {
        qc_dmc *ook;
        assert_int_equal(qc_dmc_alloc(2, 3, &ook), QC_OK);
        const double p0[3] = {1.0 - 1.38e-15, 1.38e-15 - 7.41e-323, 7.41e-323};
        const double p1[3] = {3.23e-36, 0.4, 0.6 - 3.23e-36};
        for (size_t y = 0; y < 3; y++) {
            ook->p[y] = p0[y];
            ook->p[3 + y] = p1[y];
        }
        const double half[2] = {0.5, 0.5};
        const size_t bit[2] = {0, 1};
        double gb, mib;
        assert_int_equal(qc_gmi(ook, half, bit, 1, &gb), QC_OK);
        assert_int_equal(qc_mutual_information(ook, half, &mib), QC_OK);
        assert_true(isfinite(gb));
        assert_near(gb, mib, TOL_TIGHT);
        assert_true(gb > 0.999 * M_LN2);
        qc_dmc_free(ook);
    }
    /* labels: repeated among inputs in use, or too wide */
    lab[1] = lab[0];
    assert_int_equal(qc_gmi(id, r, lab, 3, &g), QC_EINVAL);
    assert_message("two inputs");
    lab[1] = 9;
    assert_int_equal(qc_gmi(id, r, lab, 3, &g), QC_EINVAL);
    assert_message("does not fit");
    qc_dmc_free(id);
}

static void test_unquantized_gmi(void **state)
{
    (void)state;
    /* binary input: GMI = MI (one bit) */
    qc_model *m = gauss(0.8);
    const double bpsk[2] = {-1.0, 1.0}, half[2] = {0.5, 0.5};
    size_t lab2[2] = {0, 1};
    double g, mi, err;
    assert_int_equal(qc_unquantized_gmi(m, bpsk, half, 2, lab2, 1, &g, &err), QC_OK);
    assert_int_equal(qc_unquantized_mi(m, bpsk, half, 2, &mi, NULL), QC_OK);
    assert_near(g, mi, TOL_QUAD);
    /* 4-PAM: GMI ≤ MI, and a 12-bit uniform quantizer comes close to the
     * unquantized GMI (quantization converges: common practice) */
    const double pam[4] = {-3, -1, 1, 3}, r[4] = {0.25, 0.25, 0.25, 0.25};
    size_t lab[4];
    unsigned nb;
    assert_int_equal(qc_gray_labels(pam, 4, lab, &nb), QC_OK);
    assert_int_equal(qc_unquantized_gmi(m, pam, r, 4, lab, nb, &g, &err), QC_OK);
    assert_int_equal(qc_unquantized_mi(m, pam, r, 4, &mi, NULL), QC_OK);
    assert_true(g < mi);
    assert_true(err < TOL_QUAD_ERR);
    enum { NT = 4095 };
    static double t[NT];
    for (size_t j = 0; j < NT; j++)
        t[j] = -8.0 + 16.0 * (double)(j + 1) / (NT + 1);
    qc_dmc *d;
    assert_int_equal(qc_discretize(m, pam, 4, t, NT, &d), QC_OK);
    double gq;
    assert_int_equal(qc_gmi(d, r, lab, nb, &gq), QC_OK);
    assert_true(gq <= g + TOL_QUAD); /* merging outputs never gains (data processing) */
    assert_near(gq * QC_LOG2E, g * QC_LOG2E, TOL_FINE);
    qc_dmc_free(d);
    qc_model_free(m);

    /* 64-PAM at σ = 3 (level spacing 2): each output point sees some
     * twenty levels. Against H(X) − ∫ Σ_b h(g_b0, g_b1) with every level
     * in g, by composite Simpson on steps of σ/40 (error far below 1e-10
     * for this smooth integrand): the union-of-supports integral, which
     * leaves out of g the levels whose support does not hold y, agrees
     * within its error estimate (which includes that truncation bound). */
    enum { L = 64 };
    const double sigma = 3.0;
    m = gauss(sigma);
    double lv[L], rl[L];
    size_t lab64[L];
    for (size_t i = 0; i < L; i++) {
        lv[i] = -63.0 + 2.0 * (double)i;
        rl[i] = 1.0 / L;
    }
    assert_int_equal(qc_gray_labels(lv, L, lab64, &nb), QC_OK);
    assert_int_equal(nb, 6u);
    assert_int_equal(qc_unquantized_gmi(m, lv, rl, L, lab64, nb, &g, &err), QC_OK);
    const double a = -63.0 - 12.0 * sigma, h = sigma / 40.0;
    const size_t steps = (size_t)ceil(2.0 * (63.0 + 12.0 * sigma) / h) / 2 * 2;
    double hb = 0.0;
    for (size_t k = 0; k <= steps; k++) {
        double y = a + h * (double)k, gb[12] = {0}, v = 0.0;
        for (size_t i = 0; i < L; i++) {
            double p = rl[i] * exp(-0.5 * (y - lv[i]) * (y - lv[i]) / (sigma * sigma)) /
                       (sigma * sqrt(2.0 * M_PI));
            for (unsigned b = 0; b < nb; b++)
                gb[2 * b + ((lab64[i] >> b) & 1)] += p;
        }
        for (unsigned b = 0; b < nb; b++)
            for (int side = 0; side < 2; side++) {
                double own = gb[2 * b + side], other = gb[2 * b + 1 - side];
                if (own > 0.0)
                    v += own * log1p(other / own);
            }
        hb += v * (k == 0 || k == steps ? 1.0 : k % 2 ? 4.0 : 2.0);
    }
    hb *= h / 3.0;
    const double g_ref = log((double)L) - hb;
    assert_true(err < 1e-11);
    assert_true(fabs(g - g_ref) <= err + 1e-10);
    qc_model_free(m);

    /* photon counts 1e9 apart: the sum runs over the two supports (about
     * 5e5 counts each), not over the 1e9 counts between them; one bit,
     * told apart without error */
    const double counts[2] = {1e9, 0.5}, onoff[2] = {0.0, 1.0};
    assert_int_equal(qc_model_alloc(&qc_model_poisson, counts, &m), QC_OK);
    assert_int_equal(qc_unquantized_gmi(m, onoff, half, 2, lab2, 1, &g, &err), QC_OK);
    assert_near(g, M_LN2, 1e-12);
    qc_model_free(m);
}

/* ---- dispersion and the normal approximation --------------------------- */

static double log2sq(double v) { return log2(v) * log2(v); }

static void test_dispersion_closed_forms(void **state)
{
    (void)state;
    const double ps[] = {0.001, 0.01, 0.11, 0.3, 0.45};
    const double r[2] = {0.5, 0.5};
    for (size_t i = 0; i < sizeof ps / sizeof *ps; i++) {
        double p = ps[i];
        qc_dmc *d;
        assert_int_equal(qc_dmc_alloc(2, 2, &d), QC_OK);
        d->p[0] = d->p[3] = 1.0 - p;
        d->p[1] = d->p[2] = p;
        double mi, v;
        assert_int_equal(qc_dispersion(d, r, &mi, &v), QC_OK);
        /* BSC: C = 1 − h2(p), V = p(1−p)·log2²((1−p)/p) (Y. Polyanskiy,
         * H. V. Poor, S. Verdú, "Channel coding rate in the finite
         * blocklength regime", IEEE Trans. Inf. Theory 56(5), 2010, the
         * BSC section; theorem number 52 from memory) */
        assert_near(mi * QC_LOG2E, 1.0 - qc_binary_entropy(p) * QC_LOG2E, TOL_TIGHT);
        assert_near(v * QC_LOG2E * QC_LOG2E, p * (1 - p) * log2sq((1 - p) / p), TOL_TIGHT);
        qc_dmc_free(d);
        /* BEC with erasure e = p: V = e(1−e) bits² (same paper, the BEC
         * section; theorem number 53 from memory) */
        assert_int_equal(qc_dmc_alloc(2, 3, &d), QC_OK);
        d->p[0] = 1.0 - p;
        d->p[1] = p;
        d->p[4] = p;
        d->p[5] = 1.0 - p;
        assert_int_equal(qc_dispersion(d, r, &mi, &v), QC_OK);
        /* C = 1 − e (same paper, the BEC section) */
        assert_near(mi * QC_LOG2E, 1.0 - p, TOL_TIGHT);
        assert_near(v * QC_LOG2E * QC_LOG2E, p * (1 - p), TOL_TIGHT);
        qc_dmc_free(d);
    }
    /* a noiseless channel has no dispersion */
    qc_dmc *id;
    assert_int_equal(qc_dmc_alloc(4, 4, &id), QC_OK);
    for (size_t x = 0; x < 4; x++)
        id->p[x * 4 + x] = 1.0;
    double u[4] = {0.25, 0.25, 0.25, 0.25}, mi, v;
    assert_int_equal(qc_dispersion(id, u, &mi, &v), QC_OK);
    assert_near(v, 0.0, TOL_TIGHT);
    assert_near(mi, 2.0 * M_LN2, TOL_TIGHT);
    u[0] = 0.5;
    assert_int_equal(qc_dispersion(id, u, &mi, &v), QC_EINVAL);
    assert_message("sum");
    qc_dmc_free(id);
}

static void test_normal_approximation(void **state)
{
    (void)state;
    double r;
    /* ε = ½: Q⁻¹(½) = 0, only the log term of the normal approximation
     * C − √(V/n)·Q⁻¹(ε) + log2(n)/(2n) (Polyanskiy, Poor, Verdú 2010) */
    assert_int_equal(qc_normal_approximation(0.5, 0.3, 1024, 0.5, &r), QC_OK);
    assert_near(r, 0.5 + 10.0 / 2048.0, TOL_TIGHT);
    /* ε = Q(1) = ½·erfc(1/√2): one standard deviation √(V/n) below */
    double eps = 0.5 * erfc(1.0 / M_SQRT2);
    assert_int_equal(qc_normal_approximation(0.5, 0.25, 100, eps, &r), QC_OK);
    assert_near(r, 0.5 - 0.05 + log2(100.0) / 200.0, TOL_FORMULA);
    assert_int_equal(qc_normal_approximation(0.5, 0.25, 0, 0.1, &r), QC_EINVAL);
    assert_message("blocklength");
    assert_int_equal(qc_normal_approximation(0.5, 0.25, 10, 1.0, &r), QC_EINVAL);
    assert_message("error-rate");
    assert_int_equal(qc_normal_approximation(0.5, 0.25, 10, 0.0, &r), QC_EINVAL);
}

static void test_shaping_gap(void **state)
{
    (void)state;
    /* on the Shannon curve ½·log2(1 + snr) (Shannon 1948) the gap is 0 */
    for (double db = -10.0; db <= 30.0; db += 5.0) {
        double c = 0.5 * log2(1.0 + pow(10.0, db / 10.0));
        assert_near(qc_shaping_gap_db(db, c), 0.0, TOL_GAP_DB);
        /* a smaller rate is reached with less SNR: positive gap */
        assert_true(qc_shaping_gap_db(db, 0.9 * c) > 0.0);
    }
    assert_true(isnan(qc_shaping_gap_db(10.0, 0.0)));
    assert_true(isnan(qc_shaping_gap_db(NAN, 1.0)));
}

/* ---- designs: QAM, the gmi objective, practitioners' fields ------------ */

static void test_qam_doubles_the_quadrature(void **state)
{
    (void)state;
    qc_model *m = gauss(0.6);
    const double pam[4] = {-3, -1, 1, 3};
    for (int obj = 0; obj < 2; obj++) {
        qc_design_request r;
        request(&r, m, pam, 4, 8);
        r.input.objective = obj ? QC_OBJECTIVE_GMI : QC_OBJECTIVE_MI;
        qc_design_result one, two;
        assert_int_equal(qc_design(&r, &one), QC_OK);
        r.channel.dimensions = 2;
        assert_int_equal(qc_design(&r, &two), QC_OK);
        /* product law on a product channel: I and the bitwise GMI add
         * over the quadratures (chain rule for independent pairs, Cover &
         * Thomas, ch. 2; docs/alphabets.md) */
        assert_int_equal(one.dimensions, 1);
        assert_int_equal(two.dimensions, 2);
        assert_near(two.rate_bits, 2.0 * one.rate_bits, TOL_TIGHT);
        assert_near(two.mi_bits, 2.0 * one.mi_bits, TOL_TIGHT);
        assert_near(two.gmi_bits, 2.0 * one.gmi_bits, TOL_TIGHT);
        assert_near(two.unquantized_bits, 2.0 * one.unquantized_bits, TOL_TIGHT);
        assert_near(two.dispersion_bits2, 2.0 * one.dispersion_bits2, TOL_TIGHT);
        assert_near(two.average_power, 2.0 * one.average_power, TOL_TIGHT);
        assert_near(two.snr_db, one.snr_db, TOL_TIGHT); /* Es/N0 = E[x_I²]/σ² */
        for (size_t j = 0; j < one.nthresholds; j++)
            assert_true(two.thresholds[j] == one.thresholds[j]);
        /* the objective's rate */
        assert_near(one.rate_bits, obj ? one.gmi_bits : one.mi_bits, TOL_TIGHT);
        assert_true(one.gmi_bits <= one.mi_bits + TOL_TIGHT);
        assert_int_equal(one.label_bits, 2);
        qc_design_result_clear(&one);
        qc_design_result_clear(&two);
    }
    qc_model_free(m);
}

static void test_gmi_objective(void **state)
{
    (void)state;
    qc_model *m = gauss(0.5);
    const double pam[8] = {-7, -5, -3, -1, 1, 3, 5, 7};
    qc_design_request r;
    request(&r, m, pam, 8, 16);
    r.input.objective = QC_OBJECTIVE_GMI;
    r.numerics.blocklength = 2000;
    r.numerics.error_rate = 1e-4;
    qc_design_result g;
    assert_int_equal(qc_design(&r, &g), QC_OK);
    assert_int_equal(g.objective, QC_OBJECTIVE_GMI);
    assert_near(g.rate_bits, g.gmi_bits, TOL_TIGHT);
    assert_true(g.gmi_bits < g.mi_bits);
    assert_true(g.rate_bits <= g.unquantized_bits + TOL_QUAD); /* unquantized GMI */
    assert_true(isnan(g.snr_penalty_db));
    assert_int_equal(g.label_bits, 3);
    /* the normal approximation from the reported rate and dispersion */
    double want;
    assert_int_equal(qc_normal_approximation(g.rate_bits, g.dispersion_bits2, 2000, 1e-4,
                                             &want),
                     QC_OK);
    assert_near(g.rate_at_blocklength_bits, want, TOL_TIGHT);
    assert_true(g.rate_at_blocklength_bits < g.rate_bits);
    /* the shaping gap is positive for an equiprobable finite alphabet */
    assert_true(g.shaping_gap_db > 0.0);
    assert_near(g.shaping_gap_db, qc_shaping_gap_db(g.snr_db, g.rate_bits), TOL_TIGHT);
    qc_design_result_clear(&g);
    /* MI objective: no blocklength, NaN rate at blocklength */
    r.input.objective = QC_OBJECTIVE_MI;
    r.numerics.blocklength = 0;
    r.numerics.error_rate = 0.0;
    assert_int_equal(qc_design(&r, &g), QC_OK);
    assert_true(isnan(g.rate_at_blocklength_bits));
    assert_near(g.rate_bits, g.mi_bits, TOL_TIGHT);
    qc_design_result_clear(&g);
    qc_model_free(m);
}

static void test_optimize_levels_mi(void **state)
{
    (void)state;
    /* binary input, uniform law, power P: the antipodal pair ±√P is the
     * best placement (the only one with E[x²] = P and the largest
     * separation; common practice) */
    qc_model *m = gauss(1.0);
    const double start[2] = {-0.3, 0.9};
    qc_constraints c;
    qc_constraints_none(&c);
    c.power = 2.0;
    qc_design_request r;
    request(&r, m, start, 2, 2);
    r.input.constraints = &c;
    r.input.optimize_levels = 1;
    qc_design_result res;
    assert_int_equal(qc_design(&r, &res), QC_OK);
    assert_true(res.levels_optimized);
    assert_true(res.level_evaluations > 10);
    assert_near(res.levels[0], -sqrt(2.0), TOL_LEVEL);
    assert_near(res.levels[1], sqrt(2.0), TOL_LEVEL);
    assert_true(res.average_power <= 2.0 * (1.0 + 1e-9));
    /* hard-decision BPSK at snr = 2 is a binary symmetric channel with
     * crossover Q(√2) = P(N(√2, 1) < 0): C = 1 − h2(Q(√2)) (C. E. Shannon,
     * "A mathematical theory of communication", Bell Syst. Tech. J. 27,
     * 1948) */
    double q = 0.5 * erfc(1.0 / 1.0); /* Q(√2) = ½·erfc(1) */
    assert_near(res.rate_bits, 1.0 - qc_binary_entropy(q) * QC_LOG2E, TOL_DESIGN);
    qc_design_result_clear(&res);

    /* 4 levels in a peak: never worse than the equally spaced start, and
     * the extreme levels sit at ±A (the rate grows with the spread) */
    const double pam[4] = {-1.5, -0.5, 0.5, 1.5};
    qc_constraints_none(&c);
    c.peak = 1.5;
    request(&r, m, pam, 4, 4);
    r.input.constraints = &c;
    qc_design_result base;
    assert_int_equal(qc_design(&r, &base), QC_OK);
    r.input.optimize_levels = 1;
    r.input.level_starts = 2;
    assert_int_equal(qc_design(&r, &res), QC_OK);
    assert_true(res.rate_bits >= base.rate_bits - TOL_TIGHT);
    assert_near(res.levels[0], -1.5, TOL_LEVEL);
    assert_near(res.levels[3], 1.5, TOL_LEVEL);
    for (size_t i = 0; i < 4; i++)
        assert_true(fabs(res.levels[i]) <= 1.5 + TOL_TIGHT);
    qc_design_result_clear(&res);
    qc_design_result_clear(&base);
    qc_model_free(m);
}

/* ---- settings: the keys of the alphabet module ------------------------ */

static qc_status build(const char *const *kv, qc_settings **s, qc_model **m,
                       qc_design_request *r)
{
    assert_int_equal(qc_settings_alloc(s), QC_OK);
    for (size_t i = 0; kv[i]; i += 2) {
        qc_status st = qc_settings_set(*s, kv[i], kv[i + 1]);
        if (st != QC_OK)
            return st;
    }
    return qc_settings_build(*s, m, r);
}

static void test_settings_keys(void **state)
{
    (void)state;
    qc_settings *s;
    qc_model *m;
    qc_design_request r;
    /* a grid trimmed by the peak; snr-db with a power budget: σ² = P/snr */
    const char *grid[] = {"model", "gauss", "level-grid", "-3,3,13", "peak-limit", "2",
                          "power-limit", "2", "snr-db", "10", "bits", "2",
                          "objective", "capacity", NULL};
    assert_int_equal(build(grid, &s, &m, &r), QC_OK);
    assert_int_equal(r.channel.nlevels, 9); /* −2, −1.5, …, 2 */
    assert_near(r.channel.levels[0], -2.0, TOL_TIGHT);
    assert_near(qc_model_param(m, 0), sqrt(2.0 / 10.0), TOL_TIGHT);
    assert_non_null(r.input.constraints);
    assert_near(r.input.constraints->power, 2.0, TOL_EXACT);
    assert_false(r.input.constraints->intensity);
    qc_model_free(m);
    qc_settings_free(s);
    /* QAM: Es/N0 = E[x_I²]/σ² from the per-quadrature levels (5 for 4-PAM) */
    const char *qam[] = {"model", "gauss", "alphabet", "qam:16", "snr-db", "10",
                         "bits", "3", NULL};
    assert_int_equal(build(qam, &s, &m, &r), QC_OK);
    assert_int_equal(r.channel.dimensions, 2);
    assert_int_equal(r.channel.nlevels, 4);
    assert_near(qc_model_param(m, 0), sqrt(0.5), TOL_TIGHT);
    assert_null(r.input.constraints);
    qc_model_free(m);
    qc_settings_free(s);
    /* an intensity model: the peak interval is [0, A] */
    const char *pois[] = {"model", "poisson", "signal", "4", "level-grid", "-1,1,9",
                          "peak-limit", "0.5", "bits", "2", "objective", "capacity", NULL};
    assert_int_equal(build(pois, &s, &m, &r), QC_OK);
    assert_int_equal(r.channel.nlevels, 3); /* 0, 0.25, 0.5 */
    assert_true(r.input.constraints->intensity);
    assert_near(r.channel.levels[0], 0.0, TOL_TIGHT);
    qc_model_free(m);
    qc_settings_free(s);
    /* practitioners' keys; the switch takes true or false */
    const char *prac[] = {"model", "gauss", "sigma", "1", "alphabet", "pam:4", "bits", "2",
                          "blocklength", "500", "error-rate", "1e-3", "peak-limit", "3",
                          "optimize-levels", "true", "level-starts", "2", NULL};
    assert_int_equal(build(prac, &s, &m, &r), QC_OK);
    assert_int_equal(r.numerics.blocklength, 500);
    assert_near(r.numerics.error_rate, 1e-3, TOL_EXACT);
    assert_true(r.input.optimize_levels);
    assert_int_equal(r.input.level_starts, 2);
    assert_int_equal(qc_settings_set(s, "optimize-levels", "false"), QC_OK);
    assert_int_equal(qc_settings_set(s, "optimize-levels", "maybe"), QC_EINVAL);
    assert_message("true or false");
    assert_int_equal(qc_settings_set(s, "error-rate", "1"), QC_EINVAL);
    assert_int_equal(qc_settings_set(s, "peak-limit", "0"), QC_EINVAL);
    assert_int_equal(qc_settings_set(s, "objective", "gmi"), QC_OK);
    qc_model_free(m);
    qc_settings_free(s);
    /* peak-dbm: OOK with infinite extinction has its top level at twice
     * the average power, so peak-dbm = received-dbm + 10·log10(2) builds the
     * same model (the front end of docs/models.md) */
    const char *avg[] = {"model", "poisson", "alphabet", "upam:2", "received-dbm", "-70",
                         "slot-time", "1e-9", "wavelength-nm", "1550", "bits", "2", NULL};
    char peak_dbm[32];
    snprintf(peak_dbm, sizeof peak_dbm, "%.17g", -70.0 + 10.0 * log10(2.0));
    const char *top[] = {"model", "poisson", "alphabet", "upam:2", "peak-dbm", peak_dbm,
                         "slot-time", "1e-9", "wavelength-nm", "1550", "bits", "2", NULL};
    qc_model *m2;
    qc_settings *s2;
    assert_int_equal(build(avg, &s, &m, &r), QC_OK);
    assert_int_equal(build(top, &s2, &m2, &r), QC_OK);
    assert_near(qc_model_param(m2, 0), qc_model_param(m, 0), 1e-12 * qc_model_param(m, 0));
    qc_model_free(m);
    qc_model_free(m2);
    qc_settings_free(s);
    qc_settings_free(s2);
}

/* ---- bad input ------------------------------------------------------- */

static void test_bad_requests(void **state)
{
    (void)state;
    qc_model *m = gauss(1.0);
    const double three[3] = {-1, 0, 1}, pam[4] = {-3, -1, 1, 3};
    qc_design_request r;
    qc_design_result res;
    qc_constraints c;

    request(&r, m, three, 3, 4);
    r.input.objective = QC_OBJECTIVE_GMI;
    assert_int_equal(qc_design(&r, &res), QC_EINVAL);
    assert_message("objective gmi");
    assert_message("power of 2");
    r.input.objective = QC_OBJECTIVE_MI;
    r.channel.dimensions = 2;
    assert_int_equal(qc_design(&r, &res), QC_EINVAL);
    assert_message("QAM");
    r.channel.dimensions = 3;
    assert_int_equal(qc_design(&r, &res), QC_EINVAL);
    assert_message("dimensions");

    request(&r, m, pam, 4, 4);
    r.numerics.blocklength = 100;
    assert_int_equal(qc_design(&r, &res), QC_EINVAL);
    assert_message("error-rate");
    r.numerics.blocklength = 0;
    r.numerics.error_rate = 0.1;
    assert_int_equal(qc_design(&r, &res), QC_EINVAL);
    assert_message("blocklength");
    r.numerics.error_rate = 0.0;

    qc_constraints_none(&c);
    r.input.constraints = &c;
    c.power = 0.5; /* below min x² = 1 */
    assert_int_equal(qc_design(&r, &res), QC_EINFEASIBLE);
    assert_message("power");
    c.power = 2.0; /* the uniform law has E[x²] = 5 */
    assert_int_equal(qc_design(&r, &res), QC_EINFEASIBLE);
    assert_message("uniform law");
    c.power = NAN;
    c.mean = -4.0;
    assert_int_equal(qc_design(&r, &res), QC_EINFEASIBLE);
    assert_message("mean");
    c.mean = NAN;
    c.peak = 2.0;
    assert_int_equal(qc_design(&r, &res), QC_EINVAL);
    assert_message("peak");
    c.peak = -1.0;
    assert_int_equal(qc_design(&r, &res), QC_EINVAL);
    assert_message("peak");
    c.peak = NAN;
    double costs[4] = {9, 1, 1, 9};
    c.power = 10.0;
    r.input.costs = costs;
    r.input.budget = 3.0;
    r.input.objective = QC_OBJECTIVE_CAPACITY;
    assert_int_equal(qc_design(&r, &res), QC_EINVAL);
    assert_message("not both");
    r.input.costs = NULL;
    r.input.objective = QC_OBJECTIVE_MI;
    /* level search: unbounded levels, fixed quantizer */
    qc_constraints_none(&c);
    c.mean = 1.0;
    r.input.optimize_levels = 1;
    assert_int_equal(qc_design(&r, &res), QC_EINVAL);
    assert_message("optimize-levels");
    c.peak = 3.0;
    r.quantizer.kind = QC_QUANTIZER_FIXED;
    const double t[3] = {-2, 0, 2};
    r.quantizer.thresholds = t;
    r.quantizer.nthresholds = 3;
    assert_int_equal(qc_design(&r, &res), QC_EINVAL);
    assert_message("fixed");
    /* a power and a mean no placement meets: |E x| ≤ √P < −mean */
    r.quantizer.kind = QC_QUANTIZER_OPTIMAL;
    qc_constraints_none(&c);
    c.power = 1.0;
    c.mean = -2.0;
    assert_int_equal(qc_design(&r, &res), QC_EINFEASIBLE);
    qc_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_alphabet_specs),
        cmocka_unit_test(test_levels_and_grid),
        cmocka_unit_test(test_peak_on_alphabets),
        cmocka_unit_test(test_constraint_feasibility),
        cmocka_unit_test(test_gray_labels),
        cmocka_unit_test(test_gmi_properties),
        cmocka_unit_test(test_gmi_blocks),
        cmocka_unit_test(test_dispersion_rows),
        cmocka_unit_test(test_unquantized_gmi),
        cmocka_unit_test(test_dispersion_closed_forms),
        cmocka_unit_test(test_normal_approximation),
        cmocka_unit_test(test_shaping_gap),
        cmocka_unit_test(test_qam_doubles_the_quadrature),
        cmocka_unit_test(test_gmi_objective),
        cmocka_unit_test(test_optimize_levels_mi),
        cmocka_unit_test(test_settings_keys),
        cmocka_unit_test(test_bad_requests),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

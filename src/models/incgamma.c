/* incgamma.c — the regularized incomplete gamma functions P(a, t) and
 * Q(a, t) for the large parameters of the `preamp` model (a up to a few
 * 1e6) and of the `poisson` model (a from 1000 on), where GSL's
 * gsl_sf_gamma_inc_P/Q_e stop converging, stop their continued fraction
 * early or switch to an asymptotic form outside its range.
 *
 * qc_gamma_inc:
 * Both are written as (prefactor) × (sum): the prefactor
 * d_a(t) = t^a e^{−t}/Γ(a+1) in the saddle-point form
 * e^{−stirlerr(a) − bd0(a, t)}/√(2πa) of C. Loader ("Fast and accurate
 * computation of binomial probabilities", 2000), which keeps full
 * relative accuracy where a·ln t − t − ln Γ(a+1) cancels (at a = t = 1e6
 * the naive form loses 1e-9 relative);
 *   t ≤ a:  P(a, t) = d_a(t) Σ_{n≥0} t^n / ((a+1)…(a+n))   (DLMF 8.7.1),
 *   t > a:  Q(a, t) = a·d_a(t) / (t+1−a − 1(1−a)/(t+3−a − 2(2−a)/(…)))
 *           (Legendre's continued fraction, DLMF 8.9.2), evaluated by the
 *           modified Lentz algorithm (Thompson & Barnett, J. Comput. Phys.
 *           64, 1986).
 * The other function is the complement: on that side it is ≥ ~0.4, so
 * 1 − (small tail) keeps its relative accuracy. All terms are positive
 * (the series) or the fraction converges monotonically once t > a; the
 * rounding error grows with the number of terms, about 8·√a at t ≈ a:
 * ≤ 1e-12 relative at a = 2e6.
 *
 * qc_gamma_inc_uniform: for a ≥ 1000 (the `poisson` model's thresholds),
 * Temme's uniform asymptotic expansion (N. M. Temme, "The asymptotic
 * expansion of the incomplete gamma functions", SIAM J. Math. Anal. 10(4),
 * 1979; DLMF §8.12; the form of A. R. DiDonato and A. H. Morris,
 * "Computation of the incomplete gamma function ratios and their inverse",
 * ACM Trans. Math. Softw. 12(4), 1986): with λ = t/a and
 * η = sign(λ − 1)·√(2(λ − 1 − ln λ)),
 *   Q(a, t) = ½ erfc(η√(a/2)) + R,   P(a, t) = ½ erfc(−η√(a/2)) − R,
 *   R = e^{−aη²/2}/√(2πa) · Σ_{k=0}^{4} c_k(η) a^{−k},
 * c_0 = 1/(λ − 1) − 1/η, c_k = c'_{k−1}(η)/η + (−1)^k g_k/(λ − 1), g_k the
 * coefficients of Stirling's series of Γ (DLMF 5.11.3). Each c_k is used as
 * its Taylor polynomial of degree 21 at η = 0 (coefficients computed in
 * exact rational arithmetic by scripts/temme_coefficients.py; they begin
 * −1/3, 1/12, −2/135 and c_k(0) = −1/3, −1/540, 25/6048, 101/155520, as in
 * Temme 1979). a·η²/2 = −a·(ln(1 + μ) − μ), μ = λ − 1, comes from GSL's
 * gsl_sf_log_1plusx_mx, with full relative accuracy (the plain
 * a·ln(a/t) + t − a cancels and costs e.g. 1.6e-13 relative at a = 1000,
 * t = a + 7.5√a). Where the tail is above the underflow (a·η²/2 < 745,
 * |η| < 1.23 for a ≥ 1000) the Taylor polynomials are exact to 1e-17 and
 * the omitted a^{−5} term is below 1e-18; both tails are sums of terms of
 * one sign (R has the sign of −η), so there is no cancellation. Checked
 * against the Poisson pmf summed in 50-digit decimal arithmetic for
 * a = 1e3 … 1e8, |t − a| ≤ 45√a: relative error ≤ 1e-15·(1 + a·η²/2). */
#include "incgamma.h"

#include <math.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_sf_gamma.h>
#include <gsl/gsl_sf_log.h>

#define LN_SQRT_2PI 0.91893853320467274178
#define SERIES_EPS 1e-17
#define CF_EPS 1e-16
#define MAX_TERMS 50000000

/* Stirling's error ln Γ(n+1) − (n + ½) ln n + n − ½ ln 2π (Loader 2000),
 * any real n > 0. */
static double stirling_error(double n)
{
    if (n <= 15.0) {
        gsl_sf_result lf;
        if (gsl_sf_lngamma_e(n + 1.0, &lf) != GSL_SUCCESS)
            return NAN;
        return lf.val - (n + 0.5) * log(n) + n - LN_SQRT_2PI;
    }
    double nn = n * n;
    const double s0 = 1.0 / 12, s1 = 1.0 / 360, s2 = 1.0 / 1260, s3 = 1.0 / 1680,
                 s4 = 1.0 / 1188;
    if (n > 500.0)
        return (s0 - s1 / nn) / n;
    if (n > 80.0)
        return (s0 - (s1 - s2 / nn) / nn) / n;
    if (n > 35.0)
        return (s0 - (s1 - (s2 - s3 / nn) / nn) / nn) / n;
    return (s0 - (s1 - (s2 - (s3 - s4 / nn) / nn) / nn) / nn) / n;
}

/* Deviance a ln(a/t) + t − a without cancellation (Loader 2000). */
static double deviance(double a, double t)
{
    if (fabs(a - t) < 0.1 * (a + t)) {
        double v = (a - t) / (a + t), s = (a - t) * v;
        double ej = 2.0 * a * v;
        v *= v;
        for (int j = 1; j < 1000; j++) {
            ej *= v;
            double s1 = s + ej / (2 * j + 1);
            if (s1 == s)
                return s1;
            s = s1;
        }
        return s;
    }
    return a * log(a / t) + t - a;
}

double qc_loader_exponent(double a, double t)
{
    return -stirling_error(a) - deviance(a, t);
}

double qc_log_poisson_term(double a, double t)
{
    if (a == 0.0)
        return -t;
    if (t == 0.0)
        return -INFINITY;
    return qc_loader_exponent(a, t) - LN_SQRT_2PI - 0.5 * log(a);
}

/* ln Σ_{n≥0} t^n/((a+1)…(a+n)), t ≤ a: the ratio t/(a+n+1) < 1 falls,
 * so the rest after a term r is below r·q/(1 − q), q the next ratio. */
static double log_series(double a, double t)
{
    double sum = 1.0, r = 1.0;
    for (long n = 1; n < MAX_TERMS; n++) {
        r *= t / (a + n);
        sum += r;
        double q = t / (a + n + 1.0);
        if (r * q <= SERIES_EPS * sum * (1.0 - q))
            return log(sum);
    }
    return NAN;
}

/* ln of Legendre's continued fraction for Q/(a·d_a), t > a. */
static double log_fraction(double a, double t)
{
    const double tiny = 1e-300;
    double b = t + 1.0 - a, c = 1.0 / tiny, d = 1.0 / b, h = d;
    for (long i = 1; i < MAX_TERMS; i++) {
        double an = -(double)i * ((double)i - a);
        b += 2.0;
        d = an * d + b;
        if (fabs(d) < tiny)
            d = tiny;
        c = b + an / c;
        if (fabs(c) < tiny)
            c = tiny;
        d = 1.0 / d;
        double del = d * c;
        h *= del;
        if (fabs(del - 1.0) <= CF_EPS)
            return log(h);
    }
    return NAN;
}

double qc_gamma_inc(double a, double t, int upper)
{
    if (!(a > 0.0) || !(t >= 0.0))
        return NAN;
    if (t == 0.0)
        return upper ? 1.0 : 0.0;
    if (isinf(t))
        return upper ? 0.0 : 1.0;
    double lp = qc_log_poisson_term(a, t);
    if (t <= a) {
        double p = exp(lp + log_series(a, t));
        return upper ? 1.0 - p : p;
    }
    double q = exp(log(a) + lp + log_fraction(a, t));
    if (q > 1.0) /* rounding at t just above a small a */
        q = 1.0;
    return upper ? q : 1.0 - q;
}

#define UNIFORM_TERMS 5  /* c_0 … c_4 */
#define UNIFORM_DEGREE 22 /* Taylor coefficients of each c_k in η */
#define UNIFORM_LOW (-0.9) /* μ ≤ −0.9 or μ ≥ 3: a·η²/2 > 1400, tail 0 */
#define UNIFORM_HIGH 3.0

/* Taylor coefficients of c_k(η) at η = 0, k = 0 … 4 (Temme 1979). */
static const double temme_d[UNIFORM_TERMS][UNIFORM_DEGREE] = {
    {-0.33333333333333331, 0.083333333333333329, -0.014814814814814815, 0.0011574074074074073,
      0.00035273368606701942, -0.0001787551440329218, 3.9192631785224377e-05,
      -2.185448510679992e-06, -1.85406221071516e-06, 8.2967113409530865e-07,
      -1.7665952736826078e-07, 6.7078535434014984e-09, 1.0261809784240309e-08,
      -4.3820360184533529e-09, 9.1476995822367902e-10, -2.5514193994946248e-11,
      -5.8307721325504256e-11, 2.4361948020667415e-11, -5.0276692801141755e-12,
      1.1004392031956135e-13, 3.3717632624009851e-13, -1.3923887224181621e-13},
    {-0.0018518518518518519, -0.003472222222222222, 0.0026455026455026454,
      -0.00099022633744855963, 0.00020576131687242798, -4.018775720164609e-07,
      -1.8098550334489977e-05, 7.6491609160811098e-06, -1.6120900894563446e-06,
      4.647127802807434e-09, 1.3786334469157209e-07, -5.7525456035177047e-08,
      1.1951628599778148e-08, -1.7543241719747647e-11, -1.0091543710600413e-09,
      4.1627929918425828e-10, -8.5639070264929801e-11, 6.0672151016047582e-14,
      7.1624989648114856e-12, -2.9331866437714371e-12, 5.9966963656836885e-13,
      -2.1671786527323313e-16},
    {0.0041335978835978834, -0.0026813271604938273, 0.0007716049382716049, 2.0093878600823047e-06,
      -0.0001073665322636516, 5.2923448829120125e-05, -1.2760635188618728e-05,
      3.4235787340961378e-08, 1.3721957309062934e-06, -6.2989921383800548e-07,
      1.4280614206064242e-07, -2.0477098421990866e-10, -1.409252991086752e-08,
      6.2289740849220218e-09, -1.3670488396617114e-09, 9.428356159014678e-13,
      1.2872252400089318e-10, -5.5645956134363323e-11, 1.1975935546366981e-11,
      -4.1689782251838634e-15, -1.0940640427884595e-12, 4.6622399463901356e-13},
    {0.00064943415637860077, 0.00022947209362139917, -0.0004691894943952557,
      0.00026772063206283885, -7.5618016718839766e-05, -2.3965051138672968e-07,
      1.1082654115347302e-05, -5.6749528269915965e-06, 1.4230900732435883e-06,
      -2.7861080291528143e-11, -1.6958404091930278e-07, 8.0994649053880827e-08,
      -1.9111168485973655e-08, 2.3928620439808118e-12, 2.0620131815488797e-09,
      -9.460496661855133e-10, 2.1541049775774907e-10, -1.388823336813903e-14,
      -2.1894761681963938e-11, 9.7909989511716844e-12, -2.1782191880180961e-12,
      6.2088195734079008e-17},
    {-0.00086188829091671173, 0.00078403922172006662, -0.00029907248030319018,
      -1.4638452578843418e-06, 6.6414982154651219e-05, -3.9683650471794347e-05,
      1.1375726970678419e-05, 2.5074972262375329e-10, -1.6954149536558305e-06,
      8.9075075322053094e-07, -2.2929348340008049e-07, 2.9567941375440492e-11,
      2.8865829742708783e-08, -1.4189739437803219e-08, 3.4463580499464896e-09,
      -2.3024517174528067e-13, -3.9409233028046403e-10, 1.8602338968504501e-10,
      -4.3563230050566177e-11, 1.278600101629623e-15, 4.6792750266579197e-12,
      -2.149246470613483e-12},
};

double qc_gamma_inc_uniform(double a, double t, int upper)
{
    if (!(a >= QC_GAMMA_UNIFORM_MIN_A) || !(t >= 0.0) || isinf(a))
        return NAN;
    if (isinf(t))
        return upper ? 0.0 : 1.0;
    double mu = (t - a) / a;
    if (mu <= UNIFORM_LOW)
        return upper ? 1.0 : 0.0;
    if (mu >= UNIFORM_HIGH)
        return upper ? 0.0 : 1.0;
    gsl_sf_result lm;
    if (gsl_sf_log_1plusx_mx_e(mu, &lm) != GSL_SUCCESS)
        return NAN;
    double half_a_eta2 = lm.val < 0.0 ? -a * lm.val : 0.0; /* a·η²/2 */
    double y = copysign(sqrt(half_a_eta2), mu);            /* η·√(a/2) */
    double eta = y * sqrt(2.0 / a);
    double sum = 0.0, ak = 1.0;
    for (int k = 0; k < UNIFORM_TERMS; k++) {
        double c = 0.0;
        for (int n = UNIFORM_DEGREE - 1; n >= 0; n--)
            c = c * eta + temme_d[k][n];
        sum += c * ak;
        ak /= a;
    }
    double r = exp(-half_a_eta2 - LN_SQRT_2PI - 0.5 * log(a)) * sum;
    return upper ? 0.5 * erfc(y) + r : 0.5 * erfc(-y) - r;
}

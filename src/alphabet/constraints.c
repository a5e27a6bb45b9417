/* constraints.c — peak, average-power and average-level (mean optical
 * power) constraints on the input: their feasibility on a set of levels,
 * the per-level costs handed to the capacity engine (Blahut, IEEE Trans.
 * IT 18(4), 1972, capacity–cost via a Lagrange multiplier),. */
#include "alphabet/alphabet.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

void qc_constraints_none(qc_constraints *c)
{
    c->peak = NAN;
    c->power = NAN;
    c->mean = NAN;
    c->intensity = 0;
}

int qc_constraints_any(const qc_constraints *c)
{
    return c && (!isnan(c->peak) || !isnan(c->power) || !isnan(c->mean));
}

qc_status qc_constraints_validate(const qc_constraints *c, unsigned dimensions)
{
    if (!c)
        return QC_OK;
    if (!isnan(c->peak) && (!(c->peak > 0.0) || !isfinite(c->peak)))
        return qc_fail(QC_EINVAL, "peak-limit: must be a positive number (got %g)", c->peak);
    if (!isnan(c->power) && (!(c->power > 0.0) || !isfinite(c->power)))
        return qc_fail(QC_EINVAL, "power-limit: must be a positive number (got %g)", c->power);
    if (!isnan(c->mean) && !isfinite(c->mean))
        return qc_fail(QC_EINVAL, "mean-limit: must be a finite number (got %g)", c->mean);
    if (!isnan(c->mean) && dimensions == 2)
        return qc_fail(QC_EINVAL, "mean-limit: an average-level constraint applies to real "
                                  "alphabets, not to QAM");
    return QC_OK;
}


qc_status qc_constraints_check(const qc_constraints *c, const double *levels, size_t nlevels,
                               unsigned dimensions)
{
    if (!c)
        return QC_OK;
    qc_status st = qc_constraints_validate(c, dimensions);
    if (st != QC_OK)
        return st;
    if (nlevels == 0)
        return qc_fail(QC_EINVAL, "no levels given");
    double d = dimensions == 2 ? 2.0 : 1.0;
    if (!isnan(c->peak))
        for (size_t i = 0; i < nlevels; i++)
            if (!qc_within_peak(levels[i], c->peak, c->intensity))
                return qc_fail(QC_EINVAL, "peak-limit: level %zu (%g) lies outside [%g, %g]", i + 1,
                               levels[i], c->intensity ? 0.0 : -c->peak, c->peak);
    size_t imin = 0;
    for (size_t i = 1; i < nlevels; i++)
        if (fabs(levels[i]) < fabs(levels[imin]))
            imin = i;
    if (!isnan(c->power) && d * levels[imin] * levels[imin] > c->power)
        return qc_fail(QC_EINFEASIBLE,
                       "power-limit: %g is below the smallest %s of any level (%g, at level %g)",
                       c->power, dimensions == 2 ? "E|x|^2" : "E[x^2]",
                       d * levels[imin] * levels[imin], levels[imin]);
    size_t ilow = 0;
    for (size_t i = 1; i < nlevels; i++)
        if (levels[i] < levels[ilow])
            ilow = i;
    if (!isnan(c->mean) && levels[ilow] > c->mean)
        return qc_fail(QC_EINFEASIBLE, "mean-limit: %g is below the smallest level (%g)", c->mean,
                       levels[ilow]);
    if (!isnan(c->power) && !isnan(c->mean)) {
        double *a = qc_malloc_array(nlevels, sizeof *a);
        double *b = qc_malloc_array(nlevels, sizeof *b);
        if (!a || !b) {
            free(a);
            free(b);
            return qc_fail(QC_ENOMEM, "out of memory");
        }
        for (size_t i = 0; i < nlevels; i++) {
            a[i] = levels[i] * levels[i] - c->power;
            b[i] = levels[i] - c->mean;
        }
        size_t wi, wj;
        double lambda;
        int ok = qc_two_cost_witness(a, b, nlevels, &wi, &wj, &lambda);
        free(a);
        free(b);
        if (!ok)
            return qc_fail(QC_EINFEASIBLE,
                           "power-limit and mean-limit: no input law on these levels has both "
                           "E[x^2] <= %g and E[x] <= %g",
                           c->power, c->mean);
    }
    return QC_OK;
}

qc_status qc_constraints_check_law(const qc_constraints *c, const double *levels,
                                   const double *law, size_t nlevels, unsigned dimensions)
{
    if (!c)
        return QC_OK;
    double e1 = 0.0, e2 = 0.0, d = dimensions == 2 ? 2.0 : 1.0;
    for (size_t i = 0; i < nlevels; i++) {
        double r = law ? law[i] : 1.0 / (double)nlevels;
        e1 += r * levels[i];
        e2 += r * levels[i] * levels[i];
    }
    e2 *= d;
    const char *which = law ? "the given law" : "the uniform law";
    if (!isnan(c->power) && e2 > c->power * (1.0 + QC_BUDGET_SLACK))
        return qc_fail(QC_EINFEASIBLE,
                       "power-limit: %s has %s = %g > %g (use objective capacity to choose the "
                       "law, or optimize-levels to move the levels)",
                       which, dimensions == 2 ? "E|x|^2" : "E[x^2]", e2, c->power);
    if (!isnan(c->mean) && e1 > c->mean + QC_BUDGET_SLACK * fmax(1.0, fabs(c->mean)))
        return qc_fail(QC_EINFEASIBLE,
                       "mean-limit: %s has E[x] = %g > %g (use objective capacity to choose the "
                       "law, or optimize-levels to move the levels)",
                       which, e1, c->mean);
    return QC_OK;
}

size_t qc_constraint_costs(const qc_constraints *c, const double *levels, size_t nlevels,
                           unsigned dimensions, double *power_cost, double *mean_cost,
                           qc_cost costs[2])
{
    size_t k = 0;
    if (!c)
        return 0;
    /* QAM: the per-quadrature channel carries half the symbol's power
     * budget (exact: docs/alphabets.md) */
    double share = dimensions == 2 ? 0.5 : 1.0;
    if (!isnan(c->power)) {
        for (size_t i = 0; i < nlevels; i++)
            power_cost[i] = levels[i] * levels[i];
        costs[k++] = (qc_cost){power_cost, share * c->power};
    }
    if (!isnan(c->mean)) {
        /* E[x] ≤ M ⇔ E[x − x_min] ≤ M − x_min: a cost ≥ 0, as the engine
         * requires, for bipolar levels too */
        double least = INFINITY;
        for (size_t i = 0; i < nlevels; i++)
            least = fmin(least, levels[i]);
        for (size_t i = 0; i < nlevels; i++)
            mean_cost[i] = levels[i] - least;
        costs[k++] = (qc_cost){mean_cost, c->mean - least};
    }
    return k;
}

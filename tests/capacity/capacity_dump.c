/* capacity_dump.c — runs the capacity engine (Blahut–Arimoto, Blahut
 * 1972 / Arimoto 1972, with and without an input cost) on a fixed set
 * of random small channels and prints channels and results as JSON for
 * tests/capacity/check_capacity.py, which recomputes them with scipy. */
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>

#include <jansson.h>

#include "quantcap.h"

#define TEST_RNG_SEED 0xc0ffee1234ULL /* the random cases */
#include "test_helpers.h"

#define CASES_FREE 16
#define CASES_COST 12

/* One case: a random nx × ny channel with about `zeros` of its entries
 * 0, optionally random costs in [0, 2) and a budget between the
 * cheapest and the dearest cost. Returns NULL on an engine failure. */
static json_t *one_case(size_t nx, size_t ny, double zeros, int with_costs)
{
    qc_dmc *d;
    if (qc_dmc_alloc(nx, ny, &d) != QC_OK)
        return NULL;
    for (size_t x = 0; x < nx; x++) {
        random_law(d->p + x * ny, ny, zeros);
    }
    double costs[8], law[8];
    qc_ba_options opt;
    qc_ba_options_default(&opt);
    if (with_costs) {
        double lo = INFINITY, hi = -INFINITY;
        for (size_t x = 0; x < nx; x++) {
            costs[x] = 2.0 * uniform01();
            lo = fmin(lo, costs[x]);
            hi = fmax(hi, costs[x]);
        }
        opt.costs = costs;
        opt.budget = lo + (0.1 + 0.5 * uniform01()) * (hi - lo);
    }
    qc_capacity_result res;
    qc_status st = qc_capacity(d, &opt, NULL, &res, law);
    json_t *c = NULL;
    if (st == QC_OK) {
        c = json_object();
        json_object_set_new(c, "nx", json_integer((json_int_t)nx));
        json_object_set_new(c, "ny", json_integer((json_int_t)ny));
        json_object_set_new(c, "p", array_of(d->p, nx * ny));
        json_object_set_new(c, "costs", with_costs ? array_of(costs, nx) : json_null());
        json_object_set_new(c, "budget", json_real(opt.budget));
        json_object_set_new(c, "capacity_bits", json_real(res.capacity_bits));
        json_object_set_new(c, "upper_bound_bits", json_real(res.upper_bound_bits));
        json_object_set_new(c, "cost", json_real(res.cost));
        json_object_set_new(c, "cost_active", json_integer(res.cost_active));
        json_object_set_new(c, "law", array_of(law, nx));
    } else {
        fprintf(stderr, "capacity_dump: %s\n", qc_last_error());
    }
    qc_dmc_free(d);
    return c;
}

int main(void)
{
    json_t *cases = json_array();
    for (int k = 0; k < CASES_FREE + CASES_COST; k++) {
        size_t nx = 2 + (size_t)(uniform01() * 4), ny = 2 + (size_t)(uniform01() * 6);
        json_t *c = one_case(nx, ny, 0.3 * uniform01(), k >= CASES_FREE);
        if (!c) {
            json_decref(cases);
            return 1;
        }
        json_array_append_new(cases, c);
    }
    char *text = json_dumps(cases, JSON_INDENT(1) | JSON_REAL_PRECISION(17));
    json_decref(cases);
    if (!text)
        return 1;
    puts(text);
    free(text);
    return 0;
}

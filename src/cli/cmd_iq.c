/* cmd_iq.c — `quantcap iq`: a two-dimensional constellation (named or
 * read from a file) through a coherent receiver under circular Gaussian
 * noise and an optional phase error: the I/Q pair or the polar quantizer,
 * their cells designed or given, and the rates each keeps. The
 * constellation, its labels, the noise and the phase error are read by
 * the settings layer (qc_settings_plane_channel), as `design`, `require`
 * and scenarios read them; the receiver flags, which --compare gives for
 * both receivers at once, are this command's. */
#include "cli.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define MAX_SEARCH_LABELS 1024 /* larger constellations get no labels searched */
#define PI 3.14159265358979323846

static const cli_opt options[] = {
    {"alphabet", "SPEC", "qam:M, psk:M, apsk:R1/N1[/DEG],R2/N2[/DEG],... or hex:M"},
    {"constellation", "FILE", "points from FILE: lines 'x y [probability|-] [label]'"},
    {"snr-db", "X", "Es/N0 = E|x|^2/(2 sigma^2) in dB, sigma per quadrature"},
    {"sigma", "S", "noise standard deviation per quadrature (instead of --snr-db)"},
    {"iq-quantizer", "NAME", "product (one quantizer per quadrature, default) or polar"},
    {"cells", "K", "product: cells per axis (K >= 2)"},
    {"bits", "B", "product: bits per axis (2^B cells)"},
    {"thresholds", "T1,...", "product: in-phase thresholds (and quadrature unless --thresholds-q)"},
    {"thresholds-q", "T1,...", "product: quadrature thresholds"},
    {"separate-thresholds", NULL, "product: design the two axes' thresholds apart"},
    {"amplitude-cells", "A", "polar: amplitude rings (A >= 1)"},
    {"phase-cells", "P", "polar: phase sectors (P >= 1)"},
    {"amplitude-thresholds", "R1,...", "polar: ring radii (A - 1 values)"},
    {"phase-thresholds-deg", "D1,...", "polar: sector boundaries in degrees (P values)"},
    {"equal-sectors", NULL, "polar: keep the P sectors equal (design only their offset)"},
    {"phase-noise-deg", "S", "rms residual phase error in degrees (default 0)"},
    {"phase-noise-law", "NAME", "gauss (default) or tikhonov"},
    {"objective", "NAME", "mi (default) or gmi: what the cells are designed for"},
    {"uniform", NULL, "keep the uniform starting cells (no design)"},
    {"max-evaluations", "N", "most rate evaluations of the cell design (default 4000)"},
    {"search-labels", NULL, "search the labels (binary switching) even when given"},
    {"capacity", NULL, "also the certified capacity of each quantized channel"},
    {"compare", NULL, "rate both receivers: product (--cells/--bits) and polar"},
    {"matrix", NULL, "also print each receiver's transition matrix P(cell | point)"},
    {"json", NULL, "machine-readable JSON output"},
    {"output", "FILE", "write the result to FILE (complete or not at all)"},
    {NULL, NULL, NULL},
};

static void help(const cli_args *a)
{
    printf("usage: quantcap iq (--alphabet SPEC | --constellation FILE)\n"
           "                   (--snr-db X | --sigma S) [--iq-quantizer product|polar]\n"
           "                   [--cells K | --bits B | --thresholds T1,... [--thresholds-q ...]]\n"
           "                   [--amplitude-cells A --phase-cells P | --amplitude-thresholds\n"
           "                    R1,... --phase-thresholds-deg D1,...] [--equal-sectors]\n"
           "                   [--phase-noise-deg S [--phase-noise-law gauss|tikhonov]]\n"
           "                   [--objective mi|gmi] [--separate-thresholds] [--uniform]\n"
           "                   [--max-evaluations N] [--search-labels] [--capacity]\n"
           "                   [--compare] [--matrix] [--json] [--output FILE]\n\n"
           "A two-dimensional constellation in circular Gaussian noise (variance sigma^2\n"
           "per quadrature), optionally with a residual phase error, through one of two\n"
           "coherent receivers: the I/Q pair (product: one quantizer per quadrature,\n"
           "rectangular cells) or the polar quantizer (A amplitude rings x P phase\n"
           "sectors). Cell probabilities are exact for the I/Q pair (products of Gaussian\n"
           "CDF differences); with a phase error they are integrated over it by refined\n"
           "quadrature, and for polar cells they come from a Fourier series in the angle\n"
           "(without phase error, beyond about 33 sigma from the origin, from adaptive\n"
           "quadrature), all to 1e-13 per cell. Reported: MI under the constellation's\n"
           "law, BICM GMI and NGMI with its labels (Gray where they exist, else searched\n"
           "by binary switching), the certified capacity of the quantized channel with\n"
           "--capacity, and without phase noise the unquantized MI. Unless given, the\n"
           "cells are designed for the objective from the uniform cells (BFGS on the\n"
           "exact gradient, with or without phase error), stopping within 1e-10 bit\n"
           "of H(X), which no cells can pass; for the MI of an I/Q pair without phase\n"
           "error on points and a law that factor over the axes (square QAM), each\n"
           "axis by the 1-D MI-optimal design instead; where such a pair is searched\n"
           "by BFGS (the GMI, a phase error), once more from that design, kept if\n"
           "higher. --compare rates both receivers and names the one that keeps more\n"
           "rate. Details: docs/alphabets.md, docs/methods.md.\n\noptions:\n");
    cli_print_options(a, stdout);
}

typedef struct {
    qc_iq_kind kind;
    qc_iq_design_request req;
    qc_iq_design_result des;
    int given;          /* cells given, not designed */
    qc_iq_cells cells;  /* the cells rated */
    double *gi, *gq, *gr, *gp; /* given boundaries (owned) */
    qc_iq_rates rates;
    double quad_err;
    qc_dmc *matrix; /* kept with --matrix */
} receiver;

static void receiver_free(receiver *r)
{
    qc_iq_design_result_free(&r->des);
    qc_dmc_free(r->matrix);
    free(r->gi), free(r->gq), free(r->gr), free(r->gp);
}

/* Product settings from the flags. */
static int product_flags(const cli_args *a, receiver *r)
{
    int rc;
    const char *v;
    r->kind = r->req.kind = QC_IQ_PRODUCT;
    size_t k = 0;
    if ((v = cli_get(a, "cells")) && (rc = cli_size("cells", v, 2, 64, &k)))
        return rc;
    if ((v = cli_get(a, "bits"))) {
        size_t b;
        if (k)
            return cli_usage_error("iq: give --cells or --bits, not both");
        if ((rc = cli_size("bits", v, 1, 6, &b)))
            return rc;
        k = (size_t)1 << b;
    }
    if (cli_has(a, "thresholds")) {
        size_t n, nq;
        if (k)
            return cli_usage_error("iq: --thresholds set the cells; leave out --cells/--bits");
        if ((rc = cli_double_list("thresholds", cli_get(a, "thresholds"), &r->gi, &n)))
            return rc;
        nq = n;
        if (cli_has(a, "thresholds-q")) {
            if ((rc = cli_double_list("thresholds-q", cli_get(a, "thresholds-q"), &r->gq, &nq)))
                return rc;
        }
        r->given = 1;
        r->cells = (qc_iq_cells){QC_IQ_PRODUCT, r->gi, n, r->gq ? r->gq : r->gi, nq,
                                 NULL, 0, NULL, 0};
        return CLI_OK;
    }
    if (cli_has(a, "thresholds-q"))
        return cli_usage_error("iq: --thresholds-q goes with --thresholds");
    if (!k)
        return cli_usage_error("iq: the product receiver needs --cells K, --bits B or "
                               "--thresholds");
    r->req.cells_i = r->req.cells_q = k;
    r->req.separate = cli_has(a, "separate-thresholds");
    return CLI_OK;
}

static int polar_flags(const cli_args *a, receiver *r)
{
    int rc;
    const char *v;
    r->kind = r->req.kind = QC_IQ_POLAR;
    size_t na = 0, np = 0;
    if ((v = cli_get(a, "amplitude-cells")) && (rc = cli_size("amplitude-cells", v, 1, 256, &na)))
        return rc;
    if ((v = cli_get(a, "phase-cells")) && (rc = cli_size("phase-cells", v, 1, 1024, &np)))
        return rc;
    int gr = cli_has(a, "amplitude-thresholds"), gp = cli_has(a, "phase-thresholds-deg");
    if (gr != gp)
        return cli_usage_error("iq: --amplitude-thresholds and --phase-thresholds-deg go "
                               "together (the given polar cells)");
    if (gr) {
        size_t n, m;
        if (na || np)
            return cli_usage_error("iq: given polar thresholds set the cells; leave out "
                                   "--amplitude-cells/--phase-cells");
        if ((rc = cli_double_list("amplitude-thresholds", cli_get(a, "amplitude-thresholds"),
                                  &r->gr, &n)) ||
            (rc = cli_double_list("phase-thresholds-deg", cli_get(a, "phase-thresholds-deg"),
                                  &r->gp, &m)))
            return rc;
        for (size_t i = 0; i < m; i++)
            r->gp[i] *= PI / 180.0;
        r->given = 1;
        r->cells = (qc_iq_cells){QC_IQ_POLAR, NULL, 0, NULL, 0, r->gr, n, r->gp, m};
        return CLI_OK;
    }
    if (!na || !np)
        return cli_usage_error("iq: the polar receiver needs --amplitude-cells A and "
                               "--phase-cells P");
    if (na * np < 2)
        return cli_usage_error("iq: the polar receiver needs at least 2 cells (got 1 x 1)");
    r->req.amplitude_cells = na;
    r->req.phase_cells = np;
    r->req.fixed_phases = cli_has(a, "equal-sectors");
    return CLI_OK;
}

static int rate_receiver(const qc_plane *c, const qc_iq_noise *noise, qc_objective obj,
                         int uniform, int capacity, int keep, size_t max_evals, receiver *r)
{
    qc_status st;
    if (!r->given) {
        r->req.objective = obj;
        r->req.max_evaluations = max_evals;
        st = uniform ? qc_iq_uniform(c, noise, &r->req, &r->des)
                     : qc_iq_design(c, noise, &r->req, &r->des);
        if (st != QC_OK)
            return cli_lib_error(st);
        r->cells = r->des.cells;
    }
    qc_dmc *ch = NULL;
    if ((st = qc_iq_channel(c, noise, &r->cells, &ch, &r->quad_err)) != QC_OK)
        return cli_lib_error(st);
    st = qc_iq_rates_compute(c, ch, capacity, 0.0, &r->rates);
    if (keep)
        r->matrix = ch;
    else
        qc_dmc_free(ch);
    return st == QC_OK ? CLI_OK : cli_lib_error(st);
}

static void print_list(FILE *f, const char *name, const double *v, size_t n, double scale)
{
    fprintf(f, "  %-24s", name);
    for (size_t i = 0; i < n; i++)
        fprintf(f, "%s%.6g", i ? ", " : "", v[i] * scale);
    fprintf(f, "%s\n", n ? "" : "(none)");
}

static void print_receiver(FILE *f, const receiver *r, int capacity)
{
    const qc_iq_cells *q = &r->cells;
    const char *unit = "bit/complex symbol";
    if (r->kind == QC_IQ_PRODUCT)
        fprintf(f, "receiver     I/Q pair (product): %zu x %zu cells", q->nti + 1, q->ntq + 1);
    else
        fprintf(f, "receiver     polar: %zu amplitude x %zu phase cells", q->nradii + 1,
                q->nphases);
    if (r->given)
        fprintf(f, ", given\n");
    else if (r->des.evaluations <= 1 && !r->des.at_ceiling)
        fprintf(f, ", uniform (not designed)\n");
    else
        cli_print_iq_search(f,
                            &(cli_iq_search){qc_objective_name(r->req.objective),
                                             r->des.evaluations, r->des.per_axis,
                                             r->des.converged, r->des.at_ceiling,
                                             r->des.axis_start, r->des.start_bits,
                                             r->des.axis_start_bits},
                            unit);
    if (r->kind == QC_IQ_PRODUCT) {
        print_list(f, "in-phase thresholds", q->ti, q->nti, 1.0);
        print_list(f, "quadrature thresholds", q->tq, q->ntq, 1.0);
    } else {
        print_list(f, "amplitude thresholds", q->radii, q->nradii, 1.0);
        if (q->nphases > 1)
            print_list(f, "phase thresholds (deg)", q->phases, q->nphases, 180.0 / PI);
    }
    if (r->kind == QC_IQ_PRODUCT && r->quad_err == 0.0)
        fprintf(f, "MI           %.10f %s (exact: cell probabilities from the Gaussian "
                   "CDF)\n", r->rates.mi_bits, unit);
    else
        fprintf(f, "MI           %.10f %s (cell probabilities by quadrature, last "
                   "refinement changed them by at most %.1e; target %.0e)\n",
                r->rates.mi_bits, unit, r->quad_err, QC_IQ_QUAD_TOL);
    if (isfinite(r->rates.gmi_bits))
        fprintf(f, "GMI          %.10f %s (BICM, exact for the matrix), NGMI %.6f\n",
                r->rates.gmi_bits, unit, r->rates.ngmi);
    if (r->matrix) {
        fprintf(f, "matrix       P(cell | point), one row per point, cells in the order above\n");
        for (size_t x = 0; x < r->matrix->nx; x++) {
            fprintf(f, " ");
            for (size_t y = 0; y < r->matrix->ny; y++)
                fprintf(f, " %.6e", r->matrix->p[x * r->matrix->ny + y]);
            fprintf(f, "\n");
        }
    }
    if (capacity)
        fprintf(f, "capacity     %.10f %s (certified: upper bound %.10f, Blahut-Arimoto, %zu "
                   "iterations)\n",
                r->rates.capacity_bits, unit, r->rates.capacity_upper_bits,
                r->rates.capacity_iterations);
}

static json_t *receiver_json(const receiver *r, int capacity)
{
    const qc_iq_cells *q = &r->cells;
    json_t *o = json_object();
    json_object_set_new(o, "iq_quantizer", json_string(qc_iq_kind_name(r->kind)));
    json_object_set_new(o, "cells", json_integer((json_int_t)qc_iq_cell_count(q)));
    json_object_set_new(o, "design",
                        json_string(r->given                                        ? "given"
                                    : r->des.evaluations <= 1 && !r->des.at_ceiling ? "uniform"
                                                                                    : "designed"));
    if (!r->given) {
        json_object_set_new(o, "objective", json_string(qc_objective_name(r->req.objective)));
        json_object_set_new(o, "evaluations", json_integer((json_int_t)r->des.evaluations));
        json_object_set_new(o, "converged", json_boolean(r->des.converged));
        json_object_set_new(o, "search",
                            r->des.per_axis           ? json_string("per-axis")
                            : r->des.evaluations > 1 ? json_string("bfgs")
                                                     : json_null());
        json_object_set_new(o, "at_ceiling", json_boolean(r->des.at_ceiling));
        json_object_set_new(o, "start_bits", cli_json_real(r->des.start_bits));
        json_object_set_new(o, "axis_start",
                            r->des.axis_start == 2   ? json_string("kept")
                            : r->des.axis_start == 1 ? json_string("not higher")
                                                     : json_null());
        json_object_set_new(o, "axis_start_bits",
                            r->des.axis_start ? cli_json_real(r->des.axis_start_bits)
                                              : json_null());
    }
    if (r->kind == QC_IQ_PRODUCT) {
        json_object_set_new(o, "thresholds", cli_json_array(q->ti, q->nti));
        json_object_set_new(o, "thresholds_q", cli_json_array(q->tq, q->ntq));
    } else {
        json_object_set_new(o, "amplitude_cells", json_integer((json_int_t)q->nradii + 1));
        json_object_set_new(o, "phase_cells", json_integer((json_int_t)q->nphases));
        json_object_set_new(o, "amplitude_thresholds", cli_json_array(q->radii, q->nradii));
        double deg[QC_IQ_MAX_CELLS];
        for (size_t i = 0; i < q->nphases; i++)
            deg[i] = q->phases[i] * 180.0 / PI;
        json_object_set_new(o, "phase_thresholds_deg", cli_json_array(deg, q->nphases));
    }
    json_object_set_new(o, "mi_bits", cli_json_real(r->rates.mi_bits));
    json_object_set_new(o, "gmi_bits", cli_json_real(r->rates.gmi_bits));
    json_object_set_new(o, "ngmi", cli_json_real(r->rates.ngmi));
    json_object_set_new(o, "quadrature_error", cli_json_real(r->quad_err));
    if (capacity) {
        json_object_set_new(o, "capacity_bits", cli_json_real(r->rates.capacity_bits));
        json_object_set_new(o, "upper_bound_bits", cli_json_real(r->rates.capacity_upper_bits));
    }
    if (r->matrix) {
        json_t *m = json_array();
        for (size_t x = 0; x < r->matrix->nx; x++)
            json_array_append_new(m, cli_json_array(r->matrix->p + x * r->matrix->ny,
                                                    r->matrix->ny));
        json_object_set_new(o, "channel", m);
    }
    return o;
}

/* The constellation, labels, noise and phase error: the flags that are
 * settings keys, read by the settings layer. */
static int load_channel(const cli_args *a, qc_settings **set, const qc_plane **c,
                        qc_iq_noise *noise, double *snr_db)
{
    static const char *const keys[] = {"alphabet", "constellation", "snr-db", "sigma",
                                       "phase-noise-deg", "phase-noise-law", NULL};
    qc_status st = qc_settings_alloc(set);
    if (st != QC_OK)
        return cli_lib_error(st);
    if (cli_has(a, "alphabet") == cli_has(a, "constellation"))
        return cli_usage_error("iq: give one of --alphabet SPEC and --constellation FILE");
    if (cli_has(a, "snr-db") == cli_has(a, "sigma"))
        return cli_usage_error("iq: give one of --snr-db X and --sigma S");
    for (size_t i = 0; keys[i]; i++) {
        const char *v = cli_get(a, keys[i]);
        if (v && (st = qc_settings_set(*set, keys[i], v)) != QC_OK)
            return cli_usage_error("--%s: %s", keys[i], qc_last_error());
    }
    if ((st = qc_settings_plane_channel(*set, cli_has(a, "search-labels"), c, noise,
                                        snr_db)) != QC_OK)
        return qc_status_is_input_error(st) ? cli_usage_error("iq: %s", qc_last_error())
                                            : cli_lib_error(st);
    return CLI_OK;
}

int cmd_iq(int argc, char **argv)
{
    cli_args a;
    cli_args_init(&a, "iq", options);
    int rc = cli_parse(&a, argc, argv, 0);
    if (rc == CLI_HELP) {
        help(&a);
        return CLI_OK;
    }
    if (rc)
        return rc;
    const qc_plane *c = NULL;
    qc_settings *set = NULL;
    receiver rx[2];
    memset(rx, 0, sizeof rx);
    size_t nrx = 1;
    cli_sink sink = {0};
    const char *name = NULL, *v;
    qc_iq_noise noise = {0.0, 0.0, QC_PHASE_GAUSS};
    double snr_db = NAN, pn_deg = 0.0, label_cost = NAN;
    qc_objective obj = QC_OBJECTIVE_MI;
    qc_iq_kind kind = QC_IQ_PRODUCT;
    qc_status st;

    if ((v = cli_get(&a, "iq-quantizer")) && (st = qc_iq_kind_parse(v, &kind)) != QC_OK)
        return cli_lib_error(st);
    if ((v = cli_get(&a, "objective")) &&
        ((st = qc_objective_parse(v, &obj)) != QC_OK || obj == QC_OBJECTIVE_CAPACITY)) {
        if (st == QC_OK)
            return cli_usage_error("--objective: iq designs its cells for mi or gmi; "
                                   "--capacity adds the certified capacity");
        return cli_lib_error(st);
    }

    int compare = cli_has(&a, "compare");
    if (compare && cli_has(&a, "iq-quantizer"))
        return cli_usage_error("iq: --compare rates both receivers; leave out --iq-quantizer");
    int want_product = compare || kind == QC_IQ_PRODUCT;
    int want_polar = compare || kind == QC_IQ_POLAR;
    static const char *const product_only[] = {"cells", "bits", "thresholds", "thresholds-q",
                                               "separate-thresholds"};
    static const char *const polar_only[] = {"amplitude-cells", "phase-cells",
                                             "amplitude-thresholds", "phase-thresholds-deg",
                                             "equal-sectors"};
    for (size_t i = 0; i < 5; i++) {
        if (!want_product && cli_has(&a, product_only[i]))
            return cli_usage_error("--%s: applies to the product receiver (this run rates "
                                   "the polar one)", product_only[i]);
        if (!want_polar && cli_has(&a, polar_only[i]))
            return cli_usage_error("--%s: applies to the polar receiver (--iq-quantizer "
                                   "polar)", polar_only[i]);
    }
    if ((rc = load_channel(&a, &set, &c, &noise, &snr_db)))
        goto done;
    name = cli_has(&a, "alphabet") ? cli_get(&a, "alphabet") : cli_get(&a, "constellation");
    pn_deg = noise.phase_sd * 180.0 / PI;
    double es = qc_plane_energy(c);
    if (want_product && (rc = product_flags(&a, &rx[0])))
        goto done;
    if (want_polar && (rc = polar_flags(&a, &rx[compare ? 1 : 0])))
        goto done;
    nrx = compare ? 2 : 1;
    /* labels: given or Gray, else searched by the settings layer */
    if (c->labels)
        label_cost = qc_plane_label_cost(c, noise.sigma);
    if (obj == QC_OBJECTIVE_GMI && !c->labels) {
        rc = cli_usage_error("--objective gmi: the constellation has no labels (more than %d "
                             "points: none are searched)", MAX_SEARCH_LABELS);
        goto done;
    }
    int capacity = cli_has(&a, "capacity");
    size_t max_evals = 0;
    if ((v = cli_get(&a, "max-evaluations")) &&
        (rc = cli_size("max-evaluations", v, 1, 10000000, &max_evals)))
        goto done;
    for (size_t i = 0; i < nrx; i++)
        if ((rc = rate_receiver(c, &noise, obj, cli_has(&a, "uniform"), capacity,
                               cli_has(&a, "matrix"), max_evals, &rx[i])))
            goto done;
    double unq = NAN, unq_err = NAN;
    size_t gh_nodes = 0;
    if (noise.phase_sd == 0.0 && c->size <= MAX_SEARCH_LABELS &&
        (st = qc_iq_unquantized_mi(c, noise.sigma, 0, &unq, &unq_err, &gh_nodes)) != QC_OK) {
        rc = cli_lib_error(st);
        goto done;
    }
    const double better_by = compare ? rx[0].rates.mi_bits - rx[1].rates.mi_bits : 0.0;
    const char *better = !compare ? NULL : better_by > 0.0 ? "product" : better_by < 0.0 ? "polar" : "neither";
    if ((rc = cli_sink_open(&sink, cli_get(&a, "output"))))
        goto done;
    if (cli_has(&a, "json")) {
        json_t *o = json_object();
        json_object_set_new(o, cli_has(&a, "alphabet") ? "alphabet" : "constellation",
                            json_string(name));
        json_object_set_new(o, "points", json_integer((json_int_t)c->size));
        json_object_set_new(o, "average_power", cli_json_real(es));
        json_object_set_new(o, "entropy_bits", cli_json_real(rx[0].rates.entropy_bits));
        json_object_set_new(o, "labelling", c->labelling ? json_string(c->labelling) : json_null());
        json_object_set_new(o, "label_bits", json_integer((json_int_t)c->nbits));
        json_object_set_new(o, "label_cost", cli_json_real(label_cost));
        json_object_set_new(o, "snr_db", cli_json_real(snr_db));
        json_object_set_new(o, "sigma", cli_json_real(noise.sigma));
        json_object_set_new(o, "phase_noise_deg", cli_json_real(pn_deg));
        json_object_set_new(o, "phase_noise_law",
                            pn_deg > 0.0 ? json_string(qc_phase_law_name(noise.phase_law))
                                         : json_null());
        json_object_set_new(o, "unquantized_mi_bits", cli_json_real(unq));
        json_object_set_new(o, "unquantized_err_bits", cli_json_real(unq_err));
        json_object_set_new(o, "unquantized_nodes",
                            gh_nodes ? json_integer((json_int_t)gh_nodes) : json_null());
        json_object_set_new(o, "unquantized_method",
                            !isfinite(unq) ? json_null()
                            : gh_nodes     ? json_string("gauss-hermite")
                                           : json_string("per-axis"));
        json_t *arr = json_array();
        for (size_t i = 0; i < nrx; i++)
            json_array_append_new(arr, receiver_json(&rx[i], capacity));
        json_object_set_new(o, "receivers", arr);
        if (compare) {
            json_object_set_new(o, "better_receiver", json_string(better));
            json_object_set_new(o, "better_by_bits", cli_json_real(fabs(better_by)));
        }
        rc = cli_json_print(&sink, o);
    } else {
        FILE *f = sink.f;
        fprintf(f, "constellation %s: %zu points, %s law (H(X) = %.6f bit), E|x|^2 = %.6g\n",
                name, c->size, c->prob_given ? "given" : "uniform", rx[0].rates.entropy_bits,
                es);
        if (c->labels)
            fprintf(f, "labels       %s, %u bits (pairwise cost %.6g at this noise)\n",
                    c->labelling, c->nbits, label_cost);
        else
            fprintf(f, "labels       none (more than %d points: no search)\n",
                    MAX_SEARCH_LABELS);
        fprintf(f, "channel      circular Gaussian noise, Es/N0 %.4f dB (sigma %.6g per "
                   "quadrature)",
                snr_db, noise.sigma);
        if (pn_deg > 0.0)
            fprintf(f, ", phase error %s %.4g deg rms", qc_phase_law_name(noise.phase_law),
                    pn_deg);
        fprintf(f, "\n");
        if (isfinite(unq) && gh_nodes == 0)
            fprintf(f, "unquantized  MI %.9f bit/complex symbol (per axis, as the points and "
                       "law factor: adaptive quadrature, error estimate %.1e)\n",
                    unq, unq_err);
        else if (isfinite(unq))
            fprintf(f, "unquantized  MI %.9f bit/complex symbol (Gauss-Hermite %zu x %zu nodes; "
                       "change from %zu x %zu: %.1e)\n",
                    unq, gh_nodes, gh_nodes, gh_nodes / 2, gh_nodes / 2, unq_err);
        else
            fprintf(f, "unquantized  not computed (with phase noise)\n");
        for (size_t i = 0; i < nrx; i++) {
            fprintf(f, "\n");
            print_receiver(f, &rx[i], capacity);
            if (isfinite(unq))
                fprintf(f, "loss         %.6f bit/complex symbol of MI against the "
                           "unquantized receiver\n",
                        fmax(unq - rx[i].rates.mi_bits, 0.0)); /* as in `design` */
        }
        if (compare)
            fprintf(f, "\nkeeps more   %s, by %.6f bit/complex symbol of MI\n",
                    strcmp(better, "neither") == 0 ? "neither (equal MI)" : better,
                    fabs(better_by));
    }
done:
    rc = cli_sink_finish(&sink, rc);
    for (size_t i = 0; i < 2; i++)
        receiver_free(&rx[i]);
    qc_settings_free(set);
    return rc;
}

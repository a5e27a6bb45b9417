/* test_scenario.c — scenario files: valid files for every registered
 * model, each kind of error with its line, ranges, overrides, the grid
 * order and the hash. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "quantcap.h"

#include "test_helpers.h"

static qc_scenario *parse_ok(const char *text)
{
    qc_scenario *sc = NULL;
    qc_status st = qc_scenario_parse(text, strlen(text), "t.ini", &sc);
    if (st != QC_OK)
        fail_msg("unexpected failure: %s", qc_last_error());
    return sc;
}

static const char *const designer =
    "# invented test scenario\n"
    "[scenario]\n"
    "title = test\n"
    "\n"
    "[receiver]\n"
    "model = gauss\n"
    "\n"
    "[design]\n"
    "objective = mi\n"
    "\n"
    "[alphabet pam2]\n"
    "levels = -1,1\n"
    "[alphabet pam4]\n"
    "label = PAM-4\n"
    "levels = -3,-1,\n"
    "   1,3   # an indented line continues the value\n"
    "\n"
    "[sweep]\n"
    "snr-db = 0 to 20 step 5\n"
    "bits = 1 to 3 step 1\n"
    "\n"
    "[plots]\n"
    "format = png\n"
    "rate-vs-bits = 0, 10\n"
    "\n"
    "[density]\n"
    "alphabet = pam4\n"
    "snr-db = 10\n"
    "bits = 2\n";

static void test_valid_grid(void **state)
{
    (void)state;
    qc_scenario *sc = parse_ok(designer);
    assert_int_equal(qc_scenario_nalphabets(sc), 2);
    assert_string_equal(qc_scenario_alphabet(sc, 1), "pam4");
    assert_int_equal(qc_scenario_naxes(sc), 2);
    assert_int_equal(qc_scenario_axis_size(sc, 0), 5);
    assert_int_equal(qc_scenario_axis_size(sc, 1), 3);
    assert_string_equal(qc_scenario_axis_value(sc, 0, 4), "20");
    assert_int_equal(qc_scenario_npoints(sc), 2 * 5 * 3);
    assert_int_equal(qc_scenario_check(sc), QC_OK);
    /* grid order: alphabet, then axes in file order, last axis fastest */
    qc_settings *s;
    assert_int_equal(qc_scenario_point_settings(sc, 15 + 3 * 2 + 1, &s), QC_OK);
    assert_string_equal(qc_settings_get(s, "levels"), "-3,-1, 1,3");
    assert_string_equal(qc_settings_get(s, "snr-db"), "10");
    assert_string_equal(qc_settings_get(s, "bits"), "2");
    assert_string_equal(qc_settings_get(s, "objective"), "mi");
    qc_settings_free(s);
    assert_int_equal(qc_scenario_point_settings(sc, 30, &s), QC_EINVAL);
    assert_message("point 31 is outside the grid of 30 points"); /* numbered from 1 */
    assert_null(s);
    qc_scenario_free(sc);
}

/* A key that takes a list sweeps over whole lists separated by ';': tap
 * sets of a channel with memory, each point given one set. */
static void test_list_axis(void **state)
{
    (void)state;
    qc_scenario *sc = parse_ok("[receiver]\nmodel = gauss\nsigma = 0.3\nalphabet = pam:4\n"
                               "[sweep]\ntaps = 1, 0.5; 1, 0.2;0.8,0.4,0.2\nbits = 3, 4\n");
    assert_int_equal(qc_scenario_naxes(sc), 2);
    assert_int_equal(qc_scenario_axis_size(sc, 0), 3);
    assert_string_equal(qc_scenario_axis_value(sc, 0, 0), "1, 0.5");
    assert_string_equal(qc_scenario_axis_value(sc, 0, 2), "0.8,0.4,0.2");
    qc_settings *s;
    assert_int_equal(qc_scenario_point_settings(sc, 2 * 2 + 1, &s), QC_OK);
    assert_string_equal(qc_settings_get(s, "taps"), "0.8,0.4,0.2");
    assert_string_equal(qc_settings_get(s, "bits"), "4");
    qc_settings_free(s);
    qc_scenario_free(sc);
}

/* A scenario for every registered model, with its required parameters
 * set to a value inside their range: new models are covered as they land. */
static void test_every_model(void **state)
{
    (void)state;
    const qc_model_type *const *types = qc_model_types();
    size_t tested = 0;
    for (size_t t = 0; types[t]; t++) {
        if (types[t]->nparams == 0)
            continue; /* made from a file (table), not from settings */
        tested++;
        char text[2048];
        int n = snprintf(text, sizeof text, "[receiver]\nmodel = %s\n", types[t]->name);
        for (size_t i = 0; i < types[t]->nparams; i++) {
            const qc_param_spec *p = &types[t]->params[i];
            if (!isnan(p->default_value))
                continue;
            double v = isfinite(p->max) && isfinite(p->min) ? 0.5 * (p->min + p->max)
                       : isfinite(p->min)                   ? p->min + 1.0
                                                            : 1.0;
            n += snprintf(text + n, sizeof text - (size_t)n, "%s = %.17g\n", p->name, v);
        }
        snprintf(text + n, sizeof text - (size_t)n,
                 "levels = 0, 1\n[sweep]\nbits = 1, 2\n");
        qc_scenario *sc = parse_ok(text);
        if (qc_scenario_check(sc) != QC_OK)
            fail_msg("model %s: %s", types[t]->name, qc_last_error());
        assert_int_equal(qc_scenario_npoints(sc), 2);
        qc_scenario_free(sc);
    }
    assert_true(tested >= 1);
}

/* Alphabets by name and the physical front end are plain design keys. */
static void test_front_end_and_alphabets(void **state)
{
    (void)state;
    qc_scenario *sc = parse_ok("[receiver]\nmodel = apd-gauss\nresponsivity = 0.8\n"
                               "thermal-density = 10\nslot-time = 1e-10\nextinction-db = 10\n"
                               "[alphabet ook]\nalphabet = upam:2\n[alphabet pam4]\n"
                               "alphabet = upam:4\n[sweep]\napd-gain = 1, 10\n"
                               "received-dbm = -30 to -20 step 2\nbits = 2\n"
                               "[density]\nalphabet = pam4\nreceived-dbm = -24\n");
    assert_int_equal(qc_scenario_npoints(sc), 2 * 2 * 6 * 1);
    if (qc_scenario_check(sc) != QC_OK)
        fail_msg("front-end scenario: %s", qc_last_error());
    qc_settings *s;
    qc_model *m;
    qc_design_request req;
    assert_int_equal(qc_scenario_point_settings(sc, 12 + 6 + 3, &s), QC_OK);
    assert_string_equal(qc_settings_get(s, "alphabet"), "upam:4");
    assert_string_equal(qc_settings_get(s, "apd-gain"), "10");
    assert_string_equal(qc_settings_get(s, "received-dbm"), "-24");
    assert_int_equal(qc_settings_build(s, &m, &req), QC_OK);
    assert_int_equal(req.channel.nlevels, 4);
    qc_model_free(m);
    qc_settings_free(s);
    qc_scenario_free(sc);
    /* a missing front-end key is named, with the point */
    sc = parse_ok("[receiver]\nmodel = apd-gauss\nthermal-density = 10\nslot-time = 1e-10\n"
                  "alphabet = upam:2\nbits = 1\n[sweep]\nreceived-dbm = -30, -20\n");
    assert_int_equal(qc_scenario_check(sc), QC_EINVAL);
    assert_message("t.ini: point 1 (received-dbm = -30): 'responsivity' (A/W) is required");
    qc_scenario_free(sc);
    sc = parse_ok("[receiver]\nmodel = gauss\n[sweep]\nalphabet = pam:2, pam:4, qam:16\n"
                  "snr-db = 10\nbits = 3\n");
    assert_int_equal(qc_scenario_axis_size(sc, 0), 3); /* 'pam:4' is not a range */
    assert_string_equal(qc_scenario_axis_value(sc, 0, 2), "qam:16");
    if (qc_scenario_check(sc) != QC_OK)
        fail_msg("alphabet axis: %s", qc_last_error());
    qc_scenario_free(sc);
}

static void test_ranges(void **state)
{
    (void)state;
    /* step: FROM + k·STEP, written with 15 digits, ending on TO exactly */
    qc_scenario *sc = parse_ok("[receiver]\nmodel = gauss\nlevels = -1,1\n"
                               "[sweep]\nsnr-db = 0 to 1 step 0.1, 3\n"
                               "bits = 1 to 2 step 1, 4 to 6 count 3\n");
    assert_int_equal(qc_scenario_axis_size(sc, 0), 12);
    assert_string_equal(qc_scenario_axis_value(sc, 0, 3), "0.3"); /* not 0.30000000000000004 */
    assert_string_equal(qc_scenario_axis_value(sc, 0, 10), "1");
    assert_string_equal(qc_scenario_axis_value(sc, 0, 11), "3");
    assert_int_equal(qc_scenario_axis_size(sc, 1), 5); /* 1, 2, 4, 5, 6 */
    assert_string_equal(qc_scenario_axis_value(sc, 1, 1), "2");
    assert_string_equal(qc_scenario_axis_value(sc, 1, 2), "4");
    assert_string_equal(qc_scenario_axis_value(sc, 1, 4), "6");
    qc_scenario_free(sc);
    /* (35 − (−5))/0.1 is 399.99999999999994 in doubles: within 1e-9 of a
     * step, so 35 ends the range; the values near 0 are 0, not ±1e-15 */
    sc = parse_ok("[receiver]\nmodel = gauss\nlevels = -1,1\nbits = 2\n"
                  "[sweep]\nsnr-db = -5 to 35 step 0.1\n");
    assert_int_equal(qc_scenario_axis_size(sc, 0), 401);
    assert_string_equal(qc_scenario_axis_value(sc, 0, 0), "-5");
    assert_string_equal(qc_scenario_axis_value(sc, 0, 50), "0");
    assert_string_equal(qc_scenario_axis_value(sc, 0, 123), "7.3");
    assert_string_equal(qc_scenario_axis_value(sc, 0, 400), "35");
    qc_scenario_free(sc);
    /* count: N equally spaced values, both ends included */
    sc = parse_ok("[receiver]\nmodel = gauss\nlevels = -1,1\nbits = 2\n"
                  "[sweep]\nsnr-db = -1 to 1 count 5\nsigma = 1 to 2 count 4\n");
    assert_int_equal(qc_scenario_axis_size(sc, 0), 5);
    assert_string_equal(qc_scenario_axis_value(sc, 0, 0), "-1");
    assert_string_equal(qc_scenario_axis_value(sc, 0, 1), "-0.5");
    assert_string_equal(qc_scenario_axis_value(sc, 0, 2), "0");
    assert_string_equal(qc_scenario_axis_value(sc, 0, 4), "1");
    assert_int_equal(qc_scenario_axis_size(sc, 1), 4);
    assert_string_equal(qc_scenario_axis_value(sc, 1, 1), "1.33333333333333");
    assert_string_equal(qc_scenario_axis_value(sc, 1, 3), "2");
    qc_scenario_free(sc);
    /* the largest axis: 100000 values; a count over a range wider than
     * the largest double does not overflow */
    sc = parse_ok("[receiver]\nmodel = gauss\nlevels = -1,1\nbits = 2\n"
                  "[sweep]\nsnr-db = 0 to 9999.9 step 0.1\n");
    assert_int_equal(qc_scenario_axis_size(sc, 0), 100000);
    assert_string_equal(qc_scenario_axis_value(sc, 0, 99999), "9999.9");
    qc_scenario_free(sc);
    sc = parse_ok("[receiver]\nmodel = gauss\nlevels = -1,1\nbits = 2\n"
                  "[sweep]\nsigma = -1e308 to 1e308 count 3\n");
    assert_string_equal(qc_scenario_axis_value(sc, 0, 1), "0");
    assert_string_equal(qc_scenario_axis_value(sc, 0, 2), "1e+308");
    qc_scenario_free(sc);
    /* a file name with " to " in it is a file name, not a range */
    sc = parse_ok("[receiver]\nmodel = table\ntable = notes to self.txt\nlevels = 0,1\n"
                  "[sweep]\nbits = 1, 2\n");
    qc_scenario_free(sc);
}

typedef struct {
    const char *text;
    qc_status status;
    const char *message;
} error_case;

#define BASE "[receiver]\nmodel = gauss\nlevels = -1,1\n"

static const error_case errors[] = {
    {"[reciever]\nmodel = gauss\n", QC_EINVAL, "t.ini:1: unknown section [reciever]"},
    {BASE "sigmma = 1\n", QC_EINVAL, "t.ini:4: unknown key 'sigmma' in [receiver] (did you mean 'sigma'?)"},
    {BASE "sigma = abc\n", QC_EINVAL, "t.ini:4: 'sigma': 'abc' is not a decimal number"},
    {BASE "[design]\n\nbits = 0\n", QC_EINVAL,
     "t.ini:6: 'bits': '0' is not a whole number from 1 to 16"},
    {BASE "[sweep]\nbits = 0 to 8 step 1\n", QC_EINVAL,
     "t.ini:5: 'bits': '0' is not a whole number from 1 to 16"},
    {"[receiver]\nlevels = -1,1\n[sweep]\nbits = 1\n", QC_EINVAL,
     "t.ini:1: no 'model' given"},
    {BASE "model = gauss\n", QC_EINVAL, "t.ini:4: 'model' is already set at line 2"},
    {BASE "[design]\nlevels = 0,1\n", QC_EINVAL, "t.ini:5: 'levels' is already set at line 3"},
    {"model = gauss\n", QC_EINVAL, "t.ini:1: 'model' comes before any [section]"},
    {BASE "just words\n", QC_EFORMAT, "t.ini:4: expected 'key = value'"},
    {BASE "[alphabet]\n", QC_EINVAL, "t.ini:4: [alphabet] needs a name"},
    {BASE "[alphabet a.b]\n", QC_EINVAL, "t.ini:4: alphabet name 'a.b'"},
    {BASE "[sweep x]\n", QC_EINVAL, "t.ini:4: section [sweep] takes no name"},
    {BASE "[alphabet a]\nlabl = A\n", QC_EINVAL,
     "t.ini:5: unknown key 'labl' in [alphabet a] (did you mean 'label'?)"},
    {BASE "[sweep]\nlevels = 1,2\n", QC_EINVAL, "t.ini:5: 'levels' takes a list"},
    {BASE "[sweep]\ntaps = 1, 0.5; ; 1\n", QC_EINVAL, "t.ini:5: 'taps': list 2 is empty"},
    {BASE "[sweep]\ntaps = 1, 0.5; 1, nan\n", QC_EINVAL, "t.ini:5: 'taps':"},
    {BASE "bits = 2\n[sweep]\nbits = 1,2\n", QC_EINVAL,
     "t.ini:6: 'bits' is a sweep axis and is also set at line 4"},
    /* the range form of earlier versions, with the same values in ours */
    {BASE "[sweep]\nsnr-db = -5:1:35\n", QC_EINVAL,
     "t.ini:5: 'snr-db': the range form a:b:c is not accepted; write '-5 to 35 step 1'"},
    {BASE "[sweep]\nsnr-db = 10:-5:-5\n", QC_EINVAL, "write '-5 to 10 step 5'"},
    {BASE "[sweep]\nsnr-db = 1:2:6\n", QC_EINVAL, "write '1 to 5 step 2'"},
    {BASE "[sweep]\nsnr-db = 0:0:5\n", QC_EINVAL,
     "t.ini:5: 'snr-db': the range form a:b:c is not accepted; write 'FROM to TO step STEP'"},
    {BASE "[sweep]\nsnr-db = 3, 0:0.5:1\n", QC_EINVAL, "write '0 to 1 step 0.5'"},
    /* ranges of ours that do not hold */
    {BASE "[sweep]\nsnr-db = 0 to 5 step 0\n", QC_EINVAL,
     "t.ini:5: 'snr-db': the step of '0 to 5 step 0' must not be 0"},
    {BASE "[sweep]\nsnr-db = 0 to 5 step -1\n", QC_EINVAL,
     "t.ini:5: 'snr-db': the step of '0 to 5 step -1' must be > 0"},
    {BASE "[sweep]\nsnr-db = 5 to 0 step 1\n", QC_EINVAL,
     "t.ini:5: 'snr-db': '5 to 0 step 1' goes down; a range goes up from FROM to TO: write "
     "'0 to 5 step 1'"},
    {BASE "[sweep]\nsnr-db = 5 to 0 count 3\n", QC_EINVAL, "write '0 to 5 count 3'"},
    {BASE "[sweep]\nsnr-db = 5 to 5 step 1\n", QC_EINVAL,
     "t.ini:5: 'snr-db': '5 to 5 step 1' starts and ends at 5"},
    {BASE "[sweep]\nsnr-db = 0 to 10 step 3\n", QC_EINVAL,
     "t.ini:5: 'snr-db': '0 to 10 step 3' does not end on 10 (the steps give 9, then 12); "
     "write '0 to 9 step 3' or '0 to 12 step 3', or use 'count'"},
    {BASE "[sweep]\nsnr-db = 0 to 2 step 3\n", QC_EINVAL,
     "(the steps give 0, then 3); write '0 to 3 step 3', or use 'count'"},
    /* 1e-8 of a step off TO is past the landing tolerance (1e-9 of a step) */
    {BASE "[sweep]\nsnr-db = 0 to 1.00000001 step 0.1\n", QC_EINVAL, "does not end on"},
    {BASE "[sweep]\nsnr-db = 0 to 5 count 1\n", QC_EINVAL,
     "t.ini:5: 'snr-db': the count of '0 to 5 count 1' must be a whole number from 2 to "
     "100000 (got '1')"},
    {BASE "[sweep]\nsnr-db = 0 to 5 count 2.5\n", QC_EINVAL, "(got '2.5')"},
    {BASE "[sweep]\nsnr-db = 0 to 5\n", QC_EINVAL,
     "t.ini:5: 'snr-db': '0 to 5' is not a range; write 'FROM to TO step STEP' or 'FROM to TO "
     "count N'"},
    {BASE "[sweep]\nsnr-db = 0 to 5 by 1\n", QC_EINVAL, "'0 to 5 by 1' is not a range"},
    {BASE "[sweep]\nsnr-db = 0 step 1\n", QC_EINVAL, "'0 step 1' is not a range"},
    {BASE "[sweep]\nsnr-db = 0 to 5 step 1 2\n", QC_EINVAL, "is not a range"},
    {BASE "[sweep]\nsnr-db = x to 5 step 1\n", QC_EINVAL,
     "t.ini:5: 'snr-db': FROM of 'x to 5 step 1': 'x' is not a decimal number"},
    {BASE "[sweep]\nsnr-db = 0 to 1e400 step 1\n", QC_EINVAL,
     "t.ini:5: 'snr-db': TO of '0 to 1e400 step 1': '1e400' is not a finite number"},
    {BASE "[sweep]\nsnr-db = 0 to 5 step nan\n", QC_EINVAL,
     "t.ini:5: 'snr-db': the step of '0 to 5 step nan'"},
    {BASE "[sweep]\nbits = 1 to 4 step 0.5\n", QC_EINVAL,
     "t.ini:5: 'bits': '1.5' is not a whole number from 1 to 16"},
    /* a range belongs to a sweep axis */
    {BASE "snr-db = 0 to 5 step 1\n", QC_EINVAL,
     "t.ini:4: 'snr-db': a range ('0 to 5 step 1') is taken only by a [sweep] axis"},
    {BASE "[design]\nbits = 1, 2 to 3 step 1\n", QC_EINVAL,
     "t.ini:5: 'bits': a range ('1, 2 to 3 step 1') is taken only by a [sweep] axis"},
    {BASE "[sweep]\nsnr-db = 1, 2, 1.0\n", QC_EINVAL, "t.ini:5: 'snr-db': the value 1.0 appears twice"},
    {BASE "[sweep]\nsnr-db = 1,,2\n", QC_EINVAL, "t.ini:5: 'snr-db': value 2 is empty"},
    {BASE "[sweep]\nsnr-db = 0 to 10 step 1e-6\n", QC_EINVAL,
     "t.ini:5: 'snr-db': '0 to 10 step 1e-6' has more than 100000 values"},
    {BASE "[sweep]\nsnr-db = 0 to 1 count 100001\n", QC_EINVAL,
     "t.ini:5: 'snr-db': the count of '0 to 1 count 100001' must be a whole number from 2 to "
     "100000"},
    {BASE "[sweep]\nsnr-db = 0 to 1 count 60000, 2 to 3 count 60000\n", QC_EINVAL,
     "t.ini:5: 'snr-db': more than 100000 values"},
    {BASE "[sweep]\nsnr-db = 0 to 999 step 1\nbits = 1 to 16 step 1\nsigma = 1 to 999 step 1\n",
     QC_EINVAL, "more than 1000000"},
    {BASE "[sweep]\nquantizer = uniform, best\n", QC_EINVAL,
     "t.ini:5: 'quantizer': unknown value 'best'"},
    {BASE "[plots]\nformat = gif\n", QC_EINVAL, "t.ini:5: 'format': unknown value 'gif'"},
    {BASE "[plots]\nsize = 640\n", QC_EINVAL, "t.ini:5: 'size': '640' is not WIDTHxHEIGHT"},
    {BASE "[plots]\nsize = 10x10\n", QC_EINVAL, "t.ini:5: 'size'"},
    {BASE "[plots]\nformatt = svg\n", QC_EINVAL,
     "t.ini:5: unknown key 'formatt' in [plots] (did you mean 'format'?)"},
    {BASE "bits = 1\n[sweep]\nsnr-db = 0,5\n[plots]\nx = sigma\n", QC_EINVAL,
     "t.ini:8: 'x': 'sigma' is not a sweep axis"},
    {BASE "[sweep]\nsnr-db = 0,5\nbits = 1,2\n[plots]\nrate-vs-bits = 0, 7\n", QC_EINVAL,
     "t.ini:8: 'rate-vs-bits': 7 is not a value of the sweep axis 'snr-db' (0, 5)"},
    {BASE "bits = 1\n[sweep]\nsnr-db = 0,5\n[plots]\nrate-vs-bits = 0\n", QC_EINVAL,
     "no 'bits' (or 'cells') axis"},
    {BASE "[sweep]\nsnr-db = 0,5\n[density]\nalphabet = pam9\n", QC_EINVAL,
     "t.ini:7: 'alphabet': the scenario has no [alphabet pam9]"},
    {BASE "[sweep]\nsnr-db = 0,5\n[density]\nsnr-db = 3\n", QC_EINVAL,
     "t.ini:7: 'snr-db': 3 is not a value of the sweep axis 'snr-db'"},
    {BASE "[sweep]\nsnr-db = 0,5\n[density]\nbits = 3\n", QC_EINVAL,
     "t.ini:7: 'bits' in [density] is not a sweep axis"},
    {BASE "[scenario]\ntitel = x\n", QC_EINVAL, "(did you mean 'title'?)"},
};

static void test_errors(void **state)
{
    (void)state;
    for (size_t i = 0; i < sizeof errors / sizeof errors[0]; i++) {
        qc_scenario *sc = (qc_scenario *)&sc;
        qc_status st = qc_scenario_parse(errors[i].text, strlen(errors[i].text), "t.ini", &sc);
        if (st != errors[i].status)
            fail_msg("case %zu: status %d, expected %d (%s)", i, st, errors[i].status,
                     qc_last_error());
        assert_null(sc);
        if (!strstr(qc_last_error(), errors[i].message))
            fail_msg("case %zu: message '%s' lacks '%s'", i, qc_last_error(), errors[i].message);
    }
}

static void test_text_hazards(void **state)
{
    (void)state;
    qc_scenario *sc;
    const char nul[] = "[receiver]\nmodel = gauss\0\n";
    assert_int_equal(qc_scenario_parse(nul, sizeof nul - 1, "t.ini", &sc), QC_EFORMAT);
    assert_message("t.ini:2: NUL byte");
    char longline[400];
    memset(longline, 'x', sizeof longline);
    memcpy(longline, "[receiver]\nlevels = ", 20);
    longline[sizeof longline - 1] = '\n';
    assert_int_equal(qc_scenario_parse(longline, sizeof longline, "t.ini", &sc), QC_EFORMAT);
    assert_message("t.ini:2: line longer than");
    /* CRLF line ends and a byte-order mark are fine */
    const char crlf[] = "\xEF\xBB\xBF[receiver]\r\nmodel = gauss\r\nlevels = -1,1\r\n"
                        "[sweep]\r\nbits = 1,2\r\n";
    assert_int_equal(qc_scenario_parse(crlf, sizeof crlf - 1, "t.ini", &sc), QC_OK);
    assert_int_equal(qc_scenario_npoints(sc), 2);
    qc_scenario_free(sc);
    /* empty text: no model */
    assert_int_equal(qc_scenario_parse("", 0, "t.ini", &sc), QC_EINVAL);
    assert_message("no 'model' given");
    assert_int_equal(qc_scenario_read("/nonexistent/x.ini", &sc), QC_EIO);
    assert_message("/nonexistent/x.ini: cannot open");
}

static void test_check_names_point(void **state)
{
    (void)state;
    /* each value is fine alone; the combination is not */
    qc_scenario *sc = parse_ok(BASE "sigma = 1\nbits = 1\n[alphabet a]\n[sweep]\nsnr-db = 0, 3\n");
    assert_int_equal(qc_scenario_check(sc), QC_EINVAL);
    assert_message("t.ini:6: point 1 ([alphabet a], snr-db = 0): give 'sigma' or 'snr-db'");
    qc_scenario_free(sc);
    sc = parse_ok("[receiver]\nmodel = gauss\nsigma = 1\n[sweep]\nbits = 1\n");
    assert_int_equal(qc_scenario_check(sc), QC_EINVAL);
    assert_message("t.ini: point 1 (bits = 1): no levels given");
    qc_scenario_free(sc);
}

static void test_overrides(void **state)
{
    (void)state;
    qc_scenario *sc = parse_ok(designer);
    char hash[17];
    strcpy(hash, qc_scenario_hash(sc));
    /* a sweep axis takes the new values */
    assert_int_equal(qc_scenario_override(sc, "bits=1 to 8 step 1"), QC_OK);
    assert_int_equal(qc_scenario_axis_size(sc, 1), 8);
    assert_string_not_equal(qc_scenario_hash(sc), hash);
    /* an axis narrowed to one value keeps the density point valid */
    assert_int_equal(qc_scenario_override(sc, "snr-db=3"), QC_OK);
    assert_int_equal(qc_scenario_axis_size(sc, 0), 1);
    /* a key the alphabet sections set is what tells them apart: one value
     * for all is refused, the scenario left as it was */
    assert_int_equal(qc_scenario_override(sc, "levels=0,1"), QC_EINVAL);
    assert_message("--set levels=0,1: [alphabet pam2] and [alphabet pam4] each set 'levels'");
    qc_settings *s;
    assert_int_equal(qc_scenario_point_settings(sc, 9, &s), QC_OK);
    assert_string_equal(qc_settings_get(s, "levels"), "-3,-1, 1,3"); /* as the file has it */
    qc_settings_free(s);
    /* a base key the sections leave alone holds for every point */
    assert_int_equal(qc_scenario_override(sc, "tol=1e-10"), QC_OK);
    assert_int_equal(qc_scenario_point_settings(sc, 9, &s), QC_OK);
    assert_string_equal(qc_settings_get(s, "tol"), "1e-10");
    qc_settings_free(s);
    /* one section's key */
    assert_int_equal(qc_scenario_override(sc, "alphabet.pam4.levels=-2,2"), QC_OK);
    assert_int_equal(qc_scenario_point_settings(sc, 9, &s), QC_OK);
    assert_string_equal(qc_settings_get(s, "levels"), "-2,2");
    qc_settings_free(s);
    assert_int_equal(qc_scenario_override(sc, "plots.format=svg"), QC_OK);
    /* failures name the override and leave the scenario as it was */
    strcpy(hash, qc_scenario_hash(sc));
    size_t npoints = qc_scenario_npoints(sc);
    assert_int_equal(qc_scenario_override(sc, "bitz=3"), QC_EINVAL);
    assert_message("--set bitz=3: unknown key 'bitz' (did you mean 'bits'?)");
    assert_int_equal(qc_scenario_override(sc, "bits=0"), QC_EINVAL);
    assert_message("--set: 'bits': '0' is not a whole number from 1 to 16");
    assert_int_equal(qc_scenario_override(sc, "sweep.bits=1:1:4"), QC_EINVAL);
    assert_message("--set: 'bits': the range form a:b:c is not accepted; write '1 to 4 step 1'");
    assert_int_equal(qc_scenario_override(sc, "bits=4 to 1 step 1"), QC_EINVAL);
    assert_message("--set: 'bits': '4 to 1 step 1' goes down");
    assert_int_equal(qc_scenario_override(sc, "sigma=0.1 to 1 step 0.1"), QC_EINVAL);
    assert_message("--set: 'sigma': a range ('0.1 to 1 step 0.1') is taken only by a [sweep] "
                   "axis; use --set sweep.sigma=...");
    assert_int_equal(qc_scenario_override(sc, "alphabet.pam9.levels=1"), QC_EINVAL);
    assert_message("no [alphabet pam9]");
    assert_int_equal(qc_scenario_override(sc, "nosection.x=1"), QC_EINVAL);
    assert_message("unknown section 'nosection'");
    assert_int_equal(qc_scenario_override(sc, "novalue"), QC_EINVAL);
    assert_message("expected KEY=VALUE");
    assert_string_equal(qc_scenario_hash(sc), hash);
    assert_int_equal(qc_scenario_npoints(sc), npoints);
    qc_scenario_free(sc);
}

static void test_hash(void **state)
{
    (void)state;
    qc_scenario *a = parse_ok(BASE "[sweep]\nbits = 1,2\n");
    qc_scenario *b = parse_ok("# comment\n[receiver]\n  model=gauss   \nlevels = -1,1\n\n"
                              "[sweep]\nbits = 1 to 2 count 2\n[plots]\nformat = pdf\n"
                              "[scenario]\ntitle = other title\n");
    qc_scenario *c = parse_ok(BASE "[sweep]\nbits = 1,3\n");
    /* same points: same hash, whatever the comments, plots or title */
    assert_string_equal(qc_scenario_hash(a), qc_scenario_hash(b));
    assert_string_not_equal(qc_scenario_hash(a), qc_scenario_hash(c));
    assert_int_equal(strlen(qc_scenario_hash(a)), 16);
    qc_scenario_free(a);
    qc_scenario_free(b);
    qc_scenario_free(c);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_valid_grid),    cmocka_unit_test(test_list_axis),    cmocka_unit_test(test_every_model),
        cmocka_unit_test(test_front_end_and_alphabets),
        cmocka_unit_test(test_ranges),        cmocka_unit_test(test_errors),
        cmocka_unit_test(test_text_hazards),  cmocka_unit_test(test_check_names_point),
        cmocka_unit_test(test_overrides),     cmocka_unit_test(test_hash),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

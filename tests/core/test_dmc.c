/* test_dmc.c — the channel matrix type: checks and the text reader. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "quantcap.h"
#include "test_helpers.h"

static qc_status parse(const char *text, qc_dmc **d)
{
    return qc_dmc_parse(text, strlen(text), "m.txt", d);
}

static void test_parse_valid(void **state)
{
    (void)state;
    qc_dmc *d;
    assert_int_equal(parse("# BSC\n0.9, 0.1\n\n0.1 0.9 # row 2\n", &d), QC_OK);
    assert_int_equal(d->nx, 2);
    assert_int_equal(d->ny, 2);
    assert_true(d->p[1] == 0.1 && d->p[3] == 0.9);
    qc_dmc_free(d);
}

static void test_parse_crlf_and_tabs(void **state)
{
    (void)state;
    qc_dmc *d;
    assert_int_equal(parse("1\t0\r\n0.5,\t0.5\r\n", &d), QC_OK);
    assert_int_equal(d->nx, 2);
    qc_dmc_free(d);
}

static void expect_error(const char *text, qc_status want, const char *needle)
{
    qc_dmc *d = (qc_dmc *)0x1;
    qc_status st = parse(text, &d);
    assert_int_equal(st, want);
    assert_null(d);
    assert_message(needle);
}

static void test_parse_errors(void **state)
{
    (void)state;
    expect_error("", QC_EFORMAT, "m.txt: no matrix rows");
    expect_error("# only a comment\n\n", QC_EFORMAT, "no matrix rows");
    expect_error("0.5 0.5\n1\n", QC_EFORMAT, "m.txt:2: row has 1 entries, expected 2");
    expect_error("0.5 abc\n", QC_EFORMAT, "m.txt:1: field 2 'abc' is not a number");
    expect_error("0.5 0.5\nnan 1\n", QC_EFORMAT, "m.txt:2: field 1 'nan' is not a finite");
    expect_error("inf 0\n", QC_EFORMAT, "m.txt:1: field 1 'inf'");
    expect_error("1e999 0\n", QC_EFORMAT, "not a finite");
    expect_error("1.5 -0.5\n", QC_EFORMAT, "m.txt:1: field 2 is a negative probability");
    expect_error("0.5 0.4\n", QC_EFORMAT, "row 1 sums to 0.9");
    expect_error("0.5,,0.5\n", QC_EFORMAT, "m.txt:1: empty field");
    expect_error("0.5,0.5,\n", QC_EFORMAT, "trailing ','");
    expect_error("0.5 0.5x\n", QC_EFORMAT, "'0.5x' is not a number");
}

static void test_check(void **state)
{
    (void)state;
    qc_dmc *d;
    assert_int_equal(qc_dmc_alloc(2, 3, &d), QC_OK);
    assert_int_equal(qc_dmc_check(d), QC_EINVAL); /* rows of zeros */
    assert_non_null(strstr(qc_last_error(), "row 1 sums to 0"));
    d->p[0] = 1.0;
    d->p[3] = 0.5;
    d->p[4] = 0.5;
    assert_int_equal(qc_dmc_check(d), QC_OK);
    d->p[4] = NAN;
    assert_int_equal(qc_dmc_check(d), QC_EINVAL);
    assert_non_null(strstr(qc_last_error(), "row 2, column 2"));
    qc_dmc_free(d);
    qc_dmc_free(NULL);
    assert_int_equal(qc_dmc_alloc(0, 3, &d), QC_EINVAL);
    assert_int_equal(qc_dmc_alloc((size_t)1 << 40, 3, &d), QC_EINVAL);
}

static void test_read_errors(void **state)
{
    (void)state;
    qc_dmc *d;
    assert_int_equal(qc_dmc_read("/nonexistent/matrix.txt", &d), QC_EIO);
    assert_non_null(strstr(qc_last_error(), "/nonexistent/matrix.txt: cannot open"));
    assert_int_equal(qc_dmc_read("/", &d), QC_EIO);
    assert_non_null(strstr(qc_last_error(), "is a directory"));
}

/* A row wider than QC_DMC_MAX_DIM: the message that prefixes the file name
 * to the allocator's message must come out whole (it was garbled when
 * qc_fail formatted into the buffer it was reading). */
static void test_parse_too_wide(void **state)
{
    (void)state;
    size_t n = QC_DMC_MAX_DIM + 1, len = 2 * n;
    char *text = malloc(len + 1);
    assert_non_null(text);
    for (size_t i = 0; i < n; i++) {
        text[2 * i] = '0';
        text[2 * i + 1] = ' ';
    }
    text[len - 1] = '\n';
    text[len] = '\0';
    qc_dmc *d = (qc_dmc *)0x1;
    assert_int_equal(qc_dmc_parse(text, len, "m.txt", &d), QC_EFORMAT);
    assert_null(d);
    free(text);
    const char *want = "m.txt: channel size 1 x 16777217 exceeds the limit of "
                       "16777216 entries per side";
    if (strcmp(qc_last_error(), want) != 0)
        fail_msg("message '%s', expected '%s'", qc_last_error(), want);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_parse_valid),
        cmocka_unit_test(test_parse_crlf_and_tabs),
        cmocka_unit_test(test_parse_errors),
        cmocka_unit_test(test_parse_too_wide),
        cmocka_unit_test(test_check),
        cmocka_unit_test(test_read_errors),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

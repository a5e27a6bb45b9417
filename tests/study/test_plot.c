/* test_plot.c — the plots' error path: a fatal PLplot error in the middle
 * of a page returns through the plotting context, which frees what the
 * figure allocated, removes the unfinished page and lets go of the lock,
 * so that the next figure can be drawn. (Leaks are caught by the
 * sanitizer and valgrind builds, which run this test too.) */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <dirent.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "quantcap.h"
#include "study/plot.h"

/* PLplot's own fatal-error entry (exported by libplplot, declared only in
 * its private header): what PLplot calls when a driver fails. */
void plexit(const char *errormsg);

static const char scenario_text[] = "[receiver]\nmodel = gauss\nlevels = -1, 1\n"
                                    "[sweep]\nsnr-db = 0, 10\nbits = 1, 2\n";

static size_t files_in(const char *dir)
{
    DIR *d = opendir(dir);
    size_t n = 0;
    for (struct dirent *e; d && (e = readdir(d));)
        n += e->d_name[0] != '.';
    if (d)
        closedir(d);
    return n;
}

static void test_fatal_error_frees_and_discards(void **state)
{
    (void)state;
    char dir[] = "/tmp/qc-test-plot-XXXXXX";
    assert_non_null(mkdtemp(dir));
    qc_scenario *sc;
    assert_int_equal(qc_scenario_parse(scenario_text, strlen(scenario_text), "t.ini", &sc),
                     QC_OK);
    char **files = NULL, **notes = NULL;
    size_t nfiles = 0, nnotes = 0;
    char path[256];
    snprintf(path, sizeof path, "%s/figure.svg", dir);
    for (int round = 0; round < 2; round++) { /* the second: the lock was let go */
        plot_ctx *ctx = calloc(1, sizeof *ctx);
        assert_non_null(ctx);
        ctx->sc = sc;
        ctx->dir = dir;
        ctx->files = &files;
        ctx->nfiles = &nfiles;
        ctx->notes = &notes;
        ctx->nnotes = &nnotes;
        assert_int_equal(plot_ctx_begin(ctx), QC_OK);
        if (setjmp(ctx->escape) == 0) {
            assert_non_null(plot_alloc(ctx, 4096));
            assert_int_equal(qc_scenario_point_settings(sc, 0, &ctx->settings), QC_OK);
            assert_int_equal(plot_page_open(ctx, path, 400, 300), QC_OK);
            plexit("driver failed (test)");
            fail_msg("PLplot's exit handler returned instead of leaving the figure");
        }
        assert_non_null(strstr(ctx->message, "driver failed (test)"));
        plot_ctx_end(ctx);
        assert_null(ctx->page);
        assert_int_equal(ctx->nowned, 0);
        assert_null(ctx->settings);
        free(ctx);
        assert_int_equal(access(path, F_OK), -1);
        assert_int_equal(files_in(dir), 0); /* no temporary page left */
        assert_int_equal(nfiles, 0);
    }
    qc_scenario_free(sc);
    rmdir(dir);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_fatal_error_frees_and_discards),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

/* test_sweep.c — the sweep runner: checkpoint lines (torn last line,
 * damaged lines, another scenario), resuming without losing or repeating
 * a point, tables that do not depend on the number of threads, points
 * computed elsewhere and given back through an executor, and the
 * keys the plots read back out of a point's record. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "quantcap.h"
#include "study/checkpoint.h"
#include "study/report.h"

#include "test_helpers.h"

static char tmpdir[64];

static int setup(void **state)
{
    (void)state;
    snprintf(tmpdir, sizeof tmpdir, "/tmp/qc-test-sweep-XXXXXX");
    return mkdtemp(tmpdir) ? 0 : -1;
}

static int teardown(void **state)
{
    (void)state;
    char cmd[128];
    snprintf(cmd, sizeof cmd, "rm -rf '%s'", tmpdir);
    return system(cmd) == 0 ? 0 : -1;
}

static char *slurp(const char *path, size_t *len)
{
    FILE *f = fopen(path, "rb");
    if (!f)
        return NULL;
    fseek(f, 0, SEEK_END);
    long n = ftell(f);
    fseek(f, 0, SEEK_SET);
    char *buf = malloc((size_t)n + 1);
    if (buf && fread(buf, 1, (size_t)n, f) != (size_t)n) {
        free(buf);
        buf = NULL;
    }
    fclose(f);
    if (buf) {
        buf[n] = '\0';
        *len = (size_t)n;
    }
    return buf;
}

static void spit(const char *path, const char *text, size_t len)
{
    FILE *f = fopen(path, "wb");
    assert_non_null(f);
    assert_int_equal(fwrite(text, 1, len, f), len);
    fclose(f);
}

static json_t *record(size_t point)
{
    /* records count points from 1; `point` is the index */
    return json_pack("{s:I, s:s, s:n, s:{s:f}}", "point", (json_int_t)point + 1, "status", "ok",
                     "error", "result", "rate_bits", 0.25 * (double)point);
}

static void test_checkpoint_lines(void **state)
{
    (void)state;
    char path[128];
    snprintf(path, sizeof path, "%s/cp.jsonl", tmpdir);
    qc_checkpoint cp;
    assert_int_equal(qc_checkpoint_create(&cp, path, "00112233aabbccdd", 5), QC_OK);
    for (size_t i = 0; i < 3; i++) {
        json_t *r = record(i * 2 % 5); /* points 0, 2, 4 */
        assert_int_equal(qc_checkpoint_append(&cp, r), QC_OK);
        json_decref(r);
    }
    qc_checkpoint_close(&cp);
    size_t whole_len;
    char *whole = slurp(path, &whole_len);
    assert_non_null(whole);

    /* a kill while writing leaves part of a line: it is dropped and cut */
    char *torn = malloc(whole_len + 64);
    memcpy(torn, whole, whole_len);
    const char *part = "{\"point\":1,\"status\":\"ok\",\"err";
    memcpy(torn + whole_len, part, strlen(part));
    spit(path, torn, whole_len + strlen(part));
    json_t *recs[5] = {0};
    size_t found;
    assert_int_equal(qc_checkpoint_resume(&cp, path, "00112233aabbccdd", 5, recs, &found),
                     QC_OK);
    assert_int_equal(found, 3);
    assert_non_null(recs[0]);
    assert_null(recs[1]);
    assert_non_null(recs[4]);
    json_t *r = record(1);
    assert_int_equal(qc_checkpoint_append(&cp, r), QC_OK);
    json_decref(r);
    qc_checkpoint_close(&cp);
    for (size_t i = 0; i < 5; i++) {
        json_decref(recs[i]);
        recs[i] = NULL;
    }
    size_t len;
    char *after = slurp(path, &len);
    assert_int_equal(memcmp(after, whole, whole_len), 0); /* torn part gone */
    assert_non_null(strstr(after + whole_len, "\"point\":2,"));
    assert_int_equal(after[len - 1], '\n');
    free(after);

    /* a whole but damaged line at the end is also a torn write */
    memcpy(torn + whole_len, "{\"point\":\n", 10);
    spit(path, torn, whole_len + 10);
    assert_int_equal(qc_checkpoint_resume(&cp, path, "00112233aabbccdd", 5, recs, &found),
                     QC_OK);
    assert_int_equal(found, 3);
    qc_checkpoint_close(&cp);
    for (size_t i = 0; i < 5; i++) {
        json_decref(recs[i]);
        recs[i] = NULL;
    }

    /* a damaged line before the last is not: name the line */
    char *bad = malloc(whole_len + 64);
    const char *second_nl = strchr(strchr(whole, '\n') + 1, '\n');
    size_t head = (size_t)(second_nl - whole) + 1;
    memcpy(bad, whole, head);
    memcpy(bad + head, "garbage\n", 8);
    memcpy(bad + head + 8, whole + head, whole_len - head);
    spit(path, bad, whole_len + 8);
    assert_int_equal(qc_checkpoint_resume(&cp, path, "00112233aabbccdd", 5, recs, &found),
                     QC_EFORMAT);
    assert_message("cp.jsonl:3: not JSON");
    for (size_t i = 0; i < 5; i++)
        assert_null(recs[i]);

    /* another scenario's checkpoint */
    spit(path, whole, whole_len);
    assert_int_equal(qc_checkpoint_resume(&cp, path, "ffffffffffffffff", 5, recs, &found),
                     QC_EFORMAT);
    assert_message("cp.jsonl:1: this checkpoint belongs to another scenario");
    assert_int_equal(qc_checkpoint_resume(&cp, path, "00112233aabbccdd", 6, recs, &found),
                     QC_EFORMAT);

    /* a point outside the grid: points count from 1, so 0 and 6 of 5 */
    json_t *o = NULL;
    size_t p;
    assert_int_equal(qc_checkpoint_parse_line("{\"point\":6,\"status\":\"ok\"}", 25, 5, &o, &p),
                     QC_EFORMAT);
    assert_null(o);
    assert_int_equal(qc_checkpoint_parse_line("{\"point\":0,\"status\":\"ok\"}", 25, 5, &o, &p),
                     QC_EFORMAT);
    assert_null(o);
    assert_int_equal(qc_checkpoint_parse_line("{\"point\":5,\"status\":\"ok\"}", 25, 5, &o, &p),
                     QC_OK);
    assert_int_equal(p, 4);
    json_decref(o);

    /* no file yet: a new checkpoint */
    unlink(path);
    assert_int_equal(qc_checkpoint_resume(&cp, path, "00112233aabbccdd", 5, recs, &found),
                     QC_OK);
    assert_int_equal(found, 0);
    qc_checkpoint_close(&cp);
    free(whole);
    free(torn);
    free(bad);
}

static const char scenario_text[] = "[scenario]\ntitle = sweep test (invented)\n"
                                    "[receiver]\nmodel = gauss\n"
                                    "[alphabet pam2]\nlevels = -1,1\n"
                                    "[alphabet pam4]\nlevels = -3,-1,1,3\n"
                                    "[sweep]\nsnr-db = 0 to 12 step 4\nbits = 1 to 3 step 1\n";

static void run(const qc_scenario *sc, const char *dir, unsigned jobs, int resume,
                qc_sweep_summary *sum)
{
    qc_sweep_options opt;
    qc_sweep_options_default(&opt);
    opt.out_dir = dir;
    opt.jobs = jobs;
    opt.resume = resume;
    opt.plots = 0;
    if (qc_sweep_run(sc, &opt, sum) != QC_OK)
        fail_msg("sweep failed: %s", qc_last_error());
}

static void assert_same_file(const char *a, const char *b)
{
    size_t la, lb;
    char *ta = slurp(a, &la), *tb = slurp(b, &lb);
    assert_non_null(ta);
    assert_non_null(tb);
    if (la != lb || memcmp(ta, tb, la) != 0)
        fail_msg("%s and %s differ", a, b);
    free(ta);
    free(tb);
}

static size_t count_lines(const char *text)
{
    size_t n = 0;
    for (; *text; text++)
        n += *text == '\n';
    return n;
}

static void test_threads_and_resume(void **state)
{
    (void)state;
    qc_scenario *sc;
    assert_int_equal(qc_scenario_parse(scenario_text, sizeof scenario_text - 1, "s.ini", &sc),
                     QC_OK);
    size_t n = qc_scenario_npoints(sc);
    assert_int_equal(n, 2 * 4 * 3);
    char d1[128], d2[128], d3[128], a[160], b[160];
    snprintf(d1, sizeof d1, "%s/one", tmpdir);
    snprintf(d2, sizeof d2, "%s/two", tmpdir);
    snprintf(d3, sizeof d3, "%s/resumed/deeper", tmpdir);
    qc_sweep_summary s1, s2, s3;
    run(sc, d1, 1, 0, &s1);
    run(sc, d2, 2, 0, &s2);
    assert_int_equal(s1.points, n);
    assert_int_equal(s1.computed, n);
    assert_int_equal(s1.nfiles, 2);
    const char *names[] = {"results.csv", "results.json"};
    for (int f = 0; f < 2; f++) {
        snprintf(a, sizeof a, "%s/%s", d1, names[f]);
        snprintf(b, sizeof b, "%s/%s", d2, names[f]);
        assert_same_file(a, b); /* --jobs 1 and --jobs 2: the same bytes */
    }
    size_t len;
    snprintf(a, sizeof a, "%s/results.csv", d1);
    char *csv = slurp(a, &len);
    assert_int_equal(count_lines(csv), n + 1); /* header + one row per point */
    assert_true(strncmp(csv, "point,alphabet,snr_db,bits,status,error,", 40) == 0);
    free(csv);

    /* interrupted: keep the header and every third point, add a torn line */
    run(sc, d3, 2, 0, &s3);
    qc_sweep_summary_clear(&s3);
    snprintf(a, sizeof a, "%s/checkpoint.jsonl", d3);
    char *cp = slurp(a, &len);
    char *kept = calloc(len + 64, 1);
    size_t k = 0, line = 0, kept_points = 0;
    for (char *p = cp; *p;) {
        char *nl = strchr(p, '\n');
        size_t l = (size_t)(nl - p) + 1;
        if (line == 0 || line % 3 == 0) {
            memcpy(kept + k, p, l);
            k += l;
            kept_points += line > 0;
        }
        line++;
        p += l;
    }
    memcpy(kept + k, "{\"point\":3,\"sta", 15);
    spit(a, kept, k + 15);
    run(sc, d3, 2, 1, &s3);
    assert_int_equal(s3.resumed, kept_points);
    assert_int_equal(s3.computed, n - kept_points);
    for (int f = 0; f < 2; f++) {
        snprintf(a, sizeof a, "%s/%s", d1, names[f]);
        snprintf(b, sizeof b, "%s/%s", d3, names[f]);
        assert_same_file(a, b);
    }
    /* the checkpoint holds every point exactly once */
    snprintf(a, sizeof a, "%s/checkpoint.jsonl", d3);
    char *full = slurp(a, &len);
    assert_int_equal(count_lines(full), n + 1);
    int *seen = calloc(n, sizeof *seen);
    for (char *p = strchr(full, '\n') + 1; *p; p = strchr(p, '\n') + 1) {
        json_t *o;
        size_t point;
        assert_int_equal(qc_checkpoint_parse_line(p, (size_t)(strchr(p, '\n') - p), n, &o,
                                                  &point),
                         QC_OK);
        json_decref(o);
        seen[point]++;
    }
    for (size_t i = 0; i < n; i++)
        assert_int_equal(seen[i], 1);
    qc_sweep_summary_clear(&s3);
    /* resuming a finished sweep computes nothing */
    run(sc, d3, 2, 1, &s3);
    assert_int_equal(s3.computed, 0);
    assert_int_equal(s3.resumed, n);

    free(seen);
    free(full);
    free(cp);
    free(kept);
    qc_sweep_summary_clear(&s1);
    qc_sweep_summary_clear(&s2);
    qc_sweep_summary_clear(&s3);
    qc_scenario_free(sc);
}

/* An executor standing in for other processes: computes the points with a
 * qc_sweep_worker, last first, and gives them back as text; `mode` breaks
 * it on purpose. */
enum { GOOD, WRONG_POINT, SKIP_ONE, OWN_FAILURE };
typedef struct {
    const qc_scenario *sc;
    int mode;
    size_t calls;
} fake_executor;

static qc_status fake_execute(void *user, const size_t *todo, size_t ntodo,
                              const size_t *setting, qc_sweep_deliver_fn deliver, void *ctx,
                              char *msg, size_t cap)
{
    fake_executor *fx = user;
    fx->calls++;
    assert_non_null(setting); /* every point's model setting */
    if (fx->mode == OWN_FAILURE) {
        snprintf(msg, cap, "the link to the other processes broke");
        return QC_EIO;
    }
    qc_sweep_worker *w;
    assert_int_equal(qc_sweep_worker_alloc(fx->sc, &w), QC_OK);
    for (size_t t = ntodo; t-- > 0;) {
        if (fx->mode == SKIP_ONE && t == 0)
            continue;
        char *text;
        size_t index = todo[t];
        assert_int_equal(qc_sweep_worker_run(w, fx->mode == WRONG_POINT ? (index + 1) % ntodo
                                                                         : index, &text),
                         QC_OK);
        qc_status st = deliver(ctx, index, text);
        free(text);
        if (st != QC_OK)
            break;
    }
    char *text;
    assert_int_equal(qc_sweep_worker_run(w, qc_scenario_npoints(fx->sc), &text), QC_EINVAL);
    assert_null(text);
    qc_sweep_worker_free(w);
    return QC_OK;
}

/* The points computed elsewhere and given back as text, in any order,
 * make the same bytes as --jobs 1 (checkpoint included: a finished one is
 * in grid order); a record of the wrong point, a point never given back
 * and the executor's own failure stop the sweep with no table. */
static void test_executor(void **state)
{
    (void)state;
    qc_scenario *sc;
    assert_int_equal(qc_scenario_parse(scenario_text, sizeof scenario_text - 1, "s.ini", &sc),
                     QC_OK);
    size_t n = qc_scenario_npoints(sc);
    char d1[128], d2[128], dx[128], a[160], b[160];
    snprintf(d1, sizeof d1, "%s/x-one", tmpdir);
    snprintf(d2, sizeof d2, "%s/x-two", tmpdir);
    qc_sweep_summary s1, s2;
    run(sc, d1, 1, 0, &s1);
    run(sc, d2, 2, 0, &s2);
    const char *names[] = {"results.csv", "results.json", "checkpoint.jsonl"};
    for (int f = 0; f < 3; f++) { /* the checkpoint too, on any thread count */
        snprintf(a, sizeof a, "%s/%s", d1, names[f]);
        snprintf(b, sizeof b, "%s/%s", d2, names[f]);
        assert_same_file(a, b);
    }
    for (int mode = GOOD; mode <= OWN_FAILURE; mode++) {
        snprintf(dx, sizeof dx, "%s/x-mode%d", tmpdir, mode);
        fake_executor fx = {.sc = sc, .mode = mode};
        qc_sweep_options opt;
        qc_sweep_options_default(&opt);
        opt.out_dir = dx;
        opt.plots = 0;
        opt.execute = fake_execute;
        opt.execute_user = &fx;
        qc_sweep_summary sx;
        qc_status st = qc_sweep_run(sc, &opt, &sx);
        assert_int_equal(fx.calls, 1);
        snprintf(b, sizeof b, "%s/results.csv", dx);
        if (mode == GOOD) {
            assert_int_equal(st, QC_OK);
            assert_int_equal(sx.computed, n);
            for (int f = 0; f < 3; f++) {
                snprintf(a, sizeof a, "%s/%s", d1, names[f]);
                snprintf(b, sizeof b, "%s/%s", dx, names[f]);
                assert_same_file(a, b);
            }
        } else if (mode == WRONG_POINT) {
            assert_int_equal(st, QC_EFORMAT);
            assert_message("the record given back for point 24 is not that point's record");
            assert_int_equal(access(b, F_OK), -1);
        } else if (mode == SKIP_ONE) {
            assert_int_equal(st, QC_EIO);
            assert_message("point 1 was never given back");
            assert_int_equal(access(b, F_OK), -1);
            assert_int_equal(sx.computed, n - 1); /* the others are checkpointed */
        } else {
            assert_int_equal(st, QC_EIO);
            assert_message("the link to the other processes broke");
            assert_int_equal(access(b, F_OK), -1);
        }
        qc_sweep_summary_clear(&sx);
    }
    qc_sweep_summary_clear(&s1);
    qc_sweep_summary_clear(&s2);
    qc_scenario_free(sc);
}

static void test_input_errors_stop_early(void **state)
{
    (void)state;
    const char text[] = "[receiver]\nmodel = gauss\nsigma = 1\nlevels = -1,1\n"
                        "[sweep]\nsnr-db = 0, 3\nbits = 1\n";
    qc_scenario *sc;
    assert_int_equal(qc_scenario_parse(text, sizeof text - 1, "e.ini", &sc), QC_OK);
    char dir[128];
    snprintf(dir, sizeof dir, "%s/never", tmpdir);
    qc_sweep_options opt;
    qc_sweep_options_default(&opt);
    opt.out_dir = dir;
    qc_sweep_summary sum;
    assert_int_equal(qc_sweep_run(sc, &opt, &sum), QC_EINVAL);
    assert_message("e.ini: point 1 (snr-db = 0, bits = 1): give 'sigma' or 'snr-db'");
    assert_int_equal(access(dir, F_OK), -1); /* nothing written */
    qc_scenario_free(sc);
}

/* A request the design rejects (a law that does not sum to 1 passes the
 * settings, which only count its values) is the scenario's error: the
 * sweep stops naming the point and writes no table. */
static void test_rejected_request_stops(void **state)
{
    (void)state;
    const char good[] = "[receiver]\nmodel = gauss\nlevels = -1,1\nbits = 1\n"
                        "quantizer = uniform\nprobabilities = 0.5, 0.6\n"
                        "[sweep]\nsnr-db = 0, 3\n";
    qc_scenario *sc;
    assert_int_equal(qc_scenario_parse(good, sizeof good - 1, "p.ini", &sc), QC_OK);
    /* the check before any work already refuses it, as the run does */
    assert_int_equal(qc_scenario_check(sc), QC_EINVAL);
    assert_message("p.ini: point 1 (snr-db = 0): ");
    char dir[128], path[160];
    snprintf(dir, sizeof dir, "%s/rejected", tmpdir);
    qc_sweep_options opt;
    qc_sweep_options_default(&opt);
    opt.out_dir = dir;
    opt.jobs = 1;
    opt.plots = 0;
    qc_sweep_summary sum;
    assert_int_equal(qc_sweep_run(sc, &opt, &sum), QC_EINVAL);
    assert_message("p.ini: point 1 (snr-db = 0): ");
    snprintf(path, sizeof path, "%s/results.csv", dir);
    assert_int_equal(access(path, F_OK), -1);
    qc_sweep_summary_clear(&sum);
    qc_scenario_free(sc);
}

/* Every key the plots read out of a point's result is one the design
 * report writes: a key renamed or dropped in the report would otherwise
 * leave a figure silently empty. */
static void test_plotted_keys_in_report(void **state)
{
    (void)state;
    static const char *const kv[] = {"model", "gauss", "snr-db", "10", "levels", "-1,1",
                                     "bits", "1"};
    qc_settings *s;
    qc_model *m = NULL;
    qc_design_request req;
    qc_design_result res = {0};
    assert_int_equal(qc_settings_alloc(&s), QC_OK);
    for (size_t i = 0; i + 1 < sizeof kv / sizeof kv[0]; i += 2)
        assert_int_equal(qc_settings_set(s, kv[i], kv[i + 1]), QC_OK);
    assert_int_equal(qc_settings_build(s, &m, &req), QC_OK);
    assert_int_equal(qc_design(&req, &res), QC_OK);
    char *text = NULL;
    assert_int_equal(qc_design_report_json(&req, &res, &text), QC_OK);
    json_t *report = json_loads(text, 0, NULL);
    assert_non_null(report);
    static const char *const plotted[] = QC_REPORT_PLOTTED_KEYS;
    for (size_t i = 0; plotted[i]; i++)
        if (!json_object_get(report, plotted[i]))
            fail_msg("the plots read '%s', which the design report lacks", plotted[i]);
    /* and the numbers the rate figures draw are numbers */
    assert_true(json_is_number(json_object_get(report, QC_REPORT_RATE)));
    assert_true(json_is_number(json_object_get(report, QC_REPORT_UNQUANTIZED)));
    assert_int_equal(json_array_size(json_object_get(report, QC_REPORT_LEVELS)), 2);
    json_decref(report);
    free(text);
    qc_design_result_clear(&res);
    qc_model_free(m);
    qc_settings_free(s);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_checkpoint_lines),
        cmocka_unit_test(test_threads_and_resume),
        cmocka_unit_test(test_executor),
        cmocka_unit_test(test_input_errors_stop_early),
        cmocka_unit_test(test_rejected_request_stops),
        cmocka_unit_test(test_plotted_keys_in_report),
    };
    return cmocka_run_group_tests(tests, setup, teardown);
}

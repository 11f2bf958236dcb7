/* test_render.c - the machine renderers and baselines (src/report/
 * render_json.c, render_sarif.c, baseline.c) on sinks filled by hand:
 * escaping, which diagnostics are shown, URIs, and the baseline's matching
 * and its reader on odd input. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "../../src/report/render.h"

typedef struct fixture {
    kn_arena *a;
    kn_sink *s;
    jmp_buf oom;
} fixture;

static int setup(void **state)
{
    fixture *f = calloc(1, sizeof *f);
    f->a = kn_arena_new();
    kn_arena_set_oom(f->a, &f->oom);
    f->s = kn_sink_new(f->a);
    *state = f;
    return 0;
}

static int teardown(void **state)
{
    fixture *f = *state;
    kn_arena_free(f->a);
    free(f);
    return 0;
}

static kn_diag *push(fixture *f, const char *file, uint32_t line, const char *subject, const char *msg)
{
    kn_pos p = {file, line, 3, 0};
    return kn_diag_push(f->s, KN_R_AFTER_MOMENT, &p, subject, "%s", msg);
}

typedef void (*render_fn)(FILE *, const kn_sink *, const kn_render_opts *);

static char *render(render_fn fn, fixture *f, bool show_waived)
{
    char *buf = NULL;
    size_t len = 0;
    FILE *out = open_memstream(&buf, &len);
    assert_non_null(out);
    kn_render_opts o = {false, false, show_waived, 1, NULL};
    fn(out, f->s, &o);
    fclose(out);
    return buf;
}

static void json_escapes_every_string(void **state)
{
    fixture *f = *state;
    kn_diag *d = push(f, "odd\x01name.yaml", 4, "col\"umn\t", "bad byte \xff and \\ here");
    kn_diag_note(f->s, d, NULL, "note with \x1b escape");
    kn_sink_finish(f->s, NULL);
    char *out = render(kn_render_json, f, false);
    assert_non_null(strstr(out, "\"file\": \"odd\\u0001name.yaml\""));
    assert_non_null(strstr(out, "\"subject\": \"col\\\"umn\\t\""));
    assert_non_null(strstr(out, "\"message\": \"bad byte \\ufffd and \\\\ here\""));
    assert_non_null(strstr(out, "\"message\": \"note with \\u001b escape\""));
    /* A note without a position keeps the diagnostic's file and line 0. */
    assert_non_null(strstr(out, "\"line\": 0"));
    free(out);
}

static void json_leaves_out_baselined_and_waived(void **state)
{
    fixture *f = *state;
    push(f, "a.yaml", 1, "shown", "one");
    push(f, "a.yaml", 2, "hidden", "two");
    push(f, "a.yaml", 3, "waived", "three");
    kn_sink_finish(f->s, NULL);
    size_t n;
    kn_diag **all = kn_sink_diags(f->s, &n);
    assert_int_equal(n, 3);
    all[1]->baselined = true;
    all[2]->waived = true;
    char *out = render(kn_render_json, f, false);
    assert_non_null(strstr(out, "\"shown\""));
    assert_null(strstr(out, "\"hidden\""));
    assert_null(strstr(out, "\"waived\"\n"));
    assert_null(strstr(out, "\"subject\": \"waived\""));
    assert_non_null(strstr(out, "\"baselined\": 1"));
    assert_non_null(strstr(out, "\"waived\": 1"));
    assert_non_null(strstr(out, "\"errors\": 1"));
    free(out);
    out = render(kn_render_json, f, true);
    assert_non_null(strstr(out, "\"subject\": \"waived\""));
    assert_non_null(strstr(out, "\"waived\": true"));
    free(out);
    out = render(kn_render_sarif, f, true);
    assert_non_null(strstr(out, "\"suppressions\": [{\"kind\": \"inSource\"}]"));
    free(out);
}

static void sarif_uris_are_relative_and_encoded(void **state)
{
    fixture *f = *state;
    push(f, "./team a/c:d%.yaml", 7, "x", "m");
    push(f, "/abs/path.yaml", 0, "y", "whole file");
    kn_diag *d = push(f, "b.yaml", 9, "z", "with a note in compiled-in text");
    kn_pos builtin = {"(built-in rules/default.yaml)", 12, 3, 0};
    kn_diag_note(f->s, d, &builtin, "the rule that asks for it");
    kn_sink_finish(f->s, NULL);
    char *out = render(kn_render_sarif, f, false);
    assert_non_null(strstr(out, "\"uri\": \"team%20a/c%3Ad%25.yaml\""));
    assert_non_null(strstr(out, "\"uri\": \"file:///abs/path.yaml\""));
    assert_non_null(strstr(out, "\"region\": {\"startLine\": 7, \"startColumn\": 3}"));
    /* Line 0 means the whole file: no region at all. */
    assert_null(strstr(out, "\"startLine\": 0"));
    assert_non_null(strstr(out, "\"columnKind\": \"unicodeCodePoints\""));
    /* Text compiled into knowable has no file to point at: message only. */
    assert_null(strstr(out, "built-in"));
    assert_non_null(strstr(out, "\"message\": {\"text\": \"the rule that asks for it\"}"));
    free(out);
}

static void sarif_lists_every_rule_once(void **state)
{
    fixture *f = *state;
    kn_sink_finish(f->s, NULL);
    char *out = render(kn_render_sarif, f, false);
    for (size_t r = 0; r < KN_RULE_COUNT; r++) {
        char needle[128];
        snprintf(needle, sizeof needle, "\"id\": \"%s\",", kn_rule_get((kn_rule)r)->id);
        char *at = strstr(out, needle);
        assert_non_null(at);
        assert_null(strstr(at + 1, needle));
    }
    assert_non_null(strstr(out, "\"results\": []"));
    free(out);
}

static char *temp_file(const char *text)
{
    static char path[64];
    strcpy(path, "/tmp/knowable-test-baseline-XXXXXX");
    int fd = mkstemp(path);
    assert_true(fd >= 0);
    FILE *f = fdopen(fd, "w");
    fputs(text, f);
    fclose(f);
    return path;
}

static void baseline_matches_each_recorded_copy_once(void **state)
{
    fixture *f = *state;
    /* Three findings with one fingerprint (same rule, file, subject, key at
     * different lines); the baseline recorded two of them. */
    for (uint32_t line = 1; line <= 3; line++) {
        push(f, "a.yaml", line * 10, "same", "same message");
    }
    push(f, "a.yaml", 50, "other", "other message");
    kn_sink_finish(f->s, NULL);
    size_t n;
    kn_diag **all = kn_sink_diags(f->s, &n);
    assert_int_equal(n, 4);
    assert_true(all[0]->fingerprint == all[1]->fingerprint && all[1]->fingerprint == all[2]->fingerprint);
    char text[256];
    snprintf(text, sizeof text,
             "{\"knowable_baseline\": 2, \"findings\": [{\"fingerprint\": \"%016llx\"}, {\"fingerprint\": "
             "\"%016llX\", \"rule\": \"after-moment\"}]}",
             (unsigned long long)all[0]->fingerprint, (unsigned long long)all[0]->fingerprint);
    char *path = temp_file(text);
    /* The baseline is read before the next run's findings are pushed. */
    f->s = kn_sink_new(f->a);
    assert_true(kn_baseline_read(f->s, path, stderr));
    unlink(path);
    for (uint32_t line = 1; line <= 3; line++) {
        push(f, "a.yaml", line * 10, "same", "same message");
    }
    push(f, "a.yaml", 50, "other", "other message");
    kn_sink_finish(f->s, NULL);
    all = kn_sink_diags(f->s, &n);
    assert_int_equal(kn_sink_baselined(f->s), 2);
    assert_true(all[0]->baselined && all[1]->baselined);
    assert_false(all[2]->baselined);
    assert_false(all[3]->baselined);
    assert_int_equal(kn_sink_count(f->s, KN_SEV_ERROR), 2);
}

static void baseline_round_trips(void **state)
{
    fixture *f = *state;
    push(f, "a.yaml", 1, "quote\"d", "message with \xff byte");
    push(f, "a.yaml", 2, "b", "second");
    kn_sink_finish(f->s, NULL);
    char *path = temp_file("");
    assert_true(kn_baseline_write(f->s, path, NULL, 0, stderr));
    f->s = kn_sink_new(f->a);
    assert_true(kn_baseline_read(f->s, path, stderr));
    unlink(path);
    /* Lines moved and a number changed: the same findings. */
    push(f, "./a.yaml", 7, "quote\"d", "message with \xff byte");
    push(f, "a.yaml", 9, "b", "second");
    push(f, "a.yaml", 11, "c", "third, new");
    kn_sink_finish(f->s, NULL);
    size_t n;
    kn_diag **all = kn_sink_diags(f->s, &n);
    assert_int_equal(n, 3);
    assert_true(all[0]->baselined && all[1]->baselined);
    assert_false(all[2]->baselined);
}

static void fingerprint_ignores_numbers_and_path_spelling(void **state)
{
    fixture *f = *state;
    push(f, "a.yaml", 1, "late_col", "column 'late_col2' is available between 2h and 6h 20min after");
    push(f, "./d/../a.yaml", 8, "late_col", "column 'late_col2' is available between 5min and 1d after");
    push(f, "a.yaml", 9, "late_col", "column 'late_col3' is available between 2h and 6h 20min after");
    kn_sink_finish(f->s, NULL);
    size_t n;
    kn_diag **all = kn_sink_diags(f->s, &n);
    assert_int_equal(n, 3);
    /* numbers and path spelling do not count; a quoted name does */
    assert_true(all[0]->fingerprint == all[1]->fingerprint);
    assert_true(all[0]->fingerprint != all[2]->fingerprint);
}

static void baseline_refuses_bad_files(void **state)
{
    fixture *f = *state;
    kn_sink_finish(f->s, NULL);
    static const char *const bad[] = {
        "",
        "{",
        "{\"knowable_baseline\": 2}", "{\"knowable_baseline\": 1, \"findings\": []}",
        "{\"findings\": []}",
        "{\"knowable_baseline\": \"1\", \"findings\": []}",
        "{\"knowable_baseline\": 2, \"findings\": [{\"fingerprint\": \"0123456789abcdeg\"}]}",
        "{\"knowable_baseline\": 2, \"findings\": [{\"fingerprint\": 12}]}",
        "{\"knowable_baseline\": 2, \"findings\": [1]}",
        "{\"knowable_baseline\": 2, \"findings\": []} x",
        "{\"knowable_baseline\": 2, \"findings\": [], \"n\": 01}",
        "{\"knowable_baseline\": 2, \"findings\": [], \"s\": \"\\q\"}",
        "{\"knowable_baseline\": 2, \"findings\": [], \"s\": \"\\u12\"}",
        "{\"knowable_baseline\": 2 \"findings\": []}",
    };
    FILE *quiet = fopen("/dev/null", "w");
    for (size_t i = 0; i < sizeof bad / sizeof *bad; i++) {
        char *path = temp_file(bad[i]);
        bool ok = kn_baseline_read(f->s, path, quiet);
        unlink(path);
        if (ok) {
            fail_msg("accepted bad baseline %zu: %s", i, bad[i]);
        }
    }
    assert_false(kn_baseline_read(f->s, "/nonexistent/knowable-baseline.json", quiet));
    fclose(quiet);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(json_escapes_every_string, setup, teardown),
        cmocka_unit_test_setup_teardown(json_leaves_out_baselined_and_waived, setup, teardown),
        cmocka_unit_test_setup_teardown(sarif_uris_are_relative_and_encoded, setup, teardown),
        cmocka_unit_test_setup_teardown(sarif_lists_every_rule_once, setup, teardown),
        cmocka_unit_test_setup_teardown(baseline_matches_each_recorded_copy_once, setup, teardown),
        cmocka_unit_test_setup_teardown(baseline_round_trips, setup, teardown),
        cmocka_unit_test_setup_teardown(fingerprint_ignores_numbers_and_path_spelling, setup, teardown),
        cmocka_unit_test_setup_teardown(baseline_refuses_bad_files, setup, teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

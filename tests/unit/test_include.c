/* test_include.c - include handling of the loader (src/schema/load.c) for
 * what golden cases cannot hold in git: a FIFO (reading it would block), a
 * symlink to a device outside the root, a missing file beyond the root and
 * a folder.  Each case builds its files in a fresh temporary folder. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <limits.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "../../src/report/diag_impl.h"
#include "../../src/schema/schema.h"

typedef struct fx {
    kn_arena *a;
    kn_sink *sink;
    jmp_buf oom;
    kn_load_options lo;
    char dir[64];
} fx;

static int setup(void **state)
{
    fx *f = calloc(1, sizeof *f);
    f->a = kn_arena_new();
    kn_arena_set_oom(f->a, &f->oom);
    f->sink = kn_sink_new(f->a);
    kn_yaml_limits_default(&f->lo.limits);
    strcpy(f->dir, "/tmp/knowable-include-XXXXXX");
    assert_non_null(mkdtemp(f->dir));
    *state = f;
    return 0;
}

static void remove_tree(const char *dir)
{
    static const char *const names[] = {"schema.knowable.yaml", "fifo.yaml", "zero.yaml", "sub/reg.yaml", "sub"};
    char p[PATH_MAX];
    for (size_t i = 0; i < sizeof names / sizeof names[0]; i++) {
        snprintf(p, sizeof p, "%s/%s", dir, names[i]);
        if (unlink(p) != 0) {
            rmdir(p);
        }
    }
    rmdir(dir);
}

static int teardown(void **state)
{
    fx *f = *state;
    kn_arena_free(f->a);
    remove_tree(f->dir);
    free(f);
    return 0;
}

/* Writes a schema that includes `include` and loads it. */
static kn_schema *load_with(fx *f, const char *include)
{
    char path[PATH_MAX];
    snprintf(path, sizeof path, "%s/schema.knowable.yaml", f->dir);
    FILE *out = fopen(path, "w");
    assert_non_null(out);
    fprintf(out,
            "knowable: 1\n"
            "dataset: bike_return_late\n"
            "include: ['%s']\n"
            "prediction: {moment: unlock, target: returned_late}\n"
            "events: {unlock: {}, dock: {after: unlock}}\n"
            "columns:\n"
            "  returned_late: {role: target, known: dock}\n",
            include);
    fclose(out);
    return kn_schema_load(f->a, f->sink, kn_strdup(f->a, path), &f->lo);
}

/* The single include-refused diagnostic's message (fails otherwise). */
static const char *refusal(fx *f)
{
    kn_sink_finish(f->sink, NULL);
    size_t n;
    kn_diag **d = kn_sink_diags(f->sink, &n);
    const char *found = NULL;
    for (size_t i = 0; i < n; i++) {
        if (d[i]->rule == KN_R_INCLUDE_REFUSED) {
            assert_null(found);
            found = d[i]->message;
        }
    }
    assert_non_null(found);
    return found;
}

static void fifo_is_refused_without_reading(void **state)
{
    fx *f = *state;
    char p[PATH_MAX];
    snprintf(p, sizeof p, "%s/fifo.yaml", f->dir);
    assert_int_equal(mkfifo(p, 0600), 0);
    /* Opening the FIFO for reading would block this test forever. */
    kn_schema *s = load_with(f, "fifo.yaml");
    assert_non_null(s);
    assert_false(s->shape_ok);
    assert_non_null(strstr(refusal(f), "not a regular file"));
}

static void symlink_to_device_leaves_the_root(void **state)
{
    fx *f = *state;
    char p[PATH_MAX];
    snprintf(p, sizeof p, "%s/zero.yaml", f->dir);
    assert_int_equal(symlink("/dev/zero", p), 0);
    kn_schema *s = load_with(f, "zero.yaml");
    assert_non_null(s);
    assert_non_null(strstr(refusal(f), "leaves the root"));
}

static void missing_beyond_root_is_outside_not_missing(void **state)
{
    fx *f = *state;
    kn_schema *s = load_with(f, "../no-such-folder-for-knowable/reg.yaml");
    assert_non_null(s);
    assert_non_null(strstr(refusal(f), "leaves the root"));
}

static void missing_inside_root_is_missing(void **state)
{
    fx *f = *state;
    kn_schema *s = load_with(f, "sub/reg.yaml");
    assert_non_null(s);
    assert_non_null(strstr(refusal(f), "no such file"));
}

static void folder_is_refused(void **state)
{
    fx *f = *state;
    char p[PATH_MAX];
    snprintf(p, sizeof p, "%s/sub", f->dir);
    assert_int_equal(mkdir(p, 0700), 0);
    kn_schema *s = load_with(f, "sub");
    assert_non_null(s);
    assert_non_null(strstr(refusal(f), "folder"));
    assert_false(kn_sink_fatal(f->sink));
}

static void register_in_subfolder_is_merged(void **state)
{
    fx *f = *state;
    char p[PATH_MAX];
    snprintf(p, sizeof p, "%s/sub", f->dir);
    assert_int_equal(mkdir(p, 0700), 0);
    snprintf(p, sizeof p, "%s/sub/reg.yaml", f->dir);
    FILE *out = fopen(p, "w");
    assert_non_null(out);
    fputs("knowable: 1\nsources:\n  ride_log: {kind: internal, history: append}\n", out);
    fclose(out);
    kn_schema *s = load_with(f, "sub/reg.yaml");
    assert_non_null(s);
    assert_true(s->shape_ok);
    kn_source *src = kn_schema_source(s, "ride_log");
    assert_non_null(src);
    assert_int_equal(src->key->pos.line, 3);
    assert_non_null(strstr(src->key->pos.file, "sub/reg.yaml"));
    assert_int_equal(s->n_files, 2);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(fifo_is_refused_without_reading, setup, teardown),
        cmocka_unit_test_setup_teardown(symlink_to_device_leaves_the_root, setup, teardown),
        cmocka_unit_test_setup_teardown(missing_beyond_root_is_outside_not_missing, setup, teardown),
        cmocka_unit_test_setup_teardown(missing_inside_root_is_missing, setup, teardown),
        cmocka_unit_test_setup_teardown(folder_is_refused, setup, teardown),
        cmocka_unit_test_setup_teardown(register_in_subfolder_is_merged, setup, teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

/* test_rulebook.c - the house rulebook (src/rulebook/rulebook.c, SPEC §6):
 * the built-in default, overrides and `off`, later files over earlier ones,
 * extends (order, loops, absolute paths), require, names, identifier_names,
 * thresholds, strict_moment, discovery, and bad rulebooks reported at their
 * position and marked fatal (exit status 2). */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "../../src/report/diag_impl.h"
#include "../../src/rulebook/rulebook.h"
#include "../../src/util/regex.h"

typedef struct fx {
    kn_arena *a;
    kn_sink *sink;
    kn_rulebook *rb;
    jmp_buf oom;
    char dir[64];
} fx;

static int setup(void **state)
{
    fx *f = calloc(1, sizeof *f);
    f->a = kn_arena_new();
    kn_arena_set_oom(f->a, &f->oom);
    f->sink = kn_sink_new(f->a);
    f->rb = kn_rulebook_new(f->a);
    strcpy(f->dir, "/tmp/kn-rulebook-XXXXXX");
    assert_non_null(mkdtemp(f->dir));
    *state = f;
    return 0;
}

static void remove_tree(const char *dir)
{
    char cmd[128];
    snprintf(cmd, sizeof cmd, "rm -rf '%s'", dir);
    assert_int_equal(system(cmd), 0);
}

static int teardown(void **state)
{
    fx *f = *state;
    kn_arena_free(f->a);
    remove_tree(f->dir);
    free(f);
    return 0;
}

/* Writes text to dir/name and returns the path (arena memory). */
static char *put(fx *f, const char *name, const char *text)
{
    char *path = kn_printf(f->a, "%s/%s", f->dir, name);
    for (char *slash = strchr(path + strlen(f->dir) + 1, '/'); slash; slash = strchr(slash + 1, '/')) {
        *slash = '\0';
        mkdir(path, 0700);
        *slash = '/';
    }
    FILE *fp = fopen(path, "w");
    assert_non_null(fp);
    fputs(text, fp);
    fclose(fp);
    return path;
}

/* The only diagnostic in the sink (after finish). */
static kn_diag *only(fx *f)
{
    kn_sink_finish(f->sink, NULL);
    size_t n;
    kn_diag **all = kn_sink_diags(f->sink, &n);
    assert_int_equal(n, 1);
    return all[0];
}

static kn_rule rule(const char *id)
{
    kn_rule r;
    assert_true(kn_rule_find(id, strlen(id), &r));
    return r;
}

static void default_rulebook_loads(void **state)
{
    fx *f = *state;
    assert_true(kn_rulebook_load_default(f->rb, f->a, f->sink));
    assert_false(kn_sink_fatal(f->sink));
    assert_true(f->rb->n_names >= 6);
    for (size_t i = 0; i < f->rb->n_names; i++) {
        assert_non_null(f->rb->names[i].code);
        assert_true(strlen(f->rb->names[i].why) > 10);
    }
    assert_non_null(f->rb->identifier_code);
    assert_true(f->rb->require_external[KN_SF_PROVIDER]);
    assert_true(f->rb->require_external[KN_SF_LICENSE]);
    assert_true(f->rb->require_external[KN_SF_RETRIEVED]);
    assert_true(f->rb->require_external[KN_SF_POINT_IN_TIME]);
    assert_false(f->rb->require_external[KN_SF_VERSION]);
    assert_false(f->rb->strict_moment);
    assert_int_equal(f->rb->severity[rule("after-moment")], KN_SEV_ERROR);
    assert_string_equal(f->rb->origin, "(built-in)");
}

static void default_names_catch_post_outcome_shapes(void **state)
{
    fx *f = *state;
    assert_true(kn_rulebook_load_default(f->rb, f->a, f->sink));
    static const char *const hits[] = {"total_spend", "final_status", "refund_amount", "days_to_return",
                                       "resolution_code", "n_scans_after_dispatch"};
    static const char *const misses[] = {"subtotals", "parcel_weight", "finalist", "order_hour"};
    for (size_t i = 0; i < sizeof hits / sizeof *hits; i++) {
        bool any = false;
        for (size_t j = 0; j < f->rb->n_names; j++) {
            any |= kn_regex_match(f->rb->names[j].code, hits[i], strlen(hits[i]), NULL) == KN_MATCH_FOUND;
        }
        assert_true(any);
    }
    for (size_t i = 0; i < sizeof misses / sizeof *misses; i++) {
        for (size_t j = 0; j < f->rb->n_names; j++) {
            if (f->rb->names[j].applies_to == KN_APPLIES_DESCRIPTION) {
                continue;
            }
            assert_int_equal(kn_regex_match(f->rb->names[j].code, misses[i], strlen(misses[i]), NULL),
                             KN_MATCH_NONE);
        }
    }
    assert_int_equal(kn_regex_match(f->rb->identifier_code, "loan_id", 7, NULL), KN_MATCH_FOUND);
    assert_int_equal(kn_regex_match(f->rb->identifier_code, "idle_minutes", 12, NULL), KN_MATCH_NONE);
}

/* The example house rulebook that ships with the project (tests run in
 * tests/, so it is one folder up). */
static void strict_rulebook_loads_over_the_default(void **state)
{
    fx *f = *state;
    assert_true(kn_rulebook_load_default(f->rb, f->a, f->sink));
    size_t base = f->rb->n_names;
    assert_true(kn_rulebook_load(f->rb, f->a, f->sink, "../rules/strict.yaml"));
    assert_false(kn_sink_fatal(f->sink));
    assert_true(f->rb->strict_moment);
    assert_true(f->rb->n_names > base);
    assert_int_equal(f->rb->severity[rule("suspicious-name")], KN_SEV_ERROR);
    assert_true(f->rb->require_feature_known);
    assert_true(f->rb->require_feature_source);
    assert_true(f->rb->require_external[KN_SF_VERSION]);
    assert_int_equal(f->rb->thresholds.min_group_size, 10);
    assert_int_equal(kn_regex_match(f->rb->identifier_code, "frame_vin", 9, NULL), KN_MATCH_FOUND);
}

static void severity_override_and_off(void **state)
{
    fx *f = *state;
    assert_true(kn_rulebook_load_default(f->rb, f->a, f->sink));
    char *p = put(f, "team.yaml",
                  "knowable_rulebook: 1\n"
                  "severity: {suspicious-name: off, join-latest-value: error, unused-source: warning}\n");
    assert_true(kn_rulebook_load(f->rb, f->a, f->sink, p));
    assert_int_equal(f->rb->severity[rule("suspicious-name")], KN_SEV_OFF);
    assert_int_equal(f->rb->severity[rule("join-latest-value")], KN_SEV_ERROR);
    assert_int_equal(f->rb->severity[rule("unused-source")], KN_SEV_WARNING);
    assert_int_equal(f->rb->severity[rule("after-moment")], KN_SEV_ERROR);
    assert_string_equal(f->rb->origin, p);
    assert_string_equal(f->rb->severity_from[rule("join-latest-value")], p);
    assert_null(f->rb->severity_from[rule("after-moment")]);
    /* The sink judges what is pushed under this rulebook by it. */
    kn_rulebook_apply(f->rb, f->sink);
    size_t before = kn_sink_pushed(f->sink);
    kn_diag_push(f->sink, (kn_rule)rule("suspicious-name"), NULL, "x", "a suspicious name");
    kn_diag_push(f->sink, (kn_rule)rule("unused-source"), NULL, "y", "an unused source");
    assert_int_equal(kn_sink_pushed(f->sink), before + 2);
    kn_sink_finish(f->sink, NULL);
    size_t n;
    kn_diag **all = kn_sink_diags(f->sink, &n);
    bool unused_seen = false;
    for (size_t i = 0; i < n; i++) {
        assert_int_not_equal(all[i]->rule, rule("suspicious-name"));
        if (all[i]->rule == (kn_rule)rule("unused-source")) {
            assert_int_equal(all[i]->severity, KN_SEV_WARNING);
            unused_seen = true;
        }
    }
    assert_true(unused_seen);
    /* A finished sink takes nothing more. */
    assert_null(kn_diag_push(f->sink, (kn_rule)rule("unused-source"), NULL, "z", "late"));
    assert_int_equal(kn_sink_pushed(f->sink), n);
}

static void later_file_overrides_earlier_and_names_accumulate(void **state)
{
    fx *f = *state;
    assert_true(kn_rulebook_load_default(f->rb, f->a, f->sink));
    size_t base = f->rb->n_names;
    char *p1 = put(f, "one.yaml",
                   "knowable_rulebook: 1\nseverity: {missing-known: error}\nstrict_moment: true\n"
                   "names:\n  - pattern: '^tip_'\n    why: tips are added after the ride\n");
    char *p2 = put(f, "two.yaml", "knowable_rulebook: 1\nseverity: {missing-known: note}\n"
                                  "thresholds: {separation_auc: 0.9, min_group_size: 3}\n");
    assert_true(kn_rulebook_load(f->rb, f->a, f->sink, p1));
    assert_true(kn_rulebook_load(f->rb, f->a, f->sink, p2));
    assert_int_equal(f->rb->severity[rule("missing-known")], KN_SEV_NOTE);
    assert_true(f->rb->strict_moment);
    assert_int_equal(f->rb->n_names, base + 1);
    assert_string_equal(f->rb->names[base].why, "tips are added after the ride");
    assert_int_equal(f->rb->names[base].pos.line, 5);
    assert_true(f->rb->thresholds.separation_auc == 0.9);
    assert_int_equal(f->rb->thresholds.min_group_size, 3);
    assert_true(f->rb->thresholds.uncertainty == 0.8);
}

static void extends_is_read_first(void **state)
{
    fx *f = *state;
    put(f, "shared/base.yaml",
        "knowable_rulebook: 1\nseverity: {unused-source: error, missing-source: error}\n"
        "require: {feature: [known, source]}\n");
    char *p = put(f, "shared/team.yaml",
                  "knowable_rulebook: 1\nextends: [base.yaml]\nseverity: {unused-source: off}\n");
    assert_true(kn_rulebook_load(f->rb, f->a, f->sink, p));
    assert_int_equal(f->rb->severity[rule("unused-source")], KN_SEV_OFF);
    assert_int_equal(f->rb->severity[rule("missing-source")], KN_SEV_ERROR);
    assert_true(f->rb->require_feature_known);
    assert_true(f->rb->require_feature_source);
}

static void extends_loop_is_refused(void **state)
{
    fx *f = *state;
    char *a = put(f, "a.yaml", "knowable_rulebook: 1\nextends: b.yaml\n");
    put(f, "b.yaml", "knowable_rulebook: 1\nextends: [a.yaml]\n");
    assert_false(kn_rulebook_load(f->rb, f->a, f->sink, a));
    assert_true(kn_sink_fatal(f->sink));
    kn_diag *d = only(f);
    assert_int_equal(d->rule, rule("include-refused"));
    assert_non_null(strstr(d->pos.file, "b.yaml"));
    assert_int_equal(d->pos.line, 2);
    assert_int_equal(d->pos.col, 11);
    assert_int_equal(d->n_notes, 1);
    assert_int_equal(d->notes[0].pos.line, 2);
}

static void absolute_extends_is_refused(void **state)
{
    fx *f = *state;
    char *p = put(f, "a.yaml", "knowable_rulebook: 1\nextends: [/etc/knowable.yaml]\n");
    assert_false(kn_rulebook_load(f->rb, f->a, f->sink, p));
    kn_diag *d = only(f);
    assert_int_equal(d->rule, rule("include-refused"));
    assert_int_equal(d->pos.line, 2);
    assert_int_equal(d->pos.col, 11);
}

static void unknown_key_is_positioned_and_fatal(void **state)
{
    fx *f = *state;
    char *p = put(f, "a.yaml", "knowable_rulebook: 1\nseverty: {}\n");
    assert_false(kn_rulebook_load(f->rb, f->a, f->sink, p));
    assert_true(kn_sink_fatal(f->sink));
    kn_diag *d = only(f);
    assert_int_equal(d->rule, rule("schema-shape"));
    assert_int_equal(d->pos.line, 2);
    assert_int_equal(d->pos.col, 1);
    assert_non_null(strstr(d->message, "did you mean 'severity'"));
}

static void unknown_rule_id_is_positioned(void **state)
{
    fx *f = *state;
    char *p = put(f, "a.yaml", "knowable_rulebook: 1\nseverity:\n  after-momnet: off\n");
    assert_false(kn_rulebook_load(f->rb, f->a, f->sink, p));
    kn_diag *d = only(f);
    assert_int_equal(d->rule, rule("unknown-reference"));
    assert_int_equal(d->pos.line, 3);
    assert_int_equal(d->pos.col, 3);
    assert_non_null(strstr(d->message, "'after-moment'"));
}

static void bad_pattern_points_at_the_character(void **state)
{
    fx *f = *state;
    char *p = put(f, "a.yaml", "knowable_rulebook: 1\nidentifier_names: '(?i)(id|key'\n");
    assert_false(kn_rulebook_load(f->rb, f->a, f->sink, p));
    assert_true(kn_sink_fatal(f->sink));
    kn_diag *d = only(f);
    assert_int_equal(d->rule, rule("bad-pattern"));
    assert_int_equal(d->pos.line, 2);
    /* The value starts at column 19 (the quote); PCRE2 stops at the end,
     * offset 11 inside the pattern: column 19 + 1 + 11. */
    assert_int_equal(d->pos.col, 31);
    assert_int_equal(d->notes[0].pos.col, 19);
}

static void names_entry_needs_pattern_and_why(void **state)
{
    fx *f = *state;
    char *p = put(f, "a.yaml", "knowable_rulebook: 1\nnames:\n  - pattern: '^late_'\n    applies_to: title\n");
    assert_false(kn_rulebook_load(f->rb, f->a, f->sink, p));
    kn_sink_finish(f->sink, NULL);
    size_t n;
    kn_diag **all = kn_sink_diags(f->sink, &n);
    assert_int_equal(n, 1);
    assert_int_equal(all[0]->pos.line, 4);
    assert_non_null(strstr(all[0]->message, "name, description or both"));
}

static void thresholds_and_flags_are_checked(void **state)
{
    fx *f = *state;
    char *p = put(f, "a.yaml",
                  "knowable_rulebook: 1\nstrict_moment: maybe\nthresholds: {uncertainty: 1.5, min_group_size: 0}\n"
                  "require: {external_source: [provder]}\n");
    assert_false(kn_rulebook_load(f->rb, f->a, f->sink, p));
    kn_sink_finish(f->sink, NULL);
    size_t n;
    kn_diag **all = kn_sink_diags(f->sink, &n);
    assert_int_equal(n, 4);
    assert_int_equal(all[0]->pos.line, 2);
    assert_int_equal(all[1]->pos.line, 3);
    assert_int_equal(all[2]->pos.line, 3);
    assert_int_equal(all[3]->pos.line, 4);
    assert_non_null(strstr(all[3]->message, "did you mean 'provider'"));
}

static void missing_version_and_duplicate_keys_are_fatal(void **state)
{
    fx *f = *state;
    char *p = put(f, "a.yaml", "severity: {}\n");
    assert_false(kn_rulebook_load(f->rb, f->a, f->sink, p));
    assert_true(kn_sink_fatal(f->sink));
    kn_sink *s2 = kn_sink_new(f->a);
    char *q = put(f, "b.yaml", "knowable_rulebook: 1\nstrict_moment: true\nstrict_moment: false\n");
    assert_false(kn_rulebook_load(f->rb, f->a, s2, q));
    assert_true(kn_sink_fatal(s2));
}

static void missing_file_is_fatal(void **state)
{
    fx *f = *state;
    assert_false(kn_rulebook_load(f->rb, f->a, f->sink, kn_printf(f->a, "%s/none.yaml", f->dir)));
    assert_true(kn_sink_fatal(f->sink));
}

static void discovery_walks_up_and_stops_at_git(void **state)
{
    fx *f = *state;
    put(f, "repo/.knowable-rules.yaml", "knowable_rulebook: 1\n");
    char *schema = put(f, "repo/models/loans/loans.knowable.yaml", "knowable: 1\n");
    char *root = kn_printf(f->a, "%s/repo", f->dir);
    char *found = kn_rulebook_discover(f->a, schema, root);
    assert_non_null(found);
    /* Printed tidy: "loans/../../" folded away. */
    assert_string_equal(found, kn_printf(f->a, "%s/repo/.knowable-rules.yaml", f->dir));
    struct stat st;
    assert_int_equal(stat(found, &st), 0);

    /* A nearer one wins. */
    put(f, "repo/models/.knowable-rules.yaml", "knowable_rulebook: 1\n");
    assert_string_equal(kn_rulebook_discover(f->a, schema, root),
                        kn_printf(f->a, "%s/repo/models/.knowable-rules.yaml", f->dir));

    /* A folder holding .git ends the search before the file above it. */
    put(f, "outer/.knowable-rules.yaml", "knowable_rulebook: 1\n");
    put(f, "outer/proj/.git/HEAD", "ref: refs/heads/main\n");
    char *other = put(f, "outer/proj/x.knowable.yaml", "knowable: 1\n");
    assert_null(kn_rulebook_discover(f->a, other, NULL));
    assert_null(kn_rulebook_discover(f->a, other, f->dir));
}

/* Without .git the search stops at the root: the schema's own folder by
 * default, so a rulebook planted two folders up is never read. */
static void discovery_stops_at_the_root(void **state)
{
    fx *f = *state;
    put(f, "planted/.knowable-rules.yaml", "knowable_rulebook: 1\n");
    char *schema = put(f, "planted/team/models/x.knowable.yaml", "knowable: 1\n");
    assert_null(kn_rulebook_discover(f->a, schema, NULL));
    assert_null(kn_rulebook_discover(f->a, schema, kn_printf(f->a, "%s/planted/team", f->dir)));
    /* A root the schema does not lie in is no root for it. */
    assert_null(kn_rulebook_discover(f->a, schema, kn_printf(f->a, "%s/elsewhere", f->dir)));
    /* --root at the rulebook's folder lets the search reach it. */
    assert_string_equal(kn_rulebook_discover(f->a, schema, kn_printf(f->a, "%s/planted", f->dir)),
                        kn_printf(f->a, "%s/planted/.knowable-rules.yaml", f->dir));
    /* In the schema's own folder it is found without a root. */
    put(f, "planted/team/models/.knowable-rules.yaml", "knowable_rulebook: 1\n");
    assert_string_equal(kn_rulebook_discover(f->a, schema, NULL),
                        kn_printf(f->a, "%s/planted/team/models/.knowable-rules.yaml", f->dir));
}

static void discovery_from_a_bare_file_name(void **state)
{
    fx *f = *state;
    put(f, "w/.knowable-rules.yaml", "knowable_rulebook: 1\n");
    put(f, "w/.git/HEAD", "x\n");
    put(f, "w/s.knowable.yaml", "knowable: 1\n");
    char cwd[4096];
    assert_non_null(getcwd(cwd, sizeof cwd));
    assert_int_equal(chdir(kn_printf(f->a, "%s/w", f->dir)), 0);
    char *found = kn_rulebook_discover(f->a, "s.knowable.yaml", NULL);
    assert_int_equal(chdir(cwd), 0);
    assert_non_null(found);
    assert_string_equal(found, ".knowable-rules.yaml");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(default_rulebook_loads, setup, teardown),
        cmocka_unit_test_setup_teardown(default_names_catch_post_outcome_shapes, setup, teardown),
        cmocka_unit_test_setup_teardown(strict_rulebook_loads_over_the_default, setup, teardown),
        cmocka_unit_test_setup_teardown(severity_override_and_off, setup, teardown),
        cmocka_unit_test_setup_teardown(later_file_overrides_earlier_and_names_accumulate, setup, teardown),
        cmocka_unit_test_setup_teardown(extends_is_read_first, setup, teardown),
        cmocka_unit_test_setup_teardown(extends_loop_is_refused, setup, teardown),
        cmocka_unit_test_setup_teardown(absolute_extends_is_refused, setup, teardown),
        cmocka_unit_test_setup_teardown(unknown_key_is_positioned_and_fatal, setup, teardown),
        cmocka_unit_test_setup_teardown(unknown_rule_id_is_positioned, setup, teardown),
        cmocka_unit_test_setup_teardown(bad_pattern_points_at_the_character, setup, teardown),
        cmocka_unit_test_setup_teardown(names_entry_needs_pattern_and_why, setup, teardown),
        cmocka_unit_test_setup_teardown(thresholds_and_flags_are_checked, setup, teardown),
        cmocka_unit_test_setup_teardown(missing_version_and_duplicate_keys_are_fatal, setup, teardown),
        cmocka_unit_test_setup_teardown(missing_file_is_fatal, setup, teardown),
        cmocka_unit_test_setup_teardown(discovery_stops_at_the_root, setup, teardown),
        cmocka_unit_test_setup_teardown(discovery_walks_up_and_stops_at_git, setup, teardown),
        cmocka_unit_test_setup_teardown(discovery_from_a_bare_file_name, setup, teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

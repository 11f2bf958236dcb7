/* test_yaml.c - the YAML tree with positions (src/yaml/tree.c): positions,
 * duplicate keys, syntax errors with their context, and the limits of
 * SPEC §9 (alias bombs, depth, scalar size, NUL bytes, invalid UTF-8). */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../../src/report/diag_impl.h"
#include "../../src/report/yaml_sink.h"
#include "../../src/yaml/tree.h"

typedef struct fx {
    kn_arena *a;
    kn_sink *sink;
    jmp_buf oom;
    kn_yaml_limits lim;
} fx;

static int setup(void **state)
{
    fx *f = calloc(1, sizeof *f);
    f->a = kn_arena_new();
    kn_arena_set_oom(f->a, &f->oom);
    f->sink = kn_sink_new(f->a);
    kn_yaml_limits_default(&f->lim);
    *state = f;
    return 0;
}

static int teardown(void **state)
{
    fx *f = *state;
    kn_arena_free(f->a);
    free(f);
    return 0;
}

static kn_node *parse(fx *f, const char *text)
{
    kn_yaml_reporter rep = kn_sink_yaml_reporter(f->sink);
    return kn_yaml_parse(f->a, &rep, "t.yaml", text, strlen(text), &f->lim);
}

static kn_diag *only_diag(fx *f)
{
    kn_sink_finish(f->sink, NULL);
    size_t n;
    kn_diag **d = kn_sink_diags(f->sink, &n);
    assert_int_equal(n, 1);
    return d[0];
}

static void positions_are_one_based(void **state)
{
    fx *f = *state;
    kn_node *root = parse(f, "a: 1\nbb:\n  c: [x, 'y']\n");
    assert_non_null(root);
    kn_node *bb = kn_map_get(root, "bb");
    kn_node *c = kn_map_get(bb, "c");
    assert_int_equal(c->pos.line, 3);
    assert_int_equal(c->pos.col, 6);
    assert_int_equal(c->u.seq.items[1]->pos.col, 10);
    assert_false(c->u.seq.items[1]->plain);
    assert_int_equal(c->u.seq.items[1]->pos.offset, 18); /* 5 + 4 bytes of lines 1-2, then 9 */
}

static void columns_count_characters(void **state)
{
    fx *f = *state;
    /* "é" is two bytes and one character: the column counts characters. */
    kn_node *root = parse(f, "\xc3\xa9t\xc3\xa9: v\n");
    assert_non_null(root);
    assert_int_equal(root->u.map.pairs[0].value->pos.col, 6);
    assert_int_equal(root->u.map.pairs[0].value->pos.offset, 7);
}

static void duplicate_key_points_at_second(void **state)
{
    fx *f = *state;
    kn_node *root = parse(f, "known: a\nrole: x\nknown: b\n");
    assert_non_null(root);
    kn_diag *d = only_diag(f);
    assert_int_equal(d->rule, KN_R_DUPLICATE_KEY);
    assert_int_equal(d->pos.line, 3);
    assert_int_equal(d->n_notes, 1);
    assert_int_equal(d->notes[0].pos.line, 1);
}

static void syntax_error_has_context(void **state)
{
    fx *f = *state;
    assert_null(parse(f, "a: [1, 2\nb: 3\n"));
    kn_diag *d = only_diag(f);
    assert_int_equal(d->rule, KN_R_YAML_SYNTAX);
    assert_true(kn_sink_fatal(f->sink));
    assert_int_equal(d->n_notes, 1); /* the context: where the flow sequence started */
    assert_int_equal(d->notes[0].pos.line, 1);
    assert_int_equal(d->notes[0].pos.col, 4);
}

static void alias_bomb_is_refused(void **state)
{
    fx *f = *state;
    /* Nine levels of ten aliases each would expand to 10^9 nodes. */
    char buf[4096];
    size_t n = (size_t)snprintf(buf, sizeof buf, "a0: &a0 [x, x, x, x, x, x, x, x, x, x]\n");
    for (int i = 1; i <= 9; i++) {
        n += (size_t)snprintf(buf + n, sizeof buf - n, "a%d: &a%d [", i, i);
        for (int j = 0; j < 10; j++) {
            n += (size_t)snprintf(buf + n, sizeof buf - n, "%s*a%d", j ? ", " : "", i - 1);
        }
        n += (size_t)snprintf(buf + n, sizeof buf - n, "]\n");
    }
    assert_null(parse(f, buf));
    kn_diag *d = only_diag(f);
    assert_int_equal(d->rule, KN_R_YAML_SYNTAX);
    assert_non_null(strstr(d->message, "aliases expanded"));
    /* a5 would expand to 1 + 10 * 111111 nodes: its tenth alias passes 10^6 */
    assert_int_equal(d->pos.line, 6);
}

static void deep_nesting_is_refused(void **state)
{
    fx *f = *state;
    size_t depth = 100000;
    char *buf = malloc(depth * 2 + 1);
    for (size_t i = 0; i < depth; i++) {
        buf[i] = '[';
        buf[depth + i] = ']';
    }
    buf[2 * depth] = '\0';
    assert_null(parse(f, buf));
    free(buf);
    kn_diag *d = only_diag(f);
    assert_non_null(strstr(d->message, "nesting deeper than 64"));
    assert_int_equal(d->pos.col, 65);
}

static void huge_scalar_and_file_are_refused(void **state)
{
    fx *f = *state;
    size_t len = 100000;
    char *buf = malloc(len + 8);
    memcpy(buf, "a: ", 3);
    memset(buf + 3, 'x', len);
    buf[len + 3] = '\0';
    assert_null(parse(f, buf));
    kn_diag *d = only_diag(f);
    assert_non_null(strstr(d->message, "longer than 65536 bytes"));
    free(buf);

    fx *g = *state;
    g->lim.max_file_bytes = 16;
    g->sink = kn_sink_new(g->a);
    assert_null(parse(g, "a: 0123456789abcdef\n"));
    d = only_diag(g);
    assert_non_null(strstr(d->message, "larger than 16 bytes"));
}

static void nul_and_bad_utf8_are_reported(void **state)
{
    fx *f = *state;
    static const char nul[] = "a: b\nc: \"d\\0e\"\n";
    assert_null(parse(f, nul));
    kn_diag *d = only_diag(f);
    assert_non_null(strstr(d->message, "NUL"));
    assert_int_equal(d->pos.line, 2);

    f->sink = kn_sink_new(f->a);
    static const char raw_nul[] = "a: b\nc: d\0e\n";
    kn_yaml_reporter rep = kn_sink_yaml_reporter(f->sink);
    assert_null(kn_yaml_parse(f->a, &rep, "t.yaml", raw_nul, sizeof raw_nul - 1, &f->lim));
    d = only_diag(f);
    assert_int_equal(d->rule, KN_R_YAML_SYNTAX);
    assert_int_equal(d->pos.line, 2);

    f->sink = kn_sink_new(f->a);
    assert_null(parse(f, "a: b\nc: d\xff\n"));
    d = only_diag(f);
    assert_non_null(strstr(d->message, "UTF-8"));
    assert_int_equal(d->pos.line, 2);
    assert_int_equal(d->pos.col, 5);
}

static void scalars_are_typed(void **state)
{
    fx *f = *state;
    kn_node *root = parse(f, "a: yes\nb: 'yes'\nc: ~\nd: -12\ne: 1.5e3\n");
    bool b;
    long long i;
    double x;
    assert_true(kn_node_bool(kn_map_get(root, "a"), &b));
    assert_true(b);
    assert_false(kn_node_bool(kn_map_get(root, "b"), &b)); /* quoted: a string */
    assert_true(kn_node_is_null(kn_map_get(root, "c")));
    assert_true(kn_node_int(kn_map_get(root, "d"), &i));
    assert_int_equal(i, -12);
    assert_true(kn_node_number(kn_map_get(root, "e"), &x));
    assert_true(x == 1500.0);
}

static void char_pos_points_inside_scalars(void **state)
{
    fx *f = *state;
    kn_node *root = parse(f, "a: P3X\nb: \"P3X\"\n");
    kn_pos p = kn_node_char_pos(kn_map_get(root, "a"), 2);
    assert_int_equal(p.col, 6);
    p = kn_node_char_pos(kn_map_get(root, "b"), 2);
    assert_int_equal(p.col, 7);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(positions_are_one_based, setup, teardown),
        cmocka_unit_test_setup_teardown(columns_count_characters, setup, teardown),
        cmocka_unit_test_setup_teardown(duplicate_key_points_at_second, setup, teardown),
        cmocka_unit_test_setup_teardown(syntax_error_has_context, setup, teardown),
        cmocka_unit_test_setup_teardown(alias_bomb_is_refused, setup, teardown),
        cmocka_unit_test_setup_teardown(deep_nesting_is_refused, setup, teardown),
        cmocka_unit_test_setup_teardown(huge_scalar_and_file_are_refused, setup, teardown),
        cmocka_unit_test_setup_teardown(nul_and_bad_utf8_are_reported, setup, teardown),
        cmocka_unit_test_setup_teardown(scalars_are_typed, setup, teardown),
        cmocka_unit_test_setup_teardown(char_pos_points_inside_scalars, setup, teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

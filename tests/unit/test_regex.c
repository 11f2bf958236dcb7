/* test_regex.c - patterns under limits (src/util/regex.c): compile errors
 * with their offset, matches and spans, JIT use, and bounded time for a
 * catastrophically backtracking pattern on a long value (SPEC §9). */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <stdlib.h>
#include <string.h>
#include <time.h>

#define PCRE2_CODE_UNIT_WIDTH 8
#include <pcre2.h>

#include "../../src/util/regex.h"

typedef struct fx {
    kn_arena *a;
    jmp_buf oom;
} fx;

static int setup(void **state)
{
    fx *f = calloc(1, sizeof *f);
    f->a = kn_arena_new();
    kn_arena_set_oom(f->a, &f->oom);
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

static kn_regex *must(fx *f, const char *pat)
{
    kn_regex_error err;
    kn_regex *re = kn_regex_compile(f->a, pat, strlen(pat), &err);
    assert_non_null(re);
    return re;
}

static double seconds_since(const struct timespec *t0)
{
    struct timespec t1;
    clock_gettime(CLOCK_MONOTONIC, &t1);
    return (double)(t1.tv_sec - t0->tv_sec) + (double)(t1.tv_nsec - t0->tv_nsec) / 1e9;
}

static void match_and_span(void **state)
{
    fx *f = *state;
    kn_regex *re = must(f, "(?i)(^|_)total(_|$)");
    size_t span[2] = {99, 99};
    assert_int_equal(kn_regex_match(re, "order_TOTAL_eur", 15, span), KN_MATCH_FOUND);
    assert_int_equal(span[0], 5);
    assert_int_equal(span[1], 12);
    assert_int_equal(kn_regex_match(re, "subtotals", 9, NULL), KN_MATCH_NONE);
    assert_string_equal(kn_regex_problem(re), "");
}

static void subject_length_is_respected(void **state)
{
    fx *f = *state;
    kn_regex *re = must(f, "^loan_id$");
    /* Only the first 7 bytes are the subject: "loan_id" with the rest cut. */
    assert_int_equal(kn_regex_match(re, "loan_idx", 7, NULL), KN_MATCH_FOUND);
    assert_int_equal(kn_regex_match(re, "loan_idx", 8, NULL), KN_MATCH_NONE);
}

static void compile_error_has_offset(void **state)
{
    fx *f = *state;
    kn_regex_error err;
    memset(&err, 0, sizeof err);
    assert_null(kn_regex_compile(f->a, "^PKG-(\\d{4}$", 12, &err));
    assert_int_equal(err.offset, 12); /* missing ')' is noticed at the end */
    assert_non_null(strstr(err.message, "parenthes"));

    memset(&err, 0, sizeof err);
    assert_null(kn_regex_compile(f->a, "ab)cd", 5, &err));
    assert_int_equal(err.offset, 2);
    assert_true(err.code != 0);

    memset(&err, 0, sizeof err);
    assert_null(kn_regex_compile(f->a, "x{3,2}", 6, &err));
    assert_true(err.offset >= 4 && err.offset <= 6);
}

static void jit_is_used_where_available(void **state)
{
    fx *f = *state;
    uint32_t have = 0;
    pcre2_config(PCRE2_CONFIG_JIT, &have);
    kn_regex *re = must(f, "^[A-Z]{2}-\\d+$");
    /* The interpreter serves a pattern's first matches (the JIT would cost
     * more than a few matches save); the JIT takes over after 64. */
    assert_false(kn_regex_jit(re));
    for (int i = 0; i < 200; i++) {
        assert_int_equal(kn_regex_match(re, "EU-123", 6, NULL), KN_MATCH_FOUND);
        assert_int_equal(kn_regex_match(re, "eu-123", 6, NULL), KN_MATCH_NONE);
        if (i == 10) {
            assert_false(kn_regex_jit(re));
        }
    }
    assert_int_equal(kn_regex_jit(re), have != 0);
}

/* n copies of c, then the characters of tail. */
static char *run_of(fx *f, char c, size_t n, const char *tail)
{
    char *s = kn_alloc(f->a, n + strlen(tail) + 1);
    memset(s, c, n);
    memcpy(s + n, tail, strlen(tail));
    return s;
}

static void catastrophic_pattern_stops_at_limit(void **state)
{
    fx *f = *state;
    kn_regex *re = must(f, "^(a+)+$");
    size_t n = 40000;
    char *s = run_of(f, 'a', n, "b");
    struct timespec t0;
    clock_gettime(CLOCK_MONOTONIC, &t0);
    kn_match m = kn_regex_match(re, s, n + 1, NULL);
    double took = seconds_since(&t0);
    assert_int_equal(m, KN_MATCH_LIMIT);
    assert_true(took < 2.0);
    assert_non_null(strstr(kn_regex_problem(re), "limit"));
}

static void nested_quantifiers_on_short_value_stop_too(void **state)
{
    fx *f = *state;
    /* 30 characters are enough for 2^30 paths without a limit; the 'y' at
     * the end defeats PCRE2's "required character" shortcut. */
    kn_regex *re = must(f, "(x+x+)+y");
    char *s = run_of(f, 'x', 30, "zy");
    struct timespec t0;
    clock_gettime(CLOCK_MONOTONIC, &t0);
    assert_int_equal(kn_regex_match(re, s, 32, NULL), KN_MATCH_LIMIT);
    assert_true(seconds_since(&t0) < 2.0);
}

static void small_match_limit_is_reported_with_its_number(void **state)
{
    fx *f = *state;
    kn_regex *re = must(f, "(a|b)*c");
    kn_regex_limits lim;
    kn_regex_limits_default(&lim);
    lim.match = 5;
    kn_regex_set_limits(re, &lim);
    char *s = run_of(f, 'a', 200, "dc");
    assert_int_equal(kn_regex_match(re, s, 202, NULL), KN_MATCH_LIMIT);
    assert_non_null(strstr(kn_regex_problem(re), "5 backtracking steps"));
    /* The default limit lets the same search finish: only the final 'c'
     * matches, after every earlier start failed at the 'd'. */
    kn_regex_limits_default(&lim);
    kn_regex_set_limits(re, &lim);
    size_t span[2];
    assert_int_equal(kn_regex_match(re, s, 202, span), KN_MATCH_FOUND);
    assert_int_equal(span[0], 201);
    assert_string_equal(kn_regex_problem(re), "");
}

static void free_code(void *p)
{
    pcre2_code_free(p);
}

static void depth_limit_applies_to_the_interpreter(void **state)
{
    fx *f = *state;
    int code;
    PCRE2_SIZE off;
    kn_defer *d = kn_arena_defer(f->a, free_code, NULL);
    pcre2_code *raw = pcre2_compile((PCRE2_SPTR) "^(a|b)*c", PCRE2_ZERO_TERMINATED, 0, &code, &off, NULL);
    assert_non_null(raw);
    d->ptr = raw;
    kn_regex *re = kn_regex_wrap(f->a, raw); /* no JIT: the interpreter runs */
    assert_false(kn_regex_jit(re));
    kn_regex_limits lim;
    kn_regex_limits_default(&lim);
    lim.depth = 3;
    kn_regex_set_limits(re, &lim);
    char *s = run_of(f, 'a', 100, "c");
    assert_int_equal(kn_regex_match(re, s, 101, NULL), KN_MATCH_LIMIT);
    assert_non_null(strstr(kn_regex_problem(re), "depth limit of 3"));
    kn_regex_limits_default(&lim);
    kn_regex_set_limits(re, &lim);
    assert_int_equal(kn_regex_match(re, s, 101, NULL), KN_MATCH_FOUND);
}

static void invalid_utf8_subject_fails_cleanly(void **state)
{
    fx *f = *state;
    kn_regex *re = must(f, "^id$");
    assert_int_equal(kn_regex_match(re, "i\xc3(d", 4, NULL), KN_MATCH_FAILED);
    assert_non_null(strstr(kn_regex_problem(re), "UTF-8"));
}

static void named_groups_are_readable_from_the_code(void **state)
{
    fx *f = *state;
    kn_regex *re = must(f, "^(?<depot>[A-Z]{3})-(?<day>\\d{3})$");
    uint32_t count = 0;
    assert_int_equal(pcre2_pattern_info(kn_regex_code(re), PCRE2_INFO_NAMECOUNT, &count), 0);
    assert_int_equal(count, 2);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(match_and_span, setup, teardown),
        cmocka_unit_test_setup_teardown(subject_length_is_respected, setup, teardown),
        cmocka_unit_test_setup_teardown(compile_error_has_offset, setup, teardown),
        cmocka_unit_test_setup_teardown(jit_is_used_where_available, setup, teardown),
        cmocka_unit_test_setup_teardown(catastrophic_pattern_stops_at_limit, setup, teardown),
        cmocka_unit_test_setup_teardown(nested_quantifiers_on_short_value_stop_too, setup, teardown),
        cmocka_unit_test_setup_teardown(small_match_limit_is_reported_with_its_number, setup, teardown),
        cmocka_unit_test_setup_teardown(depth_limit_applies_to_the_interpreter, setup, teardown),
        cmocka_unit_test_setup_teardown(invalid_utf8_subject_fails_cleanly, setup, teardown),
        cmocka_unit_test_setup_teardown(named_groups_are_readable_from_the_code, setup, teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

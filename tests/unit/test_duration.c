/* test_duration.c - unit tests of src/time/duration.c: ISO 8601 parsing into
 * intervals (values, calendar bounds, rounding, error offsets, hostile
 * input), saturating arithmetic, and the compact human form.
 *
 * The calendar bounds of months ([28 d, 31 d]) and years ([365 d, 366 d])
 * are common practice (the Gregorian calendar's shortest and longest month
 * and year); they are tested here because no outside reference models
 * them.  Fixed units are also cross-checked against Python's
 * datetime.timedelta by tests/ref/duration_ref.py. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <stdlib.h>
#include <string.h>

#include "../../src/time/duration.h"

#define SEC KN_US_PER_SEC
#define MIN KN_US_PER_MIN
#define HOUR KN_US_PER_HOUR
#define DAY KN_US_PER_DAY

/* Parses a NUL-terminated string and asserts it is accepted as [lo, hi]. */
static void check_ok(const char *s, int64_t lo, int64_t hi)
{
    kn_interval iv = {12345, 12345};
    size_t off = 999;
    const char *err = NULL;
    bool ok = kn_duration_parse(s, strlen(s), &iv, &off, &err);
    if (!ok) {
        fail_msg("\"%s\" refused at %zu: %s", s, off, err ? err : "(null)");
    }
    assert_int_equal(iv.lo, lo);
    assert_int_equal(iv.hi, hi);
}

/* Asserts s[0..len) is refused at byte offset off with message msg. */
static void check_err_n(const char *s, size_t len, size_t off, const char *msg)
{
    kn_interval iv;
    size_t got_off = 999;
    const char *err = NULL;
    assert_false(kn_duration_parse(s, len, &iv, &got_off, &err));
    assert_non_null(err);
    assert_string_equal(err, msg);
    assert_int_equal(got_off, off);
}

static void check_err(const char *s, size_t off, const char *msg)
{
    check_err_n(s, strlen(s), off, msg);
}

/* A heap string of a prefix, n copies of a filler and a suffix. */
static char *repeat(const char *prefix, const char *fill, size_t n, const char *suffix)
{
    size_t pl = strlen(prefix), fl = strlen(fill), sl = strlen(suffix);
    char *s = test_malloc(pl + fl * n + sl + 1);
    memcpy(s, prefix, pl);
    for (size_t i = 0; i < n; i++) {
        memcpy(s + pl + i * fl, fill, fl);
    }
    memcpy(s + pl + fl * n, suffix, sl + 1);
    return s;
}

/* ---- parsing: accepted forms ---- */

static void test_zero(void **state)
{
    (void)state;
    check_ok("PT0S", 0, 0);
    check_ok("P0D", 0, 0);
    check_ok("-PT0S", 0, 0);
}

static void test_fixed_units(void **state)
{
    (void)state;
    check_ok("PT1S", SEC, SEC);
    check_ok("PT1M", MIN, MIN);
    check_ok("PT1H", HOUR, HOUR);
    check_ok("P1D", DAY, DAY);
    check_ok("P1W", 7 * DAY, 7 * DAY);
    check_ok("PT1H30M", HOUR + 30 * MIN, HOUR + 30 * MIN);
    check_ok("P2DT3H4M5S", 2 * DAY + 3 * HOUR + 4 * MIN + 5 * SEC,
             2 * DAY + 3 * HOUR + 4 * MIN + 5 * SEC);
}

/* Common practice: a month lasts 28 to 31 days. */
static void test_month_bounds(void **state)
{
    (void)state;
    check_ok("P1M", 28 * DAY, 31 * DAY);
    check_ok("P3M", 84 * DAY, 93 * DAY);
}

/* Common practice: a year lasts 365 or 366 days. */
static void test_year_bounds(void **state)
{
    (void)state;
    check_ok("P1Y", 365 * DAY, 366 * DAY);
    check_ok("P2Y3M", (730 + 84) * DAY, (732 + 93) * DAY);
}

static void test_all_components(void **state)
{
    (void)state;
    int64_t fixed = 3 * 7 * DAY + 4 * DAY + 5 * HOUR + 6 * MIN + 7 * SEC;
    check_ok("P1Y2M3W4DT5H6M7S", (365 + 56) * DAY + fixed, (366 + 62) * DAY + fixed);
}

static void test_minute_and_month_share_m(void **state)
{
    (void)state;
    check_ok("P1MT1M", 28 * DAY + MIN, 31 * DAY + MIN);
}

static void test_negative_swaps_bounds(void **state)
{
    (void)state;
    check_ok("-PT1H", -HOUR, -HOUR);
    check_ok("-P1M", -31 * DAY, -28 * DAY);
    check_ok("-P1Y1D", -367 * DAY, -366 * DAY);
}

static void test_fractions(void **state)
{
    (void)state;
    check_ok("PT0.5S", SEC / 2, SEC / 2);
    check_ok("PT0,5S", SEC / 2, SEC / 2);
    check_ok("PT1.5H", 90 * MIN, 90 * MIN);
    check_ok("P0.5D", 12 * HOUR, 12 * HOUR);
    check_ok("P1DT0.25S", DAY + SEC / 4, DAY + SEC / 4);
    check_ok("PT0.000001S", 1, 1);
    /* Fractions of calendar units scale both bounds. */
    check_ok("P0.5M", 14 * DAY, 15 * DAY + 12 * HOUR);
    check_ok("P0.5Y", 182 * DAY + 12 * HOUR, 183 * DAY);
}

static void test_fraction_rounds_to_nearest(void **state)
{
    (void)state;
    check_ok("PT0.0000004S", 0, 0);
    check_ok("PT0.0000006S", 1, 1);
    check_ok("PT1.9999999S", 2 * SEC, 2 * SEC);
    /* 1e-10 h = 0.36 us, 2e-10 h = 0.72 us. */
    check_ok("PT0.0000000001H", 0, 0);
    check_ok("PT0.0000000002H", 1, 1);
}

static void test_fraction_halves_to_even(void **state)
{
    (void)state;
    check_ok("PT0.0000005S", 0, 0);
    check_ok("PT0.0000015S", 2, 2);
    check_ok("PT0.0000025S", 2, 2);
    /* Anything beyond the half rounds up. */
    check_ok("PT0.00000050001S", 1, 1);
    check_ok("-PT0.0000015S", -2, -2);
}

static void test_fraction_many_digits(void **state)
{
    (void)state;
    char *thirds = repeat("PT0.", "3", 10000, "S");
    check_ok(thirds, 333333, 333333);
    test_free(thirds);

    /* A half microsecond followed by 10,000 zeros and a 1: above the half. */
    char *above = repeat("PT0.0000005", "0", 10000, "1S");
    check_ok(above, 1, 1);
    test_free(above);

    char *zeros = repeat("PT0.5", "0", 10000, "S");
    check_ok(zeros, SEC / 2, SEC / 2);
    test_free(zeros);
}

static void test_leading_zeros(void **state)
{
    (void)state;
    char *s = repeat("P", "0", 10000, "1D");
    check_ok(s, DAY, DAY);
    test_free(s);
}

static void test_maximum_is_accepted(void **state)
{
    (void)state;
    check_ok("P10000Y", 3650000 * DAY, KN_DURATION_MAX);
    check_ok("P3660000D", KN_DURATION_MAX, KN_DURATION_MAX);
    check_ok("PT316224000000S", KN_DURATION_MAX, KN_DURATION_MAX);
    check_ok("-P3660000D", -KN_DURATION_MAX, -KN_DURATION_MAX);
}

static void test_explicit_length_is_honoured(void **state)
{
    (void)state;
    /* No NUL terminator: a read past len would be caught by ASan. */
    const char exact[3] = {'P', '1', 'D'};
    kn_interval iv;
    size_t off;
    const char *err;
    assert_true(kn_duration_parse(exact, sizeof exact, &iv, &off, &err));
    assert_int_equal(iv.hi, DAY);
    /* A prefix of a longer string is parsed alone. */
    assert_true(kn_duration_parse("P1DT1H", 3, &iv, &off, &err));
    assert_int_equal(iv.lo, DAY);
}

static void test_null_error_outputs(void **state)
{
    (void)state;
    assert_false(kn_duration_parse("P", 1, NULL, NULL, NULL));
    assert_true(kn_duration_parse("P1D", 3, NULL, NULL, NULL));
}

/* ---- parsing: errors and their offsets ---- */

static void test_err_empty(void **state)
{
    (void)state;
    check_err("", 0, "empty duration");
}

static void test_err_p_alone(void **state)
{
    (void)state;
    check_err("P", 1, "expected a number after 'P'");
    check_err("-P", 2, "expected a number after 'P'");
}

static void test_err_t_without_time(void **state)
{
    (void)state;
    check_err("PT", 2, "expected a number after 'T'");
    check_err("P1DT", 4, "expected a number after 'T'");
    check_err("P1DTS", 4, "expected a number after 'T'");
}

static void test_err_start(void **state)
{
    (void)state;
    check_err("1D", 0, "a duration starts with 'P'");
    check_err("-", 1, "expected 'P' after '-'");
    check_err("--P1D", 1, "expected 'P' after '-'");
    check_err("+P1D", 0, "only '-' may precede 'P'");
    check_err("p1d", 0, "designators must be upper case ('P', not 'p')");
}

static void test_err_white_space(void **state)
{
    (void)state;
    check_err(" P1D", 0, "unexpected white space");
    check_err("P1D ", 3, "unexpected white space");
    check_err("P1 D", 2, "unexpected white space");
    check_err("P1D\n", 3, "unexpected white space");
}

static void test_err_embedded_nul(void **state)
{
    (void)state;
    check_err_n("P1D\0", 4, 3, "unexpected NUL byte");
    check_err_n("PT1\0S", 5, 3, "unexpected NUL byte");
    check_err_n("\0P1D", 4, 0, "unexpected NUL byte");
}

static void test_err_unit_side_of_t(void **state)
{
    (void)state;
    check_err("P1H", 2, "unit 'H' must come after 'T'");
    check_err("P1S", 2, "unit 'S' must come after 'T'");
    check_err("PT1D", 3, "unit 'D' must come before 'T'");
    check_err("PT1Y", 3, "unit 'Y' must come before 'T'");
    check_err("PT1W", 3, "unit 'W' must come before 'T'");
}

static void test_err_order_and_repeats(void **state)
{
    (void)state;
    check_err("P1D1D", 4, "each unit may appear only once");
    check_err("P1D1Y", 4, "units must come in the order Y, M, W, D, T, H, M, S");
    check_err("PT1M1H", 5, "units must come in the order Y, M, W, D, T, H, M, S");
    check_err("PT1H1H", 5, "each unit may appear only once");
    check_err("PT1HT1M", 4, "'T' appears twice");
}

static void test_err_unit_letter(void **state)
{
    (void)state;
    check_err("P1", 2, "expected a unit letter after the number");
    check_err("PT15", 4, "expected a unit letter after the number");
    check_err("P1X", 2, "expected a unit (Y, M, W or D) after the number");
    check_err("PT1X", 3, "expected a unit (H, M or S) after the number");
    check_err("P1d", 2, "unit letters must be upper case");
}

static void test_err_junk_after_component(void **state)
{
    (void)state;
    check_err("P1DX", 3, "expected a number or 'T'");
    check_err("PX", 1, "expected a number after 'P'");
    check_err("P-1D", 1, "a sign is allowed only before 'P'");
    check_err("P1D-", 3, "a sign is allowed only before 'P'");
}

static void test_err_fraction_form(void **state)
{
    (void)state;
    check_err("P.5D", 1, "expected a digit before the decimal mark");
    check_err("P1.D", 3, "expected a digit after the decimal mark");
    check_err("PT1,", 4, "expected a digit after the decimal mark");
    check_err("PT1.5", 5, "expected a unit letter after the number");
}

static void test_err_fraction_not_last(void **state)
{
    (void)state;
    check_err("PT1.5H30M", 3, "only the last component may have a fraction");
    check_err("P1.5DT1H", 2, "only the last component may have a fraction");
    check_err("P0,5W1D", 2, "only the last component may have a fraction");
}

static void test_err_too_large(void **state)
{
    (void)state;
    check_err("P10001Y", 1, "duration too large");
    check_err("P3660001D", 1, "duration too large");
    check_err("PT316224000001S", 2, "duration too large");
    /* The component that pushes the sum over the limit is blamed. */
    check_err("P10000YT1S", 8, "duration too large");
    check_err("P3660000DT0.000001S", 10, "duration too large");
    check_err("-P99999999999999999999D", 2, "duration too large");
}

static void test_err_long_digit_string(void **state)
{
    (void)state;
    char *s = repeat("PT", "9", 10000, "S");
    check_err(s, 2, "duration too large");
    test_free(s);
}

static void test_err_long_hostile_inputs(void **state)
{
    (void)state;
    char *ps = repeat("", "P", 10000, "");
    check_err(ps, 1, "expected a number after 'P'");
    test_free(ps);

    char *days = repeat("P", "1D", 5000, "");
    check_err(days, 4, "each unit may appear only once");
    test_free(days);

    char *spaces = repeat("P1D", " ", 10000, "");
    check_err(spaces, 3, "unexpected white space");
    test_free(spaces);

    char *zero = repeat("PT", "0", 9997, "S");
    assert_int_equal(strlen(zero), 10000);
    check_ok(zero, 0, 0);
    test_free(zero);
}

/* Seeded random strings over the duration alphabet: every outcome is either
 * a well-formed interval within the limit or an error inside the input. */
static void test_random_strings_are_safe(void **state)
{
    (void)state;
    static const char alphabet[] = "PTYMWDHS0123456789.,- \0";
    uint32_t seed = 20240611u;
    char buf[40];
    size_t accepted = 0;
    for (int round = 0; round < 200000; round++) {
        seed = seed * 1664525u + 1013904223u;
        size_t len = (seed >> 24) % sizeof buf;
        buf[0] = 'P';
        for (size_t i = 1; i < len; i++) {
            seed = seed * 1664525u + 1013904223u;
            buf[i] = alphabet[(seed >> 16) % (sizeof alphabet - 1)];
        }
        kn_interval iv = {0, 0};
        size_t off = SIZE_MAX;
        const char *err = NULL;
        if (kn_duration_parse(buf, len, &iv, &off, &err)) {
            accepted++;
            assert_true(iv.lo <= iv.hi);
            assert_true(iv.hi <= KN_DURATION_MAX && iv.lo >= -KN_DURATION_MAX);
        } else {
            assert_non_null(err);
            assert_true(off <= len);
        }
    }
    /* The generator must reach the accepting paths too. */
    assert_true(accepted > 100);
}

/* ---- arithmetic ---- */

static void test_add_finite(void **state)
{
    (void)state;
    assert_int_equal(kn_time_add(2 * HOUR, -30 * MIN), 90 * MIN);
    assert_int_equal(kn_time_add(-5, -7), -12);
}

static void test_add_saturates(void **state)
{
    (void)state;
    assert_int_equal(kn_time_add(KN_TIME_INF - 1, 1), KN_TIME_INF);
    assert_int_equal(kn_time_add(KN_TIME_INF - 10, 5), KN_TIME_INF - 5);
    assert_int_equal(kn_time_add(-KN_TIME_INF + 1, -1), -KN_TIME_INF);
    assert_int_equal(kn_time_add(INT64_MAX / 2 + 1, INT64_MAX / 2 + 1), KN_TIME_INF);
    assert_int_equal(kn_time_add(-(INT64_MAX / 2) - 1, -(INT64_MAX / 2) - 1), -KN_TIME_INF);
}

static void test_add_infinities(void **state)
{
    (void)state;
    assert_int_equal(kn_time_add(KN_TIME_INF, -5 * DAY), KN_TIME_INF);
    assert_int_equal(kn_time_add(-5 * DAY, KN_TIME_INF), KN_TIME_INF);
    assert_int_equal(kn_time_add(-KN_TIME_INF, 5 * DAY), -KN_TIME_INF);
    assert_int_equal(kn_time_add(5 * DAY, -KN_TIME_INF), -KN_TIME_INF);
    /* Documented choice: the first operand's infinity wins. */
    assert_int_equal(kn_time_add(KN_TIME_INF, -KN_TIME_INF), KN_TIME_INF);
    assert_int_equal(kn_time_add(-KN_TIME_INF, KN_TIME_INF), -KN_TIME_INF);
    /* INT64_MIN is read as -inf, never as a number below it. */
    assert_int_equal(kn_time_add(INT64_MIN, 1), -KN_TIME_INF);
}

static void test_neg(void **state)
{
    (void)state;
    assert_int_equal(kn_time_neg(5), -5);
    assert_int_equal(kn_time_neg(-HOUR), HOUR);
    assert_int_equal(kn_time_neg(KN_TIME_INF), -KN_TIME_INF);
    assert_int_equal(kn_time_neg(-KN_TIME_INF), KN_TIME_INF);
    assert_int_equal(kn_time_neg(INT64_MIN), KN_TIME_INF);
}

static void test_interval_ops(void **state)
{
    (void)state;
    kn_interval a = {HOUR, 2 * HOUR}, b = {-MIN, KN_TIME_INF};
    kn_interval s = kn_interval_add(a, b);
    assert_int_equal(s.lo, HOUR - MIN);
    assert_int_equal(s.hi, KN_TIME_INF);
    kn_interval n = kn_interval_neg(b);
    assert_int_equal(n.lo, -KN_TIME_INF);
    assert_int_equal(n.hi, MIN);
    kn_interval p = kn_interval_point(-7);
    assert_int_equal(p.lo, -7);
    assert_int_equal(p.hi, -7);
}

static void test_interval_add_keeps_order(void **state)
{
    (void)state;
    kn_interval a = {-KN_TIME_INF, KN_TIME_INF}, b = {KN_TIME_INF, KN_TIME_INF};
    kn_interval s = kn_interval_add(a, b);
    assert_true(s.lo <= s.hi);
    kn_interval c = {-KN_TIME_INF, -KN_TIME_INF};
    s = kn_interval_add(a, c);
    assert_true(s.lo <= s.hi);
}

static void test_seconds(void **state)
{
    (void)state;
    assert_true(kn_time_seconds(90 * MIN) == 5400.0);
    assert_true(kn_time_seconds(-SEC / 4) == -0.25);
    assert_true(kn_time_seconds(1) == 1e-6);
    assert_true(kn_time_seconds(0) == 0.0);
}

/* ---- formatting ---- */

static void check_fmt(int64_t us, const char *want)
{
    char buf[48];
    memset(buf, 'x', sizeof buf);
    assert_ptr_equal(kn_duration_format(us, buf, sizeof buf), buf);
    assert_string_equal(buf, want);
}

static void test_format_examples(void **state)
{
    (void)state;
    check_fmt(2 * DAY + 4 * HOUR, "2d 4h");
    check_fmt(30 * MIN, "30min");
    check_fmt(-HOUR, "-1h");
    check_fmt(DAY + 5 * SEC, "1d 5s");
    check_fmt(SEC / 4, "0.25s");
    check_fmt(0, "0s");
    check_fmt(KN_TIME_INF, "unbounded");
    check_fmt(-KN_TIME_INF, "-unbounded");
}

static void test_format_all_units(void **state)
{
    (void)state;
    check_fmt(DAY + 2 * HOUR + 3 * MIN + 4 * SEC + SEC / 2, "1d 2h 3min 4.5s");
    check_fmt(-(DAY + SEC / 2), "-1d 0.5s");
    check_fmt(1, "0.000001s");
    check_fmt(-1, "-0.000001s");
    check_fmt(61 * SEC + 120000, "1min 1.12s");
    check_fmt(400 * DAY, "400d");
    check_fmt(INT64_MIN, "-unbounded");
}

static void test_format_largest_fits(void **state)
{
    (void)state;
    check_fmt(KN_TIME_INF - 1, "106751991d 4h 54.775806s");
    check_fmt(-(KN_TIME_INF - 1), "-106751991d 4h 54.775806s");
}

static void test_format_truncates(void **state)
{
    (void)state;
    char buf[8];
    memset(buf, 'x', sizeof buf);
    kn_duration_format(2 * DAY + 4 * HOUR, buf, 3);
    assert_string_equal(buf, "2d");
    assert_int_equal(buf[3], 'x');
    kn_duration_format(HOUR, buf, 1);
    assert_string_equal(buf, "");
    buf[0] = 'y';
    kn_duration_format(HOUR, buf, 0);
    assert_int_equal(buf[0], 'y');
}


/* Informal spellings get the ISO 8601 form as a suggestion; every
 * suggestion is itself a valid duration. */
static void check_suggest(const char *in, const char *want)
{
    char buf[64] = "unchanged";
    bool ok = kn_duration_suggest(in, strlen(in), buf, sizeof buf);
    if (!want) {
        if (ok) {
            fail_msg("\"%s\" got the suggestion \"%s\", expected none", in, buf);
        }
        return;
    }
    if (!ok) {
        fail_msg("\"%s\" got no suggestion, expected \"%s\"", in, want);
    }
    assert_string_equal(buf, want);
}

static void test_suggest_informal(void **state)
{
    (void)state;
    check_suggest("15m", "PT15M");
    check_suggest("5min", "PT5M");
    check_suggest("5 mins", "PT5M");
    check_suggest("2h", "PT2H");
    check_suggest("2 hours", "PT2H");
    check_suggest("3 days", "P3D");
    check_suggest("1w", "P1W");
    check_suggest("1h30m", "PT1H30M");
    check_suggest("1d 4h", "P1DT4H");
    check_suggest("1 hour and 30 minutes", "PT1H30M");
    check_suggest("-2h", "-PT2H");
    check_suggest("6 months", "P6M");
    check_suggest("1 year", "P1Y");
    check_suggest("30s", "PT30S");
    check_suggest("0.5h", "PT0.5H");
    check_suggest("pt15m", "PT15M");
    check_suggest("p3d", "P3D");
    check_suggest("01:30", "PT1H30M");
    check_suggest("0:15:00", "PT15M");
    check_suggest("00:00", "PT0S");
    check_suggest(" 15 minutes ", "PT15M");
    /* Not durations, or ambiguous: no suggestion. */
    check_suggest("soon", NULL);
    check_suggest("15", NULL);
    check_suggest("m15", NULL);
    check_suggest("30m 1h", NULL); /* units out of order */
    check_suggest("1h 1h", NULL);
    check_suggest("15 fortnights", NULL);
    check_suggest("1.2.3h", NULL);
    check_suggest("", NULL);
    check_suggest("px", NULL);
    check_suggest("1:2:3:4", NULL);
}

static void test_suggest_small_buffer(void **state)
{
    (void)state;
    char buf[4];
    assert_false(kn_duration_suggest("15m", 3, buf, sizeof buf)); /* "PT15M" needs 6 bytes */
    char one[1];
    assert_false(kn_duration_suggest("15m", 3, one, 0));
}

static void test_units(void **state)
{
    (void)state;
    assert_int_equal(kn_duration_units("P15M", 4), KN_DU_MONTHS);
    assert_int_equal(kn_duration_units("PT15M", 5), KN_DU_MINUTES);
    assert_int_equal(kn_duration_units("-P1Y2M3DT4H5M6S", 15),
                     KN_DU_YEARS | KN_DU_MONTHS | KN_DU_DAYS | KN_DU_HOURS | KN_DU_MINUTES | KN_DU_SECONDS);
    assert_int_equal(kn_duration_units("P1W", 3), KN_DU_WEEKS);
    assert_int_equal(kn_duration_units("15m", 3), 0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_zero),
        cmocka_unit_test(test_fixed_units),
        cmocka_unit_test(test_month_bounds),
        cmocka_unit_test(test_year_bounds),
        cmocka_unit_test(test_all_components),
        cmocka_unit_test(test_minute_and_month_share_m),
        cmocka_unit_test(test_negative_swaps_bounds),
        cmocka_unit_test(test_fractions),
        cmocka_unit_test(test_fraction_rounds_to_nearest),
        cmocka_unit_test(test_fraction_halves_to_even),
        cmocka_unit_test(test_fraction_many_digits),
        cmocka_unit_test(test_leading_zeros),
        cmocka_unit_test(test_maximum_is_accepted),
        cmocka_unit_test(test_explicit_length_is_honoured),
        cmocka_unit_test(test_null_error_outputs),
        cmocka_unit_test(test_err_empty),
        cmocka_unit_test(test_err_p_alone),
        cmocka_unit_test(test_err_t_without_time),
        cmocka_unit_test(test_err_start),
        cmocka_unit_test(test_err_white_space),
        cmocka_unit_test(test_err_embedded_nul),
        cmocka_unit_test(test_err_unit_side_of_t),
        cmocka_unit_test(test_err_order_and_repeats),
        cmocka_unit_test(test_err_unit_letter),
        cmocka_unit_test(test_err_junk_after_component),
        cmocka_unit_test(test_err_fraction_form),
        cmocka_unit_test(test_err_fraction_not_last),
        cmocka_unit_test(test_err_too_large),
        cmocka_unit_test(test_err_long_digit_string),
        cmocka_unit_test(test_err_long_hostile_inputs),
        cmocka_unit_test(test_random_strings_are_safe),
        cmocka_unit_test(test_add_finite),
        cmocka_unit_test(test_add_saturates),
        cmocka_unit_test(test_add_infinities),
        cmocka_unit_test(test_neg),
        cmocka_unit_test(test_interval_ops),
        cmocka_unit_test(test_interval_add_keeps_order),
        cmocka_unit_test(test_seconds),
        cmocka_unit_test(test_format_examples),
        cmocka_unit_test(test_format_all_units),
        cmocka_unit_test(test_format_largest_fits),
        cmocka_unit_test(test_format_truncates),
        cmocka_unit_test(test_suggest_informal),
        cmocka_unit_test(test_suggest_small_buffer),
        cmocka_unit_test(test_units),
    };
    return cmocka_run_group_tests_name("duration", tests, NULL, NULL);
}

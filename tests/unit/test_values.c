/* test_values.c - unit tests of typed field reading (src/data/values.c):
 * missing markers, numbers, booleans, timestamps and dates. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <string.h>

#include <cmocka.h>

#include "../../src/data/values.h"

#define US_PER_DAY INT64_C(86400000000)
#define S(lit) (lit), (sizeof(lit) - 1)

static void test_missing_markers(void **state)
{
    (void)state;
    assert_true(kn_value_is_missing(S("")));
    assert_true(kn_value_is_missing(S("NA")));
    assert_true(kn_value_is_missing(S("na")));
    assert_true(kn_value_is_missing(S("NaN")));
    assert_true(kn_value_is_missing(S("null")));
    assert_true(kn_value_is_missing(S("NULL")));
    assert_true(kn_value_is_missing(S("  ")));
    assert_true(kn_value_is_missing(S(" NA\t")));
    assert_true(kn_value_is_missing(NULL, 0));
    assert_false(kn_value_is_missing(S("N/A")));
    assert_false(kn_value_is_missing(S("NAN2")));
    assert_false(kn_value_is_missing(S("0")));
    assert_false(kn_value_is_missing(S("nul")));
}

static void test_number_forms(void **state)
{
    (void)state;
    double v = 0;
    assert_int_equal(kn_value_number(S("42"), &v), KN_VALUE_OK);
    assert_true(v == 42.0);
    assert_int_equal(kn_value_number(S("-3.25"), &v), KN_VALUE_OK);
    assert_true(v == -3.25);
    assert_int_equal(kn_value_number(S("+.5"), &v), KN_VALUE_OK);
    assert_true(v == 0.5);
    assert_int_equal(kn_value_number(S("7."), &v), KN_VALUE_OK);
    assert_true(v == 7.0);
    assert_int_equal(kn_value_number(S("1e3"), &v), KN_VALUE_OK);
    assert_true(v == 1000.0);
    assert_int_equal(kn_value_number(S("2.5E-2"), &v), KN_VALUE_OK);
    assert_true(v == 0.025);
    assert_int_equal(kn_value_number(S(" 12 "), &v), KN_VALUE_OK);
    assert_true(v == 12.0);
    assert_int_equal(kn_value_number(S("0.1"), &v), KN_VALUE_OK);
    assert_true(v == 0.1);
}

static void test_number_not_nul_terminated(void **state)
{
    (void)state;
    const char text[] = "12345";
    double v = 0;
    assert_int_equal(kn_value_number(text, 2, &v), KN_VALUE_OK);
    assert_true(v == 12.0);
}

static void test_number_invalid(void **state)
{
    (void)state;
    double v = 99;
    const char *bad[] = {"abc", "1,5", "0x1A", "inf", "-inf", "Infinity", "1e", "1e+", "e5",
                         ".", "-", "+", "1.2.3", "1 2", "--1", "1e999", "-1e400", "12kg", "N/A"};
    for (size_t i = 0; i < sizeof bad / sizeof *bad; i++) {
        assert_int_equal(kn_value_number(bad[i], strlen(bad[i]), &v), KN_VALUE_INVALID);
    }
    assert_true(v == 99);
}

static void test_number_missing(void **state)
{
    (void)state;
    double v;
    assert_int_equal(kn_value_number(S(""), &v), KN_VALUE_MISSING);
    assert_int_equal(kn_value_number(S("NaN"), &v), KN_VALUE_MISSING);
    assert_int_equal(kn_value_number(S("null"), &v), KN_VALUE_MISSING);
}

static void test_number_too_long(void **state)
{
    (void)state;
    char text[400];
    memset(text, '0', sizeof text);
    text[299] = '5';
    double v = 0;
    assert_int_equal(kn_value_number(text, 300, &v), KN_VALUE_OK);
    assert_true(v == 5.0);
    text[300] = '5';
    assert_int_equal(kn_value_number(text, 301, &v), KN_VALUE_INVALID);
}

static void test_number_underflow_is_zero_ish(void **state)
{
    (void)state;
    double v = 1;
    assert_int_equal(kn_value_number(S("1e-400"), &v), KN_VALUE_OK);
    assert_true(v == 0.0);
}

static void test_booleans(void **state)
{
    (void)state;
    bool b = false;
    const char *yes[] = {"true", "TRUE", "True", "yes", "YES", "1", " yes ", "t", "T"}; /* t, f: PostgreSQL */
    const char *no[] = {"false", "False", "no", "NO", "0", "f", "F"};
    for (size_t i = 0; i < sizeof yes / sizeof *yes; i++) {
        b = false;
        assert_int_equal(kn_value_boolean(yes[i], strlen(yes[i]), &b), KN_VALUE_OK);
        assert_true(b);
    }
    for (size_t i = 0; i < sizeof no / sizeof *no; i++) {
        b = true;
        assert_int_equal(kn_value_boolean(no[i], strlen(no[i]), &b), KN_VALUE_OK);
        assert_false(b);
    }
    assert_int_equal(kn_value_boolean(S("y"), &b), KN_VALUE_INVALID);
    assert_int_equal(kn_value_boolean(S("2"), &b), KN_VALUE_INVALID);
    assert_int_equal(kn_value_boolean(S("truee"), &b), KN_VALUE_INVALID);
    assert_int_equal(kn_value_boolean(S("NA"), &b), KN_VALUE_MISSING);
}

static void test_days_from_civil(void **state)
{
    (void)state;
    assert_int_equal(kn_days_from_civil(1970, 1, 1), 0);
    assert_int_equal(kn_days_from_civil(1970, 1, 2), 1);
    assert_int_equal(kn_days_from_civil(1969, 12, 31), -1);
    /* 1970 and 1971 are common years, 1972 a leap year (common practice). */
    assert_int_equal(kn_days_from_civil(1973, 1, 1), 365 + 365 + 366);
    /* 2000 is a leap year (divisible by 400), 1900 is not. */
    assert_int_equal(kn_days_from_civil(2000, 3, 1) - kn_days_from_civil(2000, 2, 28), 2);
    assert_int_equal(kn_days_from_civil(1900, 3, 1) - kn_days_from_civil(1900, 2, 28), 1);
    /* 400 Gregorian years hold 146097 days. */
    assert_int_equal(kn_days_from_civil(2400, 1, 1) - kn_days_from_civil(2000, 1, 1), 146097);
}

static void test_days_in_month(void **state)
{
    (void)state;
    assert_int_equal(kn_days_in_month(2023, 2), 28);
    assert_int_equal(kn_days_in_month(2024, 2), 29);
    assert_int_equal(kn_days_in_month(1900, 2), 28);
    assert_int_equal(kn_days_in_month(2000, 2), 29);
    assert_int_equal(kn_days_in_month(2024, 4), 30);
    assert_int_equal(kn_days_in_month(2024, 12), 31);
    assert_int_equal(kn_days_in_month(2024, 13), 0);
}

static void test_date(void **state)
{
    (void)state;
    int64_t us = -1;
    assert_int_equal(kn_value_date(S("1970-01-01"), &us), KN_VALUE_OK);
    assert_int_equal(us, 0);
    assert_int_equal(kn_value_date(S("2024-02-29"), &us), KN_VALUE_OK);
    assert_int_equal(us, kn_days_from_civil(2024, 2, 29) * US_PER_DAY);
    assert_int_equal(kn_value_date(S("1969-12-31"), &us), KN_VALUE_OK);
    assert_int_equal(us, -US_PER_DAY);
    const char *bad[] = {"2023-02-29", "1900-02-29", "2024-13-01", "2024-00-10", "2024-04-31",
                         "2024-01-00", "2024-1-01", "24-01-01", "2024/01/01", "2024-01-01T00:00",
                         "2024-01-011", "20240101"};
    for (size_t i = 0; i < sizeof bad / sizeof *bad; i++) {
        assert_int_equal(kn_value_date(bad[i], strlen(bad[i]), &us), KN_VALUE_INVALID);
    }
    assert_int_equal(kn_value_date(S("NA"), &us), KN_VALUE_MISSING);
}

static void test_timestamp_forms(void **state)
{
    (void)state;
    int64_t day = kn_days_from_civil(2024, 3, 10) * US_PER_DAY;
    int64_t noon = day + INT64_C(12) * 3600 * 1000000;
    int64_t us = 0;
    unsigned flags = 99;
    assert_int_equal(kn_value_timestamp(S("2024-03-10T12:00"), &us, &flags), KN_VALUE_OK);
    assert_int_equal(us, noon);
    assert_int_equal(flags, 0);
    assert_int_equal(kn_value_timestamp(S("2024-03-10 12:00:00"), &us, NULL), KN_VALUE_OK);
    assert_int_equal(us, noon);
    assert_int_equal(kn_value_timestamp(S("2024-03-10T12:00:00Z"), &us, &flags), KN_VALUE_OK);
    assert_int_equal(us, noon);
    assert_int_equal(flags, KN_TS_OFFSET);
    assert_int_equal(kn_value_timestamp(S("2024-03-10T13:30:00+01:30"), &us, NULL), KN_VALUE_OK);
    assert_int_equal(us, noon);
    assert_int_equal(kn_value_timestamp(S("2024-03-10T07:00:00-0500"), &us, NULL), KN_VALUE_OK);
    assert_int_equal(us, noon);
    assert_int_equal(kn_value_timestamp(S("2024-03-10T14:00+02"), &us, NULL), KN_VALUE_OK);
    assert_int_equal(us, noon);
    assert_int_equal(kn_value_timestamp(S("2024-03-10t12:00:00z"), &us, NULL), KN_VALUE_OK);
    assert_int_equal(us, noon);
    assert_int_equal(kn_value_timestamp(S("2024-03-10"), &us, &flags), KN_VALUE_OK);
    assert_int_equal(us, day);
    assert_int_equal(flags, KN_TS_DATE_ONLY);
}

static void test_timestamp_fraction(void **state)
{
    (void)state;
    int64_t us = 0;
    assert_int_equal(kn_value_timestamp(S("1970-01-01T00:00:01.5Z"), &us, NULL), KN_VALUE_OK);
    assert_int_equal(us, 1500000);
    assert_int_equal(kn_value_timestamp(S("1970-01-01T00:00:00.000001"), &us, NULL), KN_VALUE_OK);
    assert_int_equal(us, 1);
    assert_int_equal(kn_value_timestamp(S("1970-01-01T00:00:00,123456789"), &us, NULL), KN_VALUE_OK);
    assert_int_equal(us, 123456);
    assert_int_equal(kn_value_timestamp(S("1969-12-31T23:59:59.25Z"), &us, NULL), KN_VALUE_OK);
    assert_int_equal(us, -750000);
    assert_int_equal(kn_value_timestamp(S("1970-01-01T00:00:00.1234567890"), &us, NULL),
                     KN_VALUE_INVALID);
    assert_int_equal(kn_value_timestamp(S("1970-01-01T00:00:00."), &us, NULL), KN_VALUE_INVALID);
}

static void test_timestamp_invalid(void **state)
{
    (void)state;
    int64_t us = 0;
    const char *bad[] = {
        "2024-03-10T24:00",      "2024-03-10T12:60",       "2024-03-10T12:00:60",
        "2024-03-10T12",         "2024-03-10T1:00",        "2024-03-10X12:00",
        "2024-02-30T00:00",      "2024-03-10T12:00+24:00", "2024-03-10T12:00+01:60",
        "2024-03-10T12:00+1",    "2024-03-10T12:00Zjunk",  "2024-03-10T",
        "2024-03-10T12:00:00.5.5", "2024-03-10T12:00 Z",   "2024-03-10T12:00:00+01:00:00",
        "now",
    };
    for (size_t i = 0; i < sizeof bad / sizeof *bad; i++) {
        assert_int_equal(kn_value_timestamp(bad[i], strlen(bad[i]), &us, NULL), KN_VALUE_INVALID);
    }
    assert_int_equal(kn_value_timestamp(S(" null "), &us, NULL), KN_VALUE_MISSING);
}

static void test_timestamp_range_ends(void **state)
{
    (void)state;
    int64_t us = 0;
    assert_int_equal(kn_value_timestamp(S("0000-01-01T00:00:00Z"), &us, NULL), KN_VALUE_OK);
    assert_int_equal(us, kn_days_from_civil(0, 1, 1) * US_PER_DAY);
    assert_int_equal(kn_value_timestamp(S("9999-12-31T23:59:59.999999-23:59"), &us, NULL),
                     KN_VALUE_OK);
    assert_true(us > 0);
}

/* The rulebook's missing_values (SPEC §6): trimmed, ASCII case ignored,
 * exactly the words listed. */
static void test_missing_set(void **state)
{
    (void)state;
    static const char *const words[] = {"", "NA", "N/A", "NaN", "null"};
    kn_missing m;
    kn_missing_init(&m, words, 5);
    assert_true(kn_missing_test(&m, "", 0));
    assert_true(kn_missing_test(&m, "  ", 2));
    assert_true(kn_missing_test(&m, "n/a", 3));
    assert_true(kn_missing_test(&m, " N/A\t", 5));
    assert_true(kn_missing_test(&m, "NULL", 4));
    assert_false(kn_missing_test(&m, "N/A/B", 5));
    assert_false(kn_missing_test(&m, "NAN!", 4));
    assert_false(kn_missing_test(&m, "12", 2));
    assert_false(kn_missing_test(&m, "-", 1));
    static const char *const dash[] = {"-", "unknown"};
    kn_missing d;
    kn_missing_init(&d, dash, 2);
    assert_true(kn_missing_test(&d, "-", 1));
    assert_true(kn_missing_test(&d, "Unknown", 7));
    assert_false(kn_missing_test(&d, "", 0));
    assert_false(kn_missing_test(&d, "NA", 2));
    kn_missing none;
    kn_missing_init(&none, NULL, 0);
    assert_false(kn_missing_test(&none, "", 0));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_missing_markers),
        cmocka_unit_test(test_missing_set),
        cmocka_unit_test(test_number_forms),
        cmocka_unit_test(test_number_not_nul_terminated),
        cmocka_unit_test(test_number_invalid),
        cmocka_unit_test(test_number_missing),
        cmocka_unit_test(test_number_too_long),
        cmocka_unit_test(test_number_underflow_is_zero_ish),
        cmocka_unit_test(test_booleans),
        cmocka_unit_test(test_days_from_civil),
        cmocka_unit_test(test_days_in_month),
        cmocka_unit_test(test_date),
        cmocka_unit_test(test_timestamp_forms),
        cmocka_unit_test(test_timestamp_fraction),
        cmocka_unit_test(test_timestamp_invalid),
        cmocka_unit_test(test_timestamp_range_ends),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

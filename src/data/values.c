/* values.c - typed reading of CSV fields (see values.h): hand-written
 * grammar checks, then strtod for correctly rounded numbers and civil-date
 * arithmetic for timestamps.  No allocation. */
#include "values.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#define MAX_NUMBER_TEXT 300

static bool is_digit(char c)
{
    return c >= '0' && c <= '9';
}

static char lower(char c)
{
    return (c >= 'A' && c <= 'Z') ? (char)(c - 'A' + 'a') : c;
}

/* Drops ASCII spaces and tabs at both ends. */
static void trim(const char **s, size_t *len)
{
    const char *p = *s;
    size_t n = p ? *len : 0;
    while (n && (*p == ' ' || *p == '\t')) {
        p++;
        n--;
    }
    while (n && (p[n - 1] == ' ' || p[n - 1] == '\t')) {
        n--;
    }
    *s = p;
    *len = n;
}

static bool equals_nocase(const char *s, size_t len, const char *word)
{
    size_t n = strlen(word);
    if (len != n) {
        return false;
    }
    for (size_t i = 0; i < n; i++) {
        if (lower(s[i]) != word[i]) {
            return false;
        }
    }
    return true;
}

bool kn_value_is_missing(const char *s, size_t len)
{
    trim(&s, &len);
    return len == 0 || equals_nocase(s, len, "na") || equals_nocase(s, len, "nan") ||
           equals_nocase(s, len, "null");
}

void kn_missing_init(kn_missing *m, const char *const *words, size_t n)
{
    m->words = words;
    m->n = n;
    m->lengths = 0;
    m->long_words = false;
    for (size_t i = 0; i < n; i++) {
        size_t len = strlen(words[i]);
        if (len < 64) {
            m->lengths |= (uint64_t)1 << len;
        } else {
            m->long_words = true;
        }
    }
}

bool kn_missing_compare(const kn_missing *m, const char *s, size_t len)
{
    trim(&s, &len);
    if (len < 64 ? !(m->lengths >> len & 1) : !m->long_words) {
        return false;
    }
    for (size_t i = 0; i < m->n; i++) {
        const char *w = m->words[i];
        size_t j = 0;
        while (j < len && w[j] && lower(s[j]) == lower(w[j])) {
            j++;
        }
        if (j == len && w[j] == '\0') {
            return true;
        }
    }
    return false;
}

/* Checks the decimal grammar of values.h; true when s[0..len) is a number. */
static bool number_syntax(const char *s, size_t len)
{
    size_t i = 0;
    if (i < len && (s[i] == '+' || s[i] == '-')) {
        i++;
    }
    size_t int_digits = 0, frac_digits = 0;
    while (i < len && is_digit(s[i])) {
        i++;
        int_digits++;
    }
    if (i < len && s[i] == '.') {
        i++;
        while (i < len && is_digit(s[i])) {
            i++;
            frac_digits++;
        }
    }
    if (int_digits + frac_digits == 0) {
        return false;
    }
    if (i < len && (s[i] == 'e' || s[i] == 'E')) {
        i++;
        if (i < len && (s[i] == '+' || s[i] == '-')) {
            i++;
        }
        size_t exp_digits = 0;
        while (i < len && is_digit(s[i])) {
            i++;
            exp_digits++;
        }
        if (exp_digits == 0) {
            return false;
        }
    }
    return i == len;
}

kn_value_status kn_value_number(const char *s, size_t len, double *out)
{
    if (kn_value_is_missing(s, len)) {
        return KN_VALUE_MISSING;
    }
    trim(&s, &len);
    if (len > MAX_NUMBER_TEXT || !number_syntax(s, len)) {
        return KN_VALUE_INVALID;
    }
    /* strtod needs a NUL after the text; the caller's view may not have one. */
    char text[MAX_NUMBER_TEXT + 1];
    memcpy(text, s, len);
    text[len] = '\0';
    errno = 0;
    char *end;
    double v = strtod(text, &end);
    if (end != text + len || !isfinite(v)) {
        return KN_VALUE_INVALID;
    }
    *out = v;
    return KN_VALUE_OK;
}

kn_value_status kn_value_boolean(const char *s, size_t len, bool *out)
{
    if (kn_value_is_missing(s, len)) {
        return KN_VALUE_MISSING;
    }
    trim(&s, &len);
    /* t and f are how PostgreSQL writes booleans (COPY ... TO, psql). */
    if (equals_nocase(s, len, "true") || equals_nocase(s, len, "yes") ||
        equals_nocase(s, len, "1") || equals_nocase(s, len, "t")) {
        *out = true;
        return KN_VALUE_OK;
    }
    if (equals_nocase(s, len, "false") || equals_nocase(s, len, "no") ||
        equals_nocase(s, len, "0") || equals_nocase(s, len, "f")) {
        *out = false;
        return KN_VALUE_OK;
    }
    return KN_VALUE_INVALID;
}

static bool is_leap(int64_t y)
{
    return (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
}

unsigned kn_days_in_month(int64_t year, unsigned month)
{
    static const unsigned days[12] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
    if (month < 1 || month > 12) {
        return 0;
    }
    return month == 2 && is_leap(year) ? 29 : days[month - 1];
}

/* days_from_civil (Howard Hinnant, "chrono-Compatible Low-Level Date
 * Algorithms"): eras of 400 years, years starting in March. */
int64_t kn_days_from_civil(int64_t y, unsigned m, unsigned d)
{
    y -= m <= 2;
    const int64_t era = (y >= 0 ? y : y - 399) / 400;
    const int64_t yoe = y - era * 400;
    const int64_t doy = (153 * (int64_t)(m > 2 ? m - 3 : m + 9) + 2) / 5 + (int64_t)d - 1;
    const int64_t doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    return era * 146097 + doe - 719468;
}

/* Reads exactly n digits at s[*i]; false when they are not all there. */
static bool digits(const char *s, size_t len, size_t *i, size_t n, unsigned *out)
{
    if (len - *i < n) {
        return false;
    }
    unsigned v = 0;
    for (size_t k = 0; k < n; k++) {
        char c = s[*i + k];
        if (!is_digit(c)) {
            return false;
        }
        v = v * 10 + (unsigned)(c - '0');
    }
    *i += n;
    *out = v;
    return true;
}

/* Reads YYYY-MM-DD at the start of s; the day count in *days. */
static bool parse_date_part(const char *s, size_t len, size_t *i, int64_t *days)
{
    unsigned y, m, d;
    if (!digits(s, len, i, 4, &y) || *i >= len || s[*i] != '-') {
        return false;
    }
    (*i)++;
    if (!digits(s, len, i, 2, &m) || *i >= len || s[*i] != '-') {
        return false;
    }
    (*i)++;
    if (!digits(s, len, i, 2, &d)) {
        return false;
    }
    if (m < 1 || m > 12 || d < 1 || d > kn_days_in_month(y, m)) {
        return false;
    }
    *days = kn_days_from_civil(y, m, d);
    return true;
}

kn_value_status kn_value_date(const char *s, size_t len, int64_t *us)
{
    if (kn_value_is_missing(s, len)) {
        return KN_VALUE_MISSING;
    }
    trim(&s, &len);
    size_t i = 0;
    int64_t days;
    if (!parse_date_part(s, len, &i, &days) || i != len) {
        return KN_VALUE_INVALID;
    }
    *us = days * INT64_C(86400000000);
    return KN_VALUE_OK;
}

/* Reads an optional UTC offset; seconds east of UTC in *east. */
static bool parse_offset(const char *s, size_t len, size_t *i, int64_t *east, bool *given)
{
    *east = 0;
    *given = false;
    if (*i == len) {
        return true;
    }
    char c = s[*i];
    if (c == 'Z' || c == 'z') {
        (*i)++;
        *given = true;
        return true;
    }
    if (c != '+' && c != '-') {
        return false;
    }
    (*i)++;
    unsigned hh, mm = 0;
    if (!digits(s, len, i, 2, &hh)) {
        return false;
    }
    if (*i < len) {
        if (s[*i] == ':') {
            (*i)++;
        }
        if (!digits(s, len, i, 2, &mm)) {
            return false;
        }
    }
    if (hh > 23 || mm > 59) {
        return false;
    }
    *east = (int64_t)(hh * 3600 + mm * 60) * (c == '-' ? -1 : 1);
    *given = true;
    return true;
}

kn_value_status kn_value_timestamp(const char *s, size_t len, int64_t *us, unsigned *flags)
{
    if (kn_value_is_missing(s, len)) {
        return KN_VALUE_MISSING;
    }
    trim(&s, &len);
    size_t i = 0;
    int64_t days;
    if (!parse_date_part(s, len, &i, &days)) {
        return KN_VALUE_INVALID;
    }
    if (i == len) {
        *us = days * INT64_C(86400000000);
        if (flags) {
            *flags = KN_TS_DATE_ONLY;
        }
        return KN_VALUE_OK;
    }
    if (s[i] != 'T' && s[i] != 't' && s[i] != ' ') {
        return KN_VALUE_INVALID;
    }
    i++;
    unsigned hh, mi, ss = 0;
    if (!digits(s, len, &i, 2, &hh) || i >= len || s[i] != ':' ) {
        return KN_VALUE_INVALID;
    }
    i++;
    if (!digits(s, len, &i, 2, &mi)) {
        return KN_VALUE_INVALID;
    }
    int64_t micro = 0;
    if (i < len && s[i] == ':') {
        i++;
        if (!digits(s, len, &i, 2, &ss)) {
            return KN_VALUE_INVALID;
        }
        if (i < len && (s[i] == '.' || s[i] == ',')) {
            i++;
            size_t n = 0;
            int64_t scale = 100000;
            while (i < len && is_digit(s[i])) {
                if (n < 6) {
                    micro += (s[i] - '0') * scale;
                    scale /= 10;
                }
                n++;
                i++;
            }
            if (n == 0 || n > 9) {
                return KN_VALUE_INVALID;
            }
        }
    }
    if (hh > 23 || mi > 59 || ss > 59) {
        return KN_VALUE_INVALID;
    }
    int64_t east;
    bool given;
    if (!parse_offset(s, len, &i, &east, &given) || i != len) {
        return KN_VALUE_INVALID;
    }
    int64_t secs = days * 86400 + (int64_t)(hh * 3600 + mi * 60 + ss) - east;
    *us = secs * INT64_C(1000000) + micro;
    if (flags) {
        *flags = given ? KN_TS_OFFSET : 0u;
    }
    return KN_VALUE_OK;
}

/* duration.c - ISO 8601 durations (PnYnMnWnDTnHnMnS) read into intervals of
 * microseconds, saturating arithmetic on interval ends, and the compact
 * human form used in messages.  The schema loader hands every DURATION
 * scalar to kn_duration_parse; the timeline solver adds and negates the
 * resulting kn_interval values; renderers format them.
 *
 * Decisions the header leaves open:
 * - Only upper-case designators are accepted; ISO 8601 allows no others.
 * - A fraction needs a digit before and after the decimal mark ("0.5",
 *   not ".5" or "5.").
 * - Fractions are rounded to the nearest microsecond, halves to even (the
 *   rule of Python's datetime.timedelta), exactly for any number of digits.
 * - kn_time_add(+inf, -inf) is +inf and kn_time_add(-inf, +inf) is -inf:
 *   the first operand's infinity wins.  Callers never need the case; the
 *   choice keeps kn_interval_add monotone, so lo <= hi is preserved. */
#include "duration.h"

#include <stdio.h>
#include <string.h>

/* One designator and the bounds of one unit of it, in seconds. */
typedef struct unit {
    char letter;
    bool time; /* belongs after 'T' */
    int64_t lo_s, hi_s;
} unit;

/* In the order ISO 8601 requires them. */
static const unit units[] = {
    {'Y', false, 365 * 86400, 366 * 86400},
    {'M', false, 28 * 86400, 31 * 86400},
    {'W', false, 7 * 86400, 7 * 86400},
    {'D', false, 86400, 86400},
    {'H', true, 3600, 3600},
    {'M', true, 60, 60},
    {'S', true, 1, 1},
};
enum { N_UNITS = sizeof units / sizeof units[0], FIRST_TIME_UNIT = 4 };

/* A whole part above this is too large in every unit; digits beyond it are
 * still consumed but no longer accumulated, so the value cannot overflow. */
#define WHOLE_CAP (KN_DURATION_MAX / KN_US_PER_SEC)

static const char MSG_FRACTION_NOT_LAST[] =
    "only the last component may have a fraction";
static const char MSG_TOO_LARGE[] = "duration too large";

static bool is_digit(char c)
{
    return c >= '0' && c <= '9';
}

static bool is_space(char c)
{
    return c == ' ' || c == '\t' || c == '\n' || c == '\r' || c == '\f' ||
           c == '\v';
}

static bool fail(size_t *err_off, const char **err, size_t off, const char *msg)
{
    if (err_off) {
        *err_off = off;
    }
    if (err) {
        *err = msg;
    }
    return false;
}

/* Why a character that is not a digit cannot stand where a component (or
 * the end of the duration) was expected. */
static const char *unexpected(char c, char prev)
{
    if (c == '\0') {
        return "unexpected NUL byte";
    }
    if (is_space(c)) {
        return "unexpected white space";
    }
    if (c == '.' || c == ',') {
        return "expected a digit before the decimal mark";
    }
    if (c == '-' || c == '+') {
        return "a sign is allowed only before 'P'";
    }
    if (prev == 'P') {
        return "expected a number after 'P'";
    }
    return "expected a number or 'T'";
}

static const char *unit_after_t(char c)
{
    switch (c) {
    case 'H':
        return "unit 'H' must come after 'T'";
    default:
        return "unit 'S' must come after 'T'";
    }
}

static const char *unit_before_t(char c)
{
    switch (c) {
    case 'Y':
        return "unit 'Y' must come before 'T'";
    case 'W':
        return "unit 'W' must come before 'T'";
    default:
        return "unit 'D' must come before 'T'";
    }
}

/* Index into units[] of designator c in the date or time part, or -1 with
 * *why set. */
static int unit_index(char c, bool in_time, const char **why)
{
    for (int k = 0; k < N_UNITS; k++) {
        if (units[k].letter == c && units[k].time == in_time) {
            return k;
        }
    }
    if (!in_time && (c == 'H' || c == 'S')) {
        *why = unit_after_t(c);
    } else if (in_time && (c == 'Y' || c == 'W' || c == 'D')) {
        *why = unit_before_t(c);
    } else if (c >= 'a' && c <= 'z') {
        *why = "unit letters must be upper case";
    } else if (c == '\0') {
        *why = "unexpected NUL byte";
    } else if (is_space(c)) {
        *why = "unexpected white space";
    } else {
        *why = in_time ? "expected a unit (H, M or S) after the number"
                       : "expected a unit (Y, M, W or D) after the number";
    }
    return -1;
}

/* unit_s seconds times 0.DIGITS, in microseconds, rounded to the nearest
 * microsecond with halves to even.  Exact for any number of digits: the
 * first six digits give whole microseconds directly; the rest are
 * multiplied by unit_s by hand, least significant first, keeping only the
 * carry, the first dropped digit and whether anything below it is nonzero. */
static int64_t fraction_us(const char *d, size_t n, int64_t unit_s)
{
    while (n > 0 && d[n - 1] == '0') {
        n--;
    }
    int64_t high = 0;
    for (size_t k = 0; k < 6; k++) {
        high = high * 10 + (k < n ? d[k] - '0' : 0);
    }
    int64_t carry = 0;
    int dropped = 0;
    bool sticky = false;
    for (size_t j = n; j > 6; j--) {
        int64_t t = (int64_t)(d[j - 1] - '0') * unit_s + carry;
        if (dropped != 0) {
            sticky = true;
        }
        dropped = (int)(t % 10);
        carry = t / 10;
    }
    int64_t us = high * unit_s + carry;
    if (dropped > 5 || (dropped == 5 && (sticky || us % 2 != 0))) {
        us++;
    }
    return us;
}

bool kn_duration_parse(const char *s, size_t len, kn_interval *out,
                       size_t *err_off, const char **err)
{
    size_t i = 0;
    bool negative = false;

    if (len == 0) {
        return fail(err_off, err, 0, "empty duration");
    }
    if (s[0] == '-') {
        negative = true;
        i = 1;
    }
    if (i == len) {
        return fail(err_off, err, i, "expected 'P' after '-'");
    }
    if (s[i] != 'P') {
        const char *why = "a duration starts with 'P'";
        if (s[i] == 'p') {
            why = "designators must be upper case ('P', not 'p')";
        } else if (is_space(s[i])) {
            why = "unexpected white space";
        } else if (s[i] == '\0') {
            why = "unexpected NUL byte";
        } else if (s[i] == '-' || s[i] == '+') {
            why = negative ? "expected 'P' after '-'"
                           : "only '-' may precede 'P'";
        }
        return fail(err_off, err, i, why);
    }
    i++;

    int64_t lo = 0, hi = 0;
    bool in_time = false, any = false;
    int next = 0;              /* smallest units[] index still allowed */
    size_t frac_mark = SIZE_MAX; /* offset of a decimal mark seen so far */
    char prev = 'P';           /* the designator just read */

    while (i < len) {
        if (s[i] == 'T') {
            if (in_time) {
                return fail(err_off, err, i, "'T' appears twice");
            }
            if (frac_mark != SIZE_MAX) {
                return fail(err_off, err, frac_mark, MSG_FRACTION_NOT_LAST);
            }
            in_time = true;
            if (next < FIRST_TIME_UNIT) {
                next = FIRST_TIME_UNIT;
            }
            i++;
            if (i == len || !is_digit(s[i])) {
                return fail(err_off, err, i, "expected a number after 'T'");
            }
            prev = 'T';
            continue;
        }
        if (!is_digit(s[i])) {
            return fail(err_off, err, i, unexpected(s[i], prev));
        }
        if (frac_mark != SIZE_MAX) {
            return fail(err_off, err, frac_mark, MSG_FRACTION_NOT_LAST);
        }

        size_t start = i;
        int64_t whole = 0;
        while (i < len && is_digit(s[i])) {
            if (whole <= WHOLE_CAP) {
                whole = whole * 10 + (s[i] - '0');
            }
            i++;
        }
        const char *frac = NULL;
        size_t frac_len = 0;
        if (i < len && (s[i] == '.' || s[i] == ',')) {
            frac_mark = i;
            i++;
            frac = s + i;
            while (i < len && is_digit(s[i])) {
                i++;
            }
            frac_len = (size_t)(s + i - frac);
            if (frac_len == 0) {
                return fail(err_off, err, i,
                            "expected a digit after the decimal mark");
            }
        }
        if (i == len) {
            return fail(err_off, err, i, "expected a unit letter after the number");
        }

        const char *why = NULL;
        int k = unit_index(s[i], in_time, &why);
        if (k < 0) {
            return fail(err_off, err, i, why);
        }
        if (k < next) {
            return fail(err_off, err, i,
                        k == next - 1 ? "each unit may appear only once"
                                      : "units must come in the order Y, M, W, D, T, H, M, S");
        }
        next = k + 1;

        const unit *u = &units[k];
        if (whole > KN_DURATION_MAX / (u->hi_s * KN_US_PER_SEC)) {
            return fail(err_off, err, start, MSG_TOO_LARGE);
        }
        int64_t add_lo = whole * u->lo_s * KN_US_PER_SEC;
        int64_t add_hi = whole * u->hi_s * KN_US_PER_SEC;
        if (frac) {
            add_lo += fraction_us(frac, frac_len, u->lo_s);
            add_hi += fraction_us(frac, frac_len, u->hi_s);
        }
        /* Each running total and each addend is at most about
         * KN_DURATION_MAX, far below INT64_MAX, so these sums are safe. */
        lo += add_lo;
        hi += add_hi;
        if (hi > KN_DURATION_MAX) {
            return fail(err_off, err, start, MSG_TOO_LARGE);
        }
        any = true;
        prev = u->letter;
        i++;
    }
    if (!any) {
        return fail(err_off, err, i, "expected a number after 'P'");
    }
    if (out) {
        out->lo = negative ? -hi : lo;
        out->hi = negative ? -lo : hi;
    }
    return true;
}

int64_t kn_time_add(int64_t a, int64_t b)
{
    if (a >= KN_TIME_INF || a <= -KN_TIME_INF) {
        return a >= KN_TIME_INF ? KN_TIME_INF : -KN_TIME_INF;
    }
    if (b >= KN_TIME_INF) {
        return KN_TIME_INF;
    }
    if (b <= -KN_TIME_INF) {
        return -KN_TIME_INF;
    }
    if (b > 0 && a >= KN_TIME_INF - b) {
        return KN_TIME_INF;
    }
    if (b < 0 && a <= -KN_TIME_INF - b) {
        return -KN_TIME_INF;
    }
    return a + b;
}

int64_t kn_time_neg(int64_t a)
{
    /* INT64_MIN is not a valid end; read it as -inf so negation is safe. */
    if (a <= -KN_TIME_INF) {
        return KN_TIME_INF;
    }
    return -a;
}

kn_interval kn_interval_add(kn_interval a, kn_interval b)
{
    kn_interval r = {kn_time_add(a.lo, b.lo), kn_time_add(a.hi, b.hi)};
    return r;
}

kn_interval kn_interval_neg(kn_interval a)
{
    kn_interval r = {kn_time_neg(a.hi), kn_time_neg(a.lo)};
    return r;
}

kn_interval kn_interval_point(int64_t t)
{
    kn_interval r = {t, t};
    return r;
}

/* Appends *sep, the decimal digits of v (>= 0) and suffix to tmp at *w. */
static void put_part(char *tmp, size_t *w, const char **sep, long long v, const char *suffix)
{
    for (const char *p = *sep; *p; p++) {
        tmp[(*w)++] = *p;
    }
    char digits[24];
    size_t k = 0;
    do {
        digits[k++] = (char)('0' + v % 10);
        v /= 10;
    } while (v);
    while (k) {
        tmp[(*w)++] = digits[--k];
    }
    for (const char *p = suffix; *p; p++) {
        tmp[(*w)++] = *p;
    }
    *sep = " ";
}

char *kn_duration_format(int64_t us, char *buf, size_t n)
{
    /* Written digit by digit, not with snprintf: a report of many late
     * columns formats tens of thousands of these. */
    char tmp[64];
    size_t w = 0;
    const char *word = NULL;

    if (us >= KN_TIME_INF) {
        word = "unbounded";
    } else if (us <= -KN_TIME_INF) {
        word = "-unbounded";
    } else if (us == 0) {
        word = "0s";
    } else {
        if (us < 0) {
            tmp[w++] = '-';
            us = -us;
        }
        long long days = (long long)(us / KN_US_PER_DAY);
        long long hours = (long long)(us % KN_US_PER_DAY / KN_US_PER_HOUR);
        long long mins = (long long)(us % KN_US_PER_HOUR / KN_US_PER_MIN);
        long long secs = (long long)(us % KN_US_PER_MIN / KN_US_PER_SEC);
        long long micro = (long long)(us % KN_US_PER_SEC);
        const char *sep = "";
        /* At most 13 + 4 + 6 + 17 characters plus a sign: tmp is ample. */
        if (days) {
            put_part(tmp, &w, &sep, days, "d");
        }
        if (hours) {
            put_part(tmp, &w, &sep, hours, "h");
        }
        if (mins) {
            put_part(tmp, &w, &sep, mins, "min");
        }
        if (micro) {
            /* seconds, a point, the six digits of the fraction without
             * trailing zeros */
            char frac[8];
            long long m = micro;
            for (int i = 5; i >= 0; i--) {
                frac[i] = (char)('0' + m % 10);
                m /= 10;
            }
            size_t f = 6;
            while (frac[f - 1] == '0') {
                f--;
            }
            frac[f] = 's';
            frac[f + 1] = '\0';
            put_part(tmp, &w, &sep, secs, ".");
            for (size_t i = 0; frac[i]; i++) {
                tmp[w++] = frac[i];
            }
        } else if (secs) {
            put_part(tmp, &w, &sep, secs, "s");
        }
    }
    if (word) {
        w = strlen(word);
        memcpy(tmp, word, w);
    }
    if (n == 0) {
        return buf;
    }
    if (w >= n) {
        w = n - 1;
    }
    memcpy(buf, tmp, w);
    buf[w] = '\0';
    return buf;
}

double kn_time_seconds(int64_t us)
{
    /* Whole seconds and the remainder separately, so large values keep
     * their microseconds as far as a double can. */
    return (double)(us / KN_US_PER_SEC) + (double)(us % KN_US_PER_SEC) / 1e6;
}

unsigned kn_duration_units(const char *s, size_t len)
{
    size_t i = 0;
    if (i < len && s[i] == '-') {
        i++;
    }
    if (i >= len || s[i] != 'P') {
        return 0;
    }
    unsigned units_used = 0;
    bool in_time = false;
    for (i++; i < len; i++) {
        char c = s[i];
        if (c == 'T') {
            in_time = true;
        } else if (c == 'Y') {
            units_used |= KN_DU_YEARS;
        } else if (c == 'M') {
            units_used |= in_time ? KN_DU_MINUTES : KN_DU_MONTHS;
        } else if (c == 'W') {
            units_used |= KN_DU_WEEKS;
        } else if (c == 'D') {
            units_used |= KN_DU_DAYS;
        } else if (c == 'H') {
            units_used |= KN_DU_HOURS;
        } else if (c == 'S') {
            units_used |= KN_DU_SECONDS;
        }
    }
    return units_used;
}

/* ---- suggestions for informal spellings ---------------------------------- */

static char lower(char c)
{
    return c >= 'A' && c <= 'Z' ? (char)(c - 'A' + 'a') : c;
}

/* The unit index (into units[]) an informal unit word names, or -1. */
static int informal_unit(const char *w, size_t n)
{
    static const struct {
        const char *word;
        int unit;
    } words[] = {
        {"y", 0},       {"yr", 0},     {"yrs", 0},     {"year", 0},    {"years", 0},
        {"mo", 1},      {"mon", 1},    {"mons", 1},    {"month", 1},   {"months", 1},
        {"w", 2},       {"wk", 2},     {"wks", 2},     {"week", 2},    {"weeks", 2},
        {"d", 3},       {"day", 3},    {"days", 3},
        {"h", 4},       {"hr", 4},     {"hrs", 4},     {"hour", 4},    {"hours", 4},
        {"m", 5},       {"min", 5},    {"mins", 5},    {"minute", 5},  {"minutes", 5},
        {"s", 6},       {"sec", 6},    {"secs", 6},    {"second", 6},  {"seconds", 6},
    };
    char buf[8];
    if (n == 0 || n >= sizeof buf) {
        return -1;
    }
    for (size_t i = 0; i < n; i++) {
        buf[i] = lower(w[i]);
    }
    buf[n] = '\0';
    for (size_t i = 0; i < sizeof words / sizeof *words; i++) {
        if (strcmp(words[i].word, buf) == 0) {
            return words[i].unit;
        }
    }
    return -1;
}

/* Appends text to buf at *at, keeping room for the NUL; false when full. */
static bool put(char *buf, size_t n, size_t *at, const char *text, size_t len)
{
    if (*at + len + 1 > n) {
        return false;
    }
    memcpy(buf + *at, text, len);
    *at += len;
    buf[*at] = '\0';
    return true;
}

/* Builds P...T... from one number per unit (NULL: absent). */
static bool build_iso(bool negative, const char *const num[N_UNITS], const size_t num_len[N_UNITS], char *buf,
                      size_t n)
{
    size_t at = 0;
    if (n == 0 || (negative && !put(buf, n, &at, "-", 1)) || !put(buf, n, &at, "P", 1)) {
        return false;
    }
    bool any = false, t = false;
    for (int u = 0; u < N_UNITS; u++) {
        if (!num[u]) {
            continue;
        }
        if (units[u].time && !t) {
            if (!put(buf, n, &at, "T", 1)) {
                return false;
            }
            t = true;
        }
        if (!put(buf, n, &at, num[u], num_len[u]) || !put(buf, n, &at, &units[u].letter, 1)) {
            return false;
        }
        any = true;
    }
    return any;
}

/* "h:mm" or "h:mm:ss" (each part digits; a fraction on the seconds). */
static bool clock_form(const char *s, size_t len, bool negative, char *buf, size_t n)
{
    const char *num[N_UNITS] = {0};
    size_t num_len[N_UNITS] = {0};
    size_t i = 0;
    for (int part = 0; part < 3 && i < len; part++) {
        size_t start = i;
        while (i < len && (is_digit(s[i]) || (part == 2 && s[i] == '.'))) {
            i++;
        }
        if (i == start) {
            return false;
        }
        /* Leading zeros are dropped ("01" -> "1"), keeping one digit. */
        size_t z = start;
        while (z + 1 < i && s[z] == '0' && is_digit(s[z + 1])) {
            z++;
        }
        if (!(i - z == 1 && s[z] == '0')) {
            num[FIRST_TIME_UNIT + part] = s + z;
            num_len[FIRST_TIME_UNIT + part] = i - z;
        }
        if (i < len) {
            if (s[i] != ':' || part == 2) {
                return false;
            }
            i++;
        } else if (part == 0) {
            return false; /* a bare number is not a clock time */
        }
    }
    if (i != len) {
        return false;
    }
    if (!num[4] && !num[5] && !num[6]) {
        num[6] = "0";
        num_len[6] = 1;
    }
    return build_iso(negative, num, num_len, buf, n);
}

bool kn_duration_suggest(const char *s, size_t len, char *buf, size_t n)
{
    /* Trim white space; refuse long or control-laden text. */
    while (len && is_space(*s)) {
        s++, len--;
    }
    while (len && is_space(s[len - 1])) {
        len--;
    }
    if (len == 0 || len > 64 || n == 0) {
        return false;
    }
    for (size_t i = 0; i < len; i++) {
        if ((unsigned char)s[i] < 0x20 || (unsigned char)s[i] >= 0x7f) {
            return false;
        }
    }
    kn_interval iv;
    size_t off;
    const char *why;
    /* ISO in lower case, or with mixed case. */
    if (len + 1 <= n && (lower(s[0]) == 'p' || (len > 1 && s[0] == '-' && lower(s[1]) == 'p'))) {
        for (size_t i = 0; i < len; i++) {
            buf[i] = s[i] >= 'a' && s[i] <= 'z' ? (char)(s[i] - 'a' + 'A') : s[i];
        }
        buf[len] = '\0';
        return kn_duration_parse(buf, len, &iv, &off, &why);
    }
    size_t i = 0;
    bool negative = false;
    if (s[0] == '-') {
        negative = true;
        i = 1;
    }
    if (memchr(s, ':', len)) {
        return clock_form(s + i, len - i, negative, buf, n) && kn_duration_parse(buf, strlen(buf), &iv, &off, &why);
    }
    const char *num[N_UNITS] = {0};
    size_t num_len[N_UNITS] = {0};
    int last = -1;
    bool any = false;
    while (i < len) {
        while (i < len && is_space(s[i])) {
            i++;
        }
        size_t start = i;
        while (i < len && (is_digit(s[i]) || s[i] == '.')) {
            i++;
        }
        if (i == start) {
            return false;
        }
        size_t nstart = start, nlen = i - start;
        while (i < len && is_space(s[i])) {
            i++;
        }
        size_t ustart = i;
        while (i < len && ((s[i] >= 'a' && s[i] <= 'z') || (s[i] >= 'A' && s[i] <= 'Z'))) {
            i++;
        }
        int u = informal_unit(s + ustart, i - ustart);
        /* Units must come largest first, each once, as ISO 8601 writes them. */
        if (u < 0 || u <= last) {
            return false;
        }
        num[u] = s + nstart;
        num_len[u] = nlen;
        last = u;
        any = true;
        while (i < len && (is_space(s[i]) || s[i] == ',')) {
            i++;
        }
        if (i + 3 < len && strncmp(s + i, "and", 3) == 0 && is_space(s[i + 3])) {
            i += 4;
        }
    }
    return any && build_iso(negative, num, num_len, buf, n) && kn_duration_parse(buf, strlen(buf), &iv, &off, &why);
}

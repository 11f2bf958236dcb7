/* values.h - typed reading of one CSV field for `check --data` (SPEC §4.7
 * value-mismatch): numbers, booleans, ISO 8601 timestamps and dates.  Hands
 * on a double, a bool or microseconds since 1970-01-01T00:00:00Z.
 *
 * Every parser takes a view (pointer + length, no NUL needed), ignores
 * ASCII spaces and tabs around the value, and answers one of
 * KN_VALUE_OK / KN_VALUE_MISSING / KN_VALUE_INVALID.
 *
 * Missing markers (the same for every type, compared without regard to
 * ASCII case, after trimming): the empty field, "NA", "NaN" and "null".
 * So "na", "NAN" and "NULL" are missing too; "N/A", "None", "-" and "?"
 * are not (they are invalid for a number). */
#ifndef KN_DATA_VALUES_H
#define KN_DATA_VALUES_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

typedef enum kn_value_status {
    KN_VALUE_OK,
    KN_VALUE_MISSING,
    KN_VALUE_INVALID,
} kn_value_status;

/* True when s[0..len) is one of the missing markers above. */
bool kn_value_is_missing(const char *s, size_t len);

/* The rulebook's `missing_values` (SPEC §6), for the data checks: a cell
 * is missing when, with ASCII spaces and tabs trimmed, it equals one of
 * the words without regard to ASCII case.  The parsers above keep their
 * own markers; the data checks ask kn_missing_test first and treat what a
 * parser calls missing but the set does not as invalid. */
typedef struct kn_missing {
    const char *const *words;
    size_t n;
    uint64_t lengths; /* bit L set when a word has L < 64 bytes */
    bool long_words;  /* a word has 64 bytes or more */
} kn_missing;

/* words must outlive m. */
void kn_missing_init(kn_missing *m, const char *const *words, size_t n);
bool kn_missing_compare(const kn_missing *m, const char *s, size_t len);

/* Inline because it runs once per cell: most cells are ruled out by their
 * length alone (no word that long, no space to trim at either end). */
static inline bool kn_missing_test(const kn_missing *m, const char *s, size_t len)
{
    if (len && len < 64 && !(m->lengths >> len & 1) && s[0] != ' ' && s[0] != '\t' && s[len - 1] != ' ' &&
        s[len - 1] != '\t') {
        return false;
    }
    return kn_missing_compare(m, s, len);
}

/* A decimal number: optional sign, digits with an optional '.' and
 * fraction (or '.' and a fraction alone), optional exponent e|E, sign,
 * digits.  Hexadecimal, "inf", thousands separators and decimal commas
 * are invalid, and so is a value beyond the range of a double or a text
 * longer than 300 bytes.  Rounding is correct (strtod on the checked text;
 * the C library's LC_NUMERIC must be "C", which knowable never changes). */
kn_value_status kn_value_number(const char *s, size_t len, double *out);

/* true/false, yes/no, 1/0, t/f (PostgreSQL), without regard to ASCII case. */
kn_value_status kn_value_boolean(const char *s, size_t len, bool *out);

/* Flags describing what kn_value_timestamp found. */
enum {
    KN_TS_DATE_ONLY = 1u, /* YYYY-MM-DD alone: midnight */
    KN_TS_OFFSET = 2u,    /* a Z or numeric UTC offset was given */
};

/* An ISO 8601 calendar date and time of day:
 *   YYYY-MM-DD[(T|t|' ')HH:MM[:SS[(.|,)F...]][Z|z|(+|-)HH:MM|(+|-)HHMM|(+|-)HH]]
 * Years 0000-9999 of the proleptic Gregorian calendar; month and day are
 * checked, leap years included; hours 00-23, minutes and seconds 00-59 (a
 * leap second 60 is invalid); 1 to 9 fraction digits, cut to microseconds;
 * offsets up to 23:59.  Without an offset the time is taken as UTC.  A date
 * alone is midnight UTC.  Stores microseconds since the epoch (UTC) in *us
 * and, when flags is not NULL, KN_TS_* bits in *flags. */
kn_value_status kn_value_timestamp(const char *s, size_t len, int64_t *us, unsigned *flags);

/* A date YYYY-MM-DD alone (checked as above): midnight UTC in *us. */
kn_value_status kn_value_date(const char *s, size_t len, int64_t *us);

/* Days from 1970-01-01 to the given proleptic Gregorian date (which the
 * caller has checked); Hinnant's days_from_civil algorithm. */
int64_t kn_days_from_civil(int64_t year, unsigned month, unsigned day);

/* Days in a month (1-12) of a year, Gregorian leap rule. */
unsigned kn_days_in_month(int64_t year, unsigned month);

#endif

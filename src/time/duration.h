/* duration.h - ISO 8601 durations as intervals of microseconds.
 *
 * A duration like P1M has no fixed length: it is the interval [28 d, 31 d]
 * (a year [365 d, 366 d]); days are 24 h.  Intervals are carried through all
 * arithmetic, so a verdict computed from them holds for every calendar.
 * Unbounded ends are KN_TIME_INF / -KN_TIME_INF and arithmetic saturates. */
#ifndef KN_TIME_DURATION_H
#define KN_TIME_DURATION_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#define KN_TIME_INF INT64_MAX
#define KN_US_PER_SEC INT64_C(1000000)
#define KN_US_PER_MIN (60 * KN_US_PER_SEC)
#define KN_US_PER_HOUR (3600 * KN_US_PER_SEC)
#define KN_US_PER_DAY (86400 * KN_US_PER_SEC)
/* Durations beyond this magnitude (10,000 years) are refused. */
#define KN_DURATION_MAX (INT64_C(3660000) * KN_US_PER_DAY)

typedef struct kn_interval {
    int64_t lo, hi; /* microseconds; lo <= hi; -KN_TIME_INF / KN_TIME_INF unbounded */
} kn_interval;

/* Parses an ISO 8601 duration PnYnMnWnDTnHnMnS with an optional leading '-'
 * (fractions allowed on the last component; at least one component; a 'T'
 * must be followed by a time component).  On success stores the interval
 * in *out.  On failure returns false, stores in *err_off the byte offset of
 * the offending character and in *err a static English explanation. */
bool kn_duration_parse(const char *s, size_t len, kn_interval *out,
                       size_t *err_off, const char **err);

/* Saturating, infinity-aware arithmetic on interval ends. */
int64_t kn_time_add(int64_t a, int64_t b);
int64_t kn_time_neg(int64_t a);
kn_interval kn_interval_add(kn_interval a, kn_interval b);
kn_interval kn_interval_neg(kn_interval a);
kn_interval kn_interval_point(int64_t t);

/* Compact human form: the nonzero units among d, h, min, s, largest first,
 * separated by spaces, with one leading '-' for negative values: "2d 4h",
 * "30min", "-1h", "1d 5s", "0.25s" (fractional seconds, trailing zeros
 * trimmed), "0s" for zero, "unbounded" for +inf and "-unbounded" for -inf.
 * Writes at most n bytes (NUL included; 48 always suffice) and returns buf. */
char *kn_duration_format(int64_t us, char *buf, size_t n);

/* Seconds as a double for JSON output (inf ends are never passed here). */
double kn_time_seconds(int64_t us);

/* The units a valid ISO 8601 duration is written in (call on a string
 * kn_duration_parse accepted; anything else yields 0). */
enum {
    KN_DU_YEARS = 1 << 0,
    KN_DU_MONTHS = 1 << 1,
    KN_DU_WEEKS = 1 << 2,
    KN_DU_DAYS = 1 << 3,
    KN_DU_HOURS = 1 << 4,
    KN_DU_MINUTES = 1 << 5,
    KN_DU_SECONDS = 1 << 6,
};
unsigned kn_duration_units(const char *s, size_t len);

/* The ISO 8601 spelling of an informal duration, for "did you mean":
 * "15m", "15 min", "5mins", "2h", "2 hours", "3 days", "1w", "1h30m",
 * "1d 4h", "-2h", "6 months", "1 year", "01:30" or "1:30:00" (hours,
 * minutes, seconds), and ISO written in lower case ("pt15m").  "m" alone
 * means minutes.  Writes the suggestion (always one kn_duration_parse
 * accepts) to buf and returns true; false when the text is not one of
 * these forms or does not fit in n bytes. */
bool kn_duration_suggest(const char *s, size_t len, char *buf, size_t n);

#endif

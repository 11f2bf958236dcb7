/* regex.h - PCRE2 patterns compiled once and matched under limits.
 *
 * Every pattern a schema or a rulebook brings (formats, suspicious-name
 * patterns, the identifier pattern) may be hostile: a pattern such as
 * '(a+)+$' backtracks exponentially.  So each pattern is compiled once
 * (with JIT where the platform has it) and every match runs with a match
 * context that caps the backtracking steps, the nesting depth and the heap
 * it may use; a match that hits a cap says so (KN_MATCH_LIMIT) instead of
 * running on, so the caller can report it.
 *
 * Ownership: a kn_regex and everything PCRE2 allocates for it belong to the
 * arena given at compile (or wrap) time and are released by kn_arena_free.
 * A kn_regex is not safe to use from two threads at once (it keeps its
 * match data). */
#ifndef KN_UTIL_REGEX_H
#define KN_UTIL_REGEX_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "arena.h"

typedef struct kn_regex kn_regex;

/* Caps applied to every match (see pcre2_set_match_limit and friends).
 * match: backtracking steps; depth: nested backtracking frames; heap: KiB. */
typedef struct kn_regex_limits {
    uint32_t match;
    uint32_t depth;
    uint32_t heap_kib;
} kn_regex_limits;

/* The defaults: 1,000,000 steps, depth 10,000, 16 MiB of heap; a value of
 * a few kilobytes that needs more than that is refused within milliseconds. */
void kn_regex_limits_default(kn_regex_limits *l);

/* A PCRE2 match context (pcre2_match_context *) with the default limits,
 * freed with the arena, for code that matches compiled patterns itself. */
void *kn_regex_limited_context(kn_arena *a);

/* Why a pattern failed to compile: PCRE2's message and the byte offset in
 * the pattern where it stopped. */
typedef struct kn_regex_error {
    int code;
    size_t offset;
    char message[256];
} kn_regex_error;

/* Compiles pattern (len bytes, UTF-8) with PCRE2_UTF, then JIT-compiles it
 * when the library supports JIT.  Returns NULL and fills *err when PCRE2
 * refuses the pattern; out of memory longjmps through the arena. */
kn_regex *kn_regex_compile(kn_arena *a, const char *pattern, size_t len, kn_regex_error *err);

/* Makes a matcher for a code compiled elsewhere (a pcre2_code_8 *, which
 * stays owned by whoever compiled it and must outlive the matcher). */
kn_regex *kn_regex_wrap(kn_arena *a, void *code);

/* Replaces the limits of one matcher (tests use small ones). */
void kn_regex_set_limits(kn_regex *re, const kn_regex_limits *l);

typedef enum kn_match {
    KN_MATCH_NONE,   /* the subject does not match */
    KN_MATCH_FOUND,  /* it matches */
    KN_MATCH_LIMIT,  /* a match, depth, heap or JIT stack limit was hit */
    KN_MATCH_FAILED, /* any other PCRE2 error (e.g. invalid UTF-8) */
} kn_match;

/* Searches subject (len bytes) for the pattern.  When span is not NULL and
 * the result is KN_MATCH_FOUND, span[0] and span[1] are the byte offsets of
 * the start and end of the match. */
kn_match kn_regex_match(kn_regex *re, const char *subject, size_t len, size_t span[2]);

/* A total budget of matching time for one pattern, so that a pattern tuned
 * to stay just under the per-match limits cannot cost hours over a large
 * sample: every match of the pattern is timed, and once the time spent
 * exceeds KN_REGEX_BUDGET_BASE_MS plus KN_REGEX_BUDGET_NS_PER_BYTE for
 * each byte matched so far (a legitimate pattern needs well under a tenth
 * of that), the pattern is spent.  kn_regex_match applies it to every
 * kn_regex (a spent pattern answers KN_MATCH_LIMIT at once, with its
 * problem saying so); code that calls PCRE2 itself keeps a
 * kn_regex_budget per pattern. */
#define KN_REGEX_BUDGET_BASE_MS 1000
#define KN_REGEX_BUDGET_NS_PER_BYTE 1000

typedef struct kn_regex_budget {
    uint64_t spent_ns;
    uint64_t bytes;
} kn_regex_budget;

/* A monotonic clock in nanoseconds, to pass to kn_regex_budget_charge. */
uint64_t kn_regex_clock(void);

/* Charges one match of len bytes that started at start; true when the
 * budget is now spent. */
bool kn_regex_budget_charge(kn_regex_budget *b, uint64_t start, size_t len);

/* True when re's budget ran out (its later matches answer KN_MATCH_LIMIT
 * at once). */
bool kn_regex_spent(const kn_regex *re);

/* Words for a spent budget (static text). */
const char *kn_regex_budget_words(void);

/* The PCRE2 code (pcre2_code_8 *), for pcre2_pattern_info. */
void *kn_regex_code(const kn_regex *re);

/* True when matches run the JIT-compiled code. */
bool kn_regex_jit(const kn_regex *re);

/* Words for the last KN_MATCH_LIMIT or KN_MATCH_FAILED result of re, e.g.
 * "the match limit of 1000000 backtracking steps was reached" (a buffer
 * inside re, valid until its next match; "" after a clean match). */
const char *kn_regex_problem(const kn_regex *re);

#endif

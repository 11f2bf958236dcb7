/* regex.c - PCRE2 patterns compiled once (JIT where available) and matched
 * under match, depth and heap limits set through a match context on every
 * match.  Hands its callers a tri-state answer: no match, match, or "gave
 * up at a limit", so a hostile pattern costs bounded time and is reported
 * rather than left to run. */
#include "regex.h"
#include "text.h"

#include <stdio.h>
#include <string.h>
#include <time.h>

#define PCRE2_CODE_UNIT_WIDTH 8
#include <pcre2.h>

struct kn_regex {
    pcre2_code *code;
    pcre2_match_data *md;
    pcre2_match_context *mctx;
    bool jit;
    bool may_jit;    /* the JIT is worth trying once the pattern has been used enough */
    unsigned uses;   /* matches so far, counted up to LAZY_JIT_USES */
    kn_regex_budget budget;
    bool spent; /* the budget ran out: every later match answers KN_MATCH_LIMIT */
    kn_regex_limits limits;
    char problem[256];
};

/* The JIT stack grows from 32 KiB up to this size; a pattern that needs
 * more reports PCRE2_ERROR_JIT_STACKLIMIT, which counts as a limit.  One
 * stack serves every pattern of a thread (matches never nest), so that a
 * rulebook of many patterns does not reserve a megabyte for each: 50,000
 * patterns once reserved 50 GB of address space. */
#define JIT_STACK_MAX (1024 * 1024)

/* A pattern is compiled by the JIT on its this-many-th match, not when it
 * is compiled: the JIT costs about 100 matches' worth of time and maps
 * pages of its own, and most patterns of a rulebook match a handful of
 * names on a small schema (the built-in rulebook's patterns took more than
 * half of a 1-column check's instructions).  Until then the interpreter
 * runs, under the same limits. */
#define LAZY_JIT_USES 64

static _Thread_local pcre2_jit_stack *shared_jit_stack;
static _Thread_local bool shared_jit_tried;

/* The thread's JIT stack, made on first use; NULL when it could not be
 * made (the JIT then uses 32 KiB of the machine stack, still bounded).  It
 * lives as long as the thread. */
static pcre2_jit_stack *jit_stack(void)
{
    if (!shared_jit_tried) {
        shared_jit_tried = true;
        shared_jit_stack = pcre2_jit_stack_create(32 * 1024, JIT_STACK_MAX, NULL);
    }
    return shared_jit_stack;
}

void kn_regex_limits_default(kn_regex_limits *l)
{
    l->match = 1000000;
    l->depth = 10000;
    l->heap_kib = 16 * 1024;
}

static void free_code(void *p)
{
    pcre2_code_free(p);
}

static void free_match_context(void *p)
{
    pcre2_match_context_free(p);
}

void *kn_regex_limited_context(kn_arena *a)
{
    kn_defer *d = kn_arena_defer(a, free_match_context, NULL);
    pcre2_match_context *mctx = pcre2_match_context_create(NULL);
    if (!mctx) {
        kn_arena_oom(a);
    }
    d->ptr = mctx;
    kn_regex_limits lim;
    kn_regex_limits_default(&lim);
    pcre2_set_match_limit(mctx, lim.match);
    pcre2_set_depth_limit(mctx, lim.depth);
    pcre2_set_heap_limit(mctx, lim.heap_kib);
    return mctx;
}

static void free_md(void *p)
{
    pcre2_match_data_free(p);
}

static void free_mctx(void *p)
{
    pcre2_match_context_free(p);
}

static void apply_limits(kn_regex *re)
{
    pcre2_set_match_limit(re->mctx, re->limits.match);
    pcre2_set_depth_limit(re->mctx, re->limits.depth);
    pcre2_set_heap_limit(re->mctx, re->limits.heap_kib);
}

/* Builds the match data and context for re->code; every resource is
 * registered with the arena before it is acquired. */
static kn_regex *finish(kn_arena *a, kn_regex *re)
{
    kn_defer *d = kn_arena_defer(a, free_md, NULL);
    re->md = pcre2_match_data_create_from_pattern(re->code, NULL);
    if (!re->md) {
        kn_arena_oom(a);
    }
    d->ptr = re->md;

    d = kn_arena_defer(a, free_mctx, NULL);
    re->mctx = pcre2_match_context_create(NULL);
    if (!re->mctx) {
        kn_arena_oom(a);
    }
    d->ptr = re->mctx;

    kn_regex_limits_default(&re->limits);
    apply_limits(re);
    return re;
}

/* Lets the matches use re's JIT code when it has some. */
static void adopt_jit(kn_regex *re)
{
    size_t jit_size = 0;
    if (pcre2_pattern_info(re->code, PCRE2_INFO_JITSIZE, &jit_size) != 0 || jit_size == 0) {
        return;
    }
    re->jit = true;
    pcre2_jit_stack *st = jit_stack();
    if (st) {
        pcre2_jit_stack_assign(re->mctx, NULL, st);
    }
}

/* Compiles re by the JIT when the library has one.  A pattern the JIT
 * cannot take (rare), or memory the JIT cannot get, leaves the interpreter
 * to match, under the same limits. */
static void use_jit(kn_regex *re)
{
    re->may_jit = false;
    uint32_t have_jit = 0;
    if (pcre2_config(PCRE2_CONFIG_JIT, &have_jit) >= 0 && have_jit &&
        pcre2_jit_compile(re->code, PCRE2_JIT_COMPLETE) == 0) {
        adopt_jit(re);
    }
}

kn_regex *kn_regex_compile(kn_arena *a, const char *pattern, size_t len, kn_regex_error *err)
{
    kn_regex *re = kn_alloc(a, sizeof *re);
    int code = 0;
    PCRE2_SIZE off = 0;
    kn_defer *d = kn_arena_defer(a, free_code, NULL);
    re->code = pcre2_compile((PCRE2_SPTR)pattern, len, PCRE2_UTF, &code, &off, NULL);
    if (!re->code) {
        if (code == PCRE2_ERROR_NOMEMORY) {
            kn_arena_oom(a);
        }
        if (err) {
            err->code = code;
            err->offset = off;
            if (pcre2_get_error_message(code, (PCRE2_UCHAR *)err->message, sizeof err->message) < 0) {
                snprintf(err->message, sizeof err->message, "PCRE2 error %d", code);
            }
        }
        return NULL;
    }
    d->ptr = re->code;
    finish(a, re);
    re->may_jit = true;
    return re;
}

kn_regex *kn_regex_wrap(kn_arena *a, void *code)
{
    kn_regex *re = kn_alloc(a, sizeof *re);
    re->code = code;
    finish(a, re);
    adopt_jit(re); /* the caller's JIT code, if it made some */
    return re;
}

void kn_regex_set_limits(kn_regex *re, const kn_regex_limits *l)
{
    re->limits = *l;
    apply_limits(re);
}

/* True when s is valid UTF-8 as PCRE2 defines it (no overlong forms, no
 * surrogates, nothing above U+10FFFF). */
static bool valid_utf8(const char *s, size_t len)
{
    const unsigned char *p = (const unsigned char *)s;
    size_t i = 0;
    while (i < len) {
        uint64_t w;
        if (i + 8 <= len && (memcpy(&w, p + i, 8), (w & 0x8080808080808080ull) == 0)) {
            i += 8; /* eight ASCII bytes */
            continue;
        }
        if (p[i] < 0x80) {
            i++;
            continue;
        }
        size_t n = kn_utf8_valid_seq(p + i, len - i);
        if (!n) {
            return false;
        }
        i += n;
    }
    return true;
}

/* The coarse clock where there is one: it costs a few nanoseconds where
 * the fine one can cost hundreds, and its ticks (a few milliseconds), read
 * before and after every match, add up to an unbiased estimate of the time
 * spent matching. */
#ifdef CLOCK_MONOTONIC_COARSE
#define BUDGET_CLOCK CLOCK_MONOTONIC_COARSE
#else
#define BUDGET_CLOCK CLOCK_MONOTONIC
#endif

uint64_t kn_regex_clock(void)
{
    struct timespec ts;
    clock_gettime(BUDGET_CLOCK, &ts);
    return (uint64_t)ts.tv_sec * 1000000000u + (uint64_t)ts.tv_nsec;
}

bool kn_regex_budget_charge(kn_regex_budget *b, uint64_t start, size_t len)
{
    uint64_t now = kn_regex_clock();
    b->spent_ns += now > start ? now - start : 0;
    b->bytes += len;
    uint64_t allowed = (uint64_t)KN_REGEX_BUDGET_BASE_MS * 1000000u + b->bytes * KN_REGEX_BUDGET_NS_PER_BYTE;
    return b->spent_ns > allowed;
}

bool kn_regex_spent(const kn_regex *re)
{
    return re->spent;
}

const char *kn_regex_budget_words(void)
{
    return "the pattern spent its total matching time (1 s plus 1 microsecond per byte matched): each "
           "match stays under the per-match limits but costs far more than a pattern should";
}

kn_match kn_regex_match(kn_regex *re, const char *subject, size_t len, size_t span[2])
{
    if (re->spent) {
        snprintf(re->problem, sizeof re->problem, "%s", kn_regex_budget_words());
        return KN_MATCH_LIMIT;
    }
    re->problem[0] = '\0';
    if (re->may_jit && ++re->uses >= LAZY_JIT_USES) {
        use_jit(re);
    }
    uint64_t start = kn_regex_clock();
    /* pcre2_jit_match skips pcre2_match's checks (a third of the cost of a
     * match on a short name), which is safe once the subject is known to be
     * valid UTF-8; anything else goes through pcre2_match and its checks. */
    int rc = re->jit && valid_utf8(subject, len)
                 ? pcre2_jit_match(re->code, (PCRE2_SPTR)subject, len, 0, 0, re->md, re->mctx)
                 : pcre2_match(re->code, (PCRE2_SPTR)subject, len, 0, 0, re->md, re->mctx);
    if (kn_regex_budget_charge(&re->budget, start, len)) {
        re->spent = true;
        snprintf(re->problem, sizeof re->problem, "%s", kn_regex_budget_words());
        return KN_MATCH_LIMIT;
    }
    if (rc >= 0) {
        if (span) {
            PCRE2_SIZE *ov = pcre2_get_ovector_pointer(re->md);
            span[0] = ov[0];
            span[1] = ov[1];
        }
        return KN_MATCH_FOUND;
    }
    switch (rc) {
    case PCRE2_ERROR_NOMATCH:
        return KN_MATCH_NONE;
    case PCRE2_ERROR_MATCHLIMIT:
        snprintf(re->problem, sizeof re->problem, "the match limit of %lu backtracking steps was reached",
                 (unsigned long)re->limits.match);
        return KN_MATCH_LIMIT;
    case PCRE2_ERROR_DEPTHLIMIT:
        snprintf(re->problem, sizeof re->problem, "the depth limit of %lu nested backtracking frames was reached",
                 (unsigned long)re->limits.depth);
        return KN_MATCH_LIMIT;
    case PCRE2_ERROR_HEAPLIMIT:
        snprintf(re->problem, sizeof re->problem, "the heap limit of %lu KiB was reached",
                 (unsigned long)re->limits.heap_kib);
        return KN_MATCH_LIMIT;
    case PCRE2_ERROR_JIT_STACKLIMIT:
        snprintf(re->problem, sizeof re->problem, "the JIT stack limit of %d KiB was reached", JIT_STACK_MAX / 1024);
        return KN_MATCH_LIMIT;
    default: {
        PCRE2_UCHAR msg[120];
        if (pcre2_get_error_message(rc, msg, sizeof msg) < 0) {
            snprintf((char *)msg, sizeof msg, "PCRE2 error %d", rc);
        }
        snprintf(re->problem, sizeof re->problem, "matching failed: %s", (char *)msg);
        return KN_MATCH_FAILED;
    }
    }
}

void *kn_regex_code(const kn_regex *re)
{
    return re->code;
}

bool kn_regex_jit(const kn_regex *re)
{
    return re->jit;
}

const char *kn_regex_problem(const kn_regex *re)
{
    return re->problem;
}

/* diag.h - the diagnostics sink.  Checks push diagnostics here (nothing
 * under src/checks/ prints); the sink applies the rulebook's severities and
 * the waivers, sorts by file, line and column, drops duplicates and hands the
 * result to a renderer (text.c, json.c, sarif.c). */
#ifndef KN_REPORT_DIAG_H
#define KN_REPORT_DIAG_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "../util/arena.h"

/* A position in an input file: 1-based line and column, 0-based byte offset.
 * file is the path as the user gave it (display form); line 0 means "the
 * whole file" (rendered as FILE: without line and column). */
typedef struct kn_pos {
    const char *file;
    uint32_t line, col;
    size_t offset;
} kn_pos;

typedef enum kn_severity {
    KN_SEV_OFF = 0,
    KN_SEV_NOTE = 1,
    KN_SEV_WARNING = 2,
    KN_SEV_ERROR = 3,
} kn_severity;

typedef enum kn_rule {
#define KN_RULE(e, id, sev, fam, sum) KN_R_##e,
#include "rules.def"
#undef KN_RULE
    KN_RULE_COUNT
} kn_rule;

typedef struct kn_rule_info {
    const char *id;
    kn_severity severity;
    const char *family;
    const char *summary;
} kn_rule_info;

/* The static table, indexed by kn_rule. */
const kn_rule_info *kn_rule_get(kn_rule r);
/* Looks a rule up by its id; returns false when there is none. */
bool kn_rule_find(const char *id, size_t len, kn_rule *out);
const char *kn_severity_name(kn_severity s);

/* Explanation texts for `knowable explain` and SARIF help (explain.c). */
typedef struct kn_explain_text {
    const char *finds;   /* what the rule finds */
    const char *why;     /* why it leaks or misleads */
    const char *example; /* a short example schema fragment, our scenarios */
    const char *fix;     /* how to fix it */
} kn_explain_text;
const kn_explain_text *kn_rule_explain(kn_rule r);

typedef struct kn_note {
    kn_pos pos;
    char *message;
} kn_note;

typedef struct kn_diag {
    kn_rule rule;
    kn_severity severity; /* effective, after the rulebook */
    kn_pos pos;
    char *subject; /* column, event or source name; may be "" */
    char *message;
    char *key; /* line-independent identity for the fingerprint; defaults to message */
    kn_note *notes;
    size_t n_notes, cap_notes;
    kn_severity cap; /* when set, the most severe level this finding may take (a
                        "maybe" finding of an error rule is a warning); 0: no cap */
    bool waived;
    bool baselined;
    bool has_range;               /* a timing finding: when the value is available */
    int64_t range_lo, range_hi;   /* microseconds relative to the moment (+-KN_TIME_INF unbounded) */
    uint64_t fingerprint;
    size_t seq; /* push order, the last sort key */
} kn_diag;

typedef struct kn_sink kn_sink;

kn_sink *kn_sink_new(kn_arena *a);

/* Severity overrides from the rulebook; KN_SEV_OFF drops the rule. */
void kn_sink_set_severity(kn_sink *s, kn_rule r, kn_severity sev);
kn_severity kn_sink_severity(const kn_sink *s, kn_rule r);

/* Pushes a diagnostic at pos about subject (may be NULL) and returns it so
 * notes can be added.  All strings are copied into the arena.  Returns a
 * diagnostic even for rules turned off (it is dropped at finish). */
kn_diag *kn_diag_push(kn_sink *s, kn_rule r, const kn_pos *pos,
                      const char *subject, const char *fmt, ...)
    __attribute__((format(printf, 5, 6)));

/* Adds a note at pos (NULL pos: the diagnostic's own file, no line). */
void kn_diag_note(kn_sink *s, kn_diag *d, const kn_pos *pos, const char *fmt, ...)
    __attribute__((format(printf, 4, 5)));

/* Caps the severity this finding may take, whatever the rulebook says (a
 * "maybe" finding of an error rule is at most a warning). */
void kn_diag_cap(kn_diag *d, kn_severity most);

/* Records the availability range a timing finding is about, relative to
 * the moment, for machine-readable output (JSON carries it in seconds). */
void kn_diag_range(kn_diag *d, int64_t lo, int64_t hi);

/* Sets the fingerprint key (default: the message). */
void kn_diag_key(kn_sink *s, kn_diag *d, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));

/* Sorts, drops duplicates and rules turned off, computes fingerprints.
 * Waivers and baselines are applied by their own modules before rendering
 * using kn_sink_diags. */
void kn_sink_finish(kn_sink *s);

/* The diagnostics, in order after kn_sink_finish. */
kn_diag **kn_sink_diags(const kn_sink *s, size_t *n);

/* Counts of shown (not waived, not baselined) diagnostics at sev. */
size_t kn_sink_count(const kn_sink *s, kn_severity sev);
size_t kn_sink_waived(const kn_sink *s);
size_t kn_sink_baselined(const kn_sink *s);

/* True when some shown diagnostic has severity >= at least. */
bool kn_sink_has(const kn_sink *s, kn_severity at_least);

/* True when some diagnostic makes the check impossible (yaml-syntax and
 * friends: exit 2). */
void kn_sink_mark_fatal(kn_sink *s);
bool kn_sink_fatal(const kn_sink *s);

kn_arena *kn_sink_arena(const kn_sink *s);

/* The data checks record that their statistics used a sample of kept of
 * total rows, so the summary can say so; kn_sink_sample returns false when
 * every row was used. */
void kn_sink_set_sample(kn_sink *s, unsigned long long kept, unsigned long long total);
bool kn_sink_sample(const kn_sink *s, unsigned long long *kept, unsigned long long *total);

/* The data checks record each statistic they could not compute because
 * the data cannot support it (SPEC §4.7: skipped one by one, and the JSON
 * says so); subject is the column ("" for all), statistic names what was
 * skipped (roc_auc, uncertainty, a segment, all), reason says why.  The
 * strings must live as long as the sink. */
typedef struct kn_data_skip {
    kn_rule rule;
    const char *subject, *statistic, *reason;
} kn_data_skip;
void kn_sink_data_skip(kn_sink *s, kn_rule rule, const char *subject, const char *statistic, const char *reason);
const kn_data_skip *kn_sink_data_skips(const kn_sink *s, size_t *n);
/* True once kn_sink_set_sample was called: a data file was checked. */
bool kn_sink_has_data(const kn_sink *s);

/* 64-bit FNV-1a, used for fingerprints and hashing. */
uint64_t kn_hash_bytes(uint64_t h, const void *p, size_t n);
#define KN_HASH_INIT 0xcbf29ce484222325ull

#endif

/* diag.h - the diagnostics sink, a closed boundary.  Checks push findings
 * here (nothing under src/checks/ prints) and may only add to them through
 * the functions below: outside src/report/ a diagnostic is an opaque
 * handle.  One finishing pass (kn_sink_finish) applies each schema's
 * rulebook severities and the caps of "maybe" findings, drops duplicates,
 * applies the waivers and reports the findings they raise, sorts by file,
 * line and column, computes fingerprints and marks what the baseline
 * records.  It runs once; a push after it is refused (returns NULL).  The
 * renderers (render.h) read the finished list. */
#ifndef KN_REPORT_DIAG_H
#define KN_REPORT_DIAG_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "../util/arena.h"
#include "../util/pos.h"

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
/* The rules of SPEC §4.1 (family "schema"): a rulebook may not lower them
 * below error, so a broken schema never passes a gate. */
bool kn_rule_is_schema(kn_rule r);

/* Explanation texts for `knowable explain` and SARIF help (explain.c). */
typedef struct kn_explain_text {
    const char *finds;   /* what the rule finds */
    const char *why;     /* why it leaks or misleads */
    const char *example; /* a short example schema fragment, our scenarios */
    const char *fix;     /* how to fix it */
} kn_explain_text;
const kn_explain_text *kn_rule_explain(kn_rule r);

typedef struct kn_diag kn_diag; /* opaque outside src/report/ */
typedef struct kn_sink kn_sink;

kn_sink *kn_sink_new(kn_arena *a);
kn_arena *kn_sink_arena(const kn_sink *s);

/* Starts the findings of one schema: what is pushed from now on takes its
 * severities from sev (KN_RULE_COUNT entries, the schema's rulebook; it
 * must outlive the sink), and waivers declared from now on cover only
 * these findings.  Before the first call the rule table's defaults apply. */
void kn_sink_begin_unit(kn_sink *s, const kn_severity *sev);

/* Pushes a diagnostic at pos about subject (may be NULL) and returns it so
 * notes can be added.  All strings are copied into the arena.  Returns a
 * diagnostic even for rules turned off (it is dropped at finish), and NULL
 * once the sink is finished: every kn_diag_* function ignores NULL. */
kn_diag *kn_diag_push(kn_sink *s, kn_rule r, const kn_pos *pos,
                      const char *subject, const char *fmt, ...)
    __attribute__((format(printf, 5, 6)));

/* Adds a note at pos (NULL pos: the diagnostic's own file, no line). */
void kn_diag_note(kn_sink *s, kn_diag *d, const kn_pos *pos, const char *fmt, ...)
    __attribute__((format(printf, 4, 5)));

/* kn_diag_note for a text that is already made and lives as long as the
 * sink (arena memory): it is kept, not copied (a note shared by many
 * findings, such as one step of a chain of constraints, is made once). */
void kn_diag_note_text(kn_sink *s, kn_diag *d, const kn_pos *pos, const char *text);

/* Caps the severity this finding may take, whatever the rulebook says (a
 * "maybe" finding of an error rule is at most a warning). */
void kn_diag_cap(kn_diag *d, kn_severity most);

/* Records the availability range a timing finding is about, relative to
 * the moment, for machine-readable output (JSON carries it in seconds). */
void kn_diag_range(kn_diag *d, int64_t lo, int64_t hi);

/* Sets the fingerprint key (default: the message).  Tokens with digits
 * outside quotes are left out of the fingerprint either way. */
void kn_diag_key(kn_sink *s, kn_diag *d, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));

/* A waiver (SPEC §3.8) of the current unit: it hides the findings of its
 * rule about subject, or whose position lies in file between start and
 * end (byte offsets), unless it has no reason or is past its date; it
 * raises waiver-without-reason, waiver-expired or waiver-unused.  Strings
 * and positions are borrowed (arena or model memory).  rule < 0: the rule
 * id named nothing (reported by the loader); the waiver then does nothing. */
typedef struct kn_waiver_decl {
    int rule;
    const char *rule_id;       /* as written */
    const char *subject;       /* a column's name, matched with findings' subjects;
                                  NULL for other blocks (matched by place only) */
    const char *block;         /* the block in messages: "source 'x'", "the split";
                                  NULL: "column '<subject>'" */
    const char *file;          /* display path of the block's file */
    size_t start, end;         /* the block's bytes in that file */
    const char *reason;        /* NULL or blank: no reason */
    const char *expires;       /* YYYY-MM-DD or NULL */
    const kn_pos *at;          /* the waiver itself */
    const kn_pos *rule_at, *reason_at, *expires_at; /* its values (may be NULL) */
} kn_waiver_decl;
void kn_sink_waiver(kn_sink *s, const kn_waiver_decl *w);

/* The fingerprints of a baseline (SPEC §7), read before the analysis: each
 * recorded fingerprint hides as many findings as it was recorded for. */
void kn_sink_baseline(kn_sink *s, const uint64_t *fingerprints, size_t n);

/* Paths in fingerprints are made relative to root (a real path; NULL: each
 * file's repository, the nearest folder upwards that holds .git). */
void kn_sink_set_root(kn_sink *s, const char *root);

/* The one finishing pass (see the top of this file); today is YYYY-MM-DD
 * for waiver expiry (NULL: waivers never expire).  Runs once. */
void kn_sink_finish(kn_sink *s, const char *today);
bool kn_sink_finished(const kn_sink *s);

/* The number of diagnostics pushed so far. */
size_t kn_sink_pushed(const kn_sink *s);

/* Counts of shown (not waived, not baselined) diagnostics at sev, after
 * kn_sink_finish. */
size_t kn_sink_count(const kn_sink *s, kn_severity sev);
size_t kn_sink_waived(const kn_sink *s);
size_t kn_sink_baselined(const kn_sink *s);

/* True when some shown diagnostic has severity >= at_least. */
bool kn_sink_has(const kn_sink *s, kn_severity at_least);

/* True when some diagnostic makes the check impossible (yaml-syntax and
 * friends: exit 2). */
void kn_sink_mark_fatal(kn_sink *s);
bool kn_sink_fatal(const kn_sink *s);

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

#endif

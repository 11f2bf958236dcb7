/* docs.h - the documents knowable writes for reviewers: the timeline report
 * (each event and column placed relative to the moment) and the register of
 * sources.  Documents read the schema model, the solved timeline and the
 * findings of the finished sink (what `check` says); they never push
 * diagnostics. */
#ifndef KN_DOCS_DOCS_H
#define KN_DOCS_DOCS_H

#include <stdio.h>

#include "../report/view.h"
#include "../rulebook/rulebook.h"
#include "../schema/schema.h"
#include "../time/timeline.h"

/* How the documents group a column, decided by the check's findings about
 * it (findings.c): a feature is late exactly when the check pushed a timing
 * finding that says so; non-features (identifiers, the target, timestamps,
 * split, weight, excluded) are never late; a column that declares none of
 * known, window and derived_from has no timing, whatever its join says. */
typedef enum kn_row_class {
    KN_ROW_LATE,        /* a feature late in every case */
    KN_ROW_MAYBE,       /* a feature late in some cases */
    KN_ROW_FROM_TARGET, /* built-from-target, and not late for another reason */
    KN_ROW_UNORDERED,   /* unordered-event */
    KN_ROW_RULE_OFF,    /* the timeline places it late, the rulebook turned
                           the rule off */
    KN_ROW_AVAILABLE,
    KN_ROW_NOT_FEATURE, /* placed, but not given to the model as a feature */
    KN_ROW_NO_TIMING,
    KN_ROW_NOT_PLACED,  /* set aside: a schema error, a cycle, an input not placed */
    KN_ROW_CLASS_COUNT
} kn_row_class;

typedef struct kn_row_finding {
    kn_rule rule;
    kn_severity severity;
    bool waived;
    const char *reason; /* the waiver's, when waived */
    bool some_cases;
    const char *message;
} kn_row_finding;

typedef struct kn_doc_row {
    kn_row_class cls;
    const kn_row_finding *findings; /* in report order */
    size_t n_findings;
} kn_doc_row;

typedef struct kn_doc_findings {
    const kn_doc_row *rows; /* one per column, by kn_column.index */
    size_t n_rows;
    const kn_view *all;     /* every finding of the schema, waived included */
    size_t n_all;
} kn_doc_findings;

/* The findings of one schema in a finished sink (unit: its kn_sink_begin_unit
 * number, 0: every finding), grouped by column.  sink may be NULL or not
 * finished: then there are no findings.  Arena memory. */
const kn_doc_findings *kn_doc_findings_make(kn_arena *a, const kn_sink *sink, size_t unit, const kn_schema *s,
                                            const kn_timeline *t);

/* The heading of a group, as the documents print it (groups are shown in
 * the order of kn_row_class). */
const char *kn_row_class_heading(kn_row_class c);
/* "maybe after the moment", "no timing declared", ... */
const char *kn_row_class_words(kn_row_class c);
/* A column's verdict in the words of the documents and the editor's hover:
 * its group's words, "the target: not a feature", or "not placed: WHY"
 * (raw, arena memory). */
const char *kn_row_verdict_words(kn_arena *a, const kn_timeline *t, const kn_column *c, kn_row_class cls);
/* "after-moment, join-latest-value (waived)", or "-" (arena memory). */
const char *kn_row_rules_words(kn_arena *a, const kn_doc_row *row);
/* The source of schema s a finding is against, or NULL: a source's own
 * finding (its provenance, that nothing uses it), or a column's that names
 * the source it reads (a latest-value join, a join that cannot go back in
 * time, unsettled values): the join's source, else the column's own, as
 * the checks read it.  *column is that column, or NULL. */
const kn_source *kn_doc_finding_source(const kn_schema *s, const kn_view *v, const kn_column **column);
/* "after-moment (error)", "join-latest-value (warning, waived)" (arena memory). */
const char *kn_row_finding_words(kn_arena *a, const kn_row_finding *f);
/* Where a column's timing and value come from, every name in full (raw:
 * the caller escapes): "known at one of A | B, window on E from -1d to 0s,
 * derived from x, y, source S, as of E -1d, source settles up to 180d
 * later".  Arena memory. */
const char *kn_column_timing_words(kn_arena *a, const kn_column *c);
/* parts joined by sep, in one pass (arena memory). */
const char *kn_doc_join(kn_arena *a, const char *const *parts, size_t n, const char *sep);
/* The names of refs joined by sep, the first KN_DOC_NAMES_SHOWN of them and
 * "and N more" (raw, arena memory): a list of inputs or members stays
 * readable, and costs its length, whatever the schema holds. */
#define KN_DOC_NAMES_SHOWN 12
const char *kn_doc_names(kn_arena *a, const kn_ref *refs, size_t n, const char *sep);
/* Why a column is not placed (KN_ROW_NOT_PLACED), raw (arena memory). */
const char *kn_column_not_placed_words(kn_arena *a, const kn_timeline *t, const kn_column *c);
/* True for the rules whose subject is a column's name. */
bool kn_rule_about_column(kn_rule r);
/* Declares one of known, known.one_of, window, derived_from. */
bool kn_column_declares_timing(const kn_column *c);
/* A feature: role feature and not the prediction's target. */
bool kn_column_is_feature(const kn_schema *s, const kn_column *c);

/* `knowable timeline SCHEMA` as text: each event's range relative to the
 * moment, then the columns in the groups of f (kn_doc_findings_make), each
 * with its availability range, the rules that fired on it and where its
 * timing comes from, aligned in columns for a terminal.  Names from the schema are escaped (no control
 * character is written raw).  t may be NULL (the moment did not resolve);
 * the report then says so.  Scratch memory comes from t's arena; nothing
 * needs freeing.  Write errors are left in out's error indicator. */
void kn_timeline_write_text(FILE *out, const kn_schema *s, const kn_timeline *t, const kn_doc_findings *f);

/* `knowable timeline SCHEMA --svg FILE`: the same placement as a picture
 * (SVG 1.1): a signed logarithmic time axis around the moment, events as
 * bars, the label horizon against the split's gap as bands on the axis, then
 * columns as bars in the groups of f, each group with its own colour, fill
 * pattern and word, each row with the rules that fired on it (a waiver's
 * reason in the row's <title>).  Every text is escaped for XML; the output
 * depends only on s and t.  t may be NULL or contradictory: the picture then
 * says why nothing is placed.  Scratch memory comes from t's arena.  Write
 * errors are left in out's error indicator. */
void kn_timeline_write_svg(FILE *out, const kn_schema *s, const kn_timeline *t, const kn_doc_findings *f);

/* `knowable sources`: the register of the sources of n schemas (n >= 1),
 * each read under its own rulebook (the register requires the provenance
 * fields any of them requires), as Markdown or JSON, each source with the
 * findings against it (provenance, latest-value joins, unsettled values) and
 * its waivers.  findings[i] holds schema i's (kn_doc_findings_make).  Scratch
 * memory in a. */
void kn_sources_write(FILE *out, kn_arena *a, kn_schema *const *schemas, const kn_rulebook *const *rulebooks,
                      const kn_doc_findings *const *findings, size_t n, bool json);

/* `knowable init`: a draft schema from the CSV file at csv (the first
 * max_rows rows, 0: the default), under rulebook rb: its identifier_names
 * name identifiers, its missing_values are the missing cells.  Returns false after pushing csv-malformed
 * (and marking the sink fatal) when the file cannot be read as CSV. */
bool kn_init_write(FILE *out, kn_sink *sink, kn_arena *a, const char *csv, long long max_rows,
                   const kn_rulebook *rb);

#endif

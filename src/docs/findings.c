/* findings.c - what the check found, as the documents show it: for every
 * column of a schema, the findings about it (waived ones with the waiver's
 * reason) and the group it is drawn in.  The group comes from the findings
 * the analysis pushed into the sink, not from a second reading of the
 * timeline, so the timeline report, its picture and `check` cannot disagree:
 * a column is late in the documents exactly when the check calls it late.
 * Reads a finished sink through its read-only view (report/view.h). */
#include <string.h>

#include "docs.h"
#include "../util/names.h"

static const char *const class_words[KN_ROW_CLASS_COUNT] = {
    [KN_ROW_LATE] = "after the moment",
    [KN_ROW_MAYBE] = "maybe after the moment",
    [KN_ROW_FROM_TARGET] = "built from the target",
    [KN_ROW_UNORDERED] = "unordered: no bound relative to the moment",
    [KN_ROW_RULE_OFF] = "after the moment by the timeline, its rule off in the rulebook",
    [KN_ROW_AVAILABLE] = "available",
    [KN_ROW_NOT_FEATURE] = "not a feature",
    [KN_ROW_NO_TIMING] = "no timing declared",
    [KN_ROW_NOT_PLACED] = "not placed",
};

static const char *const class_headings[KN_ROW_CLASS_COUNT] = {
    [KN_ROW_LATE] = "Features late in every case: available only after the moment",
    [KN_ROW_MAYBE] = "Features late in some cases: part of the range is after the moment",
    [KN_ROW_FROM_TARGET] = "Features built from the target",
    [KN_ROW_UNORDERED] = "Features not ordered relative to the moment: no bound",
    [KN_ROW_RULE_OFF] =
        "Features the timeline places after the moment, their rule turned off by the rulebook",
    [KN_ROW_AVAILABLE] = "Features available at the moment",
    [KN_ROW_NOT_FEATURE] =
        "Not features (target, timestamps, identifiers, split, weight, excluded): never late",
    [KN_ROW_NO_TIMING] = "Columns with no timing: none of known, window, derived_from",
    [KN_ROW_NOT_PLACED] = "Columns not placed",
};

const char *kn_row_class_heading(kn_row_class c)
{
    return c < KN_ROW_CLASS_COUNT ? class_headings[c] : "";
}

const char *kn_row_class_words(kn_row_class c)
{
    return c < KN_ROW_CLASS_COUNT ? class_words[c] : "";
}

const char *kn_row_verdict_words(kn_arena *a, const kn_timeline *t, const kn_column *c, kn_row_class cls)
{
    if (cls == KN_ROW_NOT_PLACED) {
        return kn_printf(a, "not placed: %s", kn_column_not_placed_words(a, t, c));
    }
    if (cls == KN_ROW_NOT_FEATURE && (c->role == KN_ROLE_FEATURE || c->role == KN_ROLE_TARGET)) {
        return "the target: not a feature";
    }
    return kn_row_class_words(cls);
}

const char *kn_row_rules_words(kn_arena *a, const kn_doc_row *row)
{
    if (!row->n_findings) {
        return "-";
    }
    const char **parts = kn_alloc_array(a, row->n_findings, sizeof *parts);
    for (size_t i = 0; i < row->n_findings; i++) {
        const kn_row_finding *f = &row->findings[i];
        parts[i] = f->waived ? kn_printf(a, "%s (waived)", kn_rule_get(f->rule)->id) : kn_rule_get(f->rule)->id;
    }
    return kn_doc_join(a, parts, row->n_findings, ", ");
}

bool kn_rule_about_column(kn_rule r)
{
    /* The families whose subject is a column name; the preparation family
     * names the split or a step, the schema family any name it met. */
    const char *family = kn_rule_get(r)->family;
    if (strcmp(family, "preparation") == 0 || strcmp(family, "schema") == 0) {
        return false;
    }
    return r != KN_R_EXTERNAL_WITHOUT_PROVENANCE && r != KN_R_UNUSED_SOURCE &&
           r != KN_R_TIMELINE_CONTRADICTION;
}

/* The rules by which the check calls a feature late. */
static bool late_rule(kn_rule r)
{
    return r == KN_R_AFTER_MOMENT || r == KN_R_MAYBE_AFTER_MOMENT || r == KN_R_INHERITS_LATE_INPUT ||
           r == KN_R_WINDOW_OVERRUNS || r == KN_R_AS_OF_AFTER_MOMENT;
}

bool kn_column_declares_timing(const kn_column *c)
{
    return c->known.name || c->n_one_of || c->window.present || c->n_derived;
}

bool kn_column_is_feature(const kn_schema *s, const kn_column *c)
{
    return c->role == KN_ROLE_FEATURE && KN_REF_COLUMN(s->prediction.target) != c;
}

static kn_row_class classify(const kn_schema *s, const kn_timeline *t, const kn_column *c,
                             const kn_doc_row *row)
{
    const kn_column_timing *T = kn_timeline_column_timing(t, c);
    if (!T || !T->ordered || c->broken) {
        return KN_ROW_NOT_PLACED;
    }
    bool late = false, maybe = false, from_target = false, unordered = false;
    for (size_t i = 0; i < row->n_findings; i++) {
        const kn_row_finding *f = &row->findings[i];
        if (late_rule(f->rule)) {
            late = late || !f->some_cases;
            maybe = maybe || f->some_cases;
        }
        from_target = from_target || f->rule == KN_R_BUILT_FROM_TARGET;
        unordered = unordered || f->rule == KN_R_UNORDERED_EVENT;
    }
    if (!kn_column_is_feature(s, c)) {
        if (!kn_column_declares_timing(c)) {
            return KN_ROW_NO_TIMING;
        }
        return T->computed ? KN_ROW_NOT_FEATURE : KN_ROW_NOT_PLACED;
    }
    if (late) {
        return KN_ROW_LATE;
    }
    if (maybe) {
        return KN_ROW_MAYBE;
    }
    if (from_target) {
        return KN_ROW_FROM_TARGET;
    }
    if (unordered) {
        return KN_ROW_UNORDERED;
    }
    if (!kn_column_declares_timing(c)) {
        /* an as_of join alone says when the join reads, not when the value
         * exists: missing-known, not "available at the moment" */
        return KN_ROW_NO_TIMING;
    }
    if (!T->computed) {
        return KN_ROW_NOT_PLACED;
    }
    if (T->verdict != KN_VERDICT_AVAILABLE) {
        return KN_ROW_RULE_OFF;
    }
    return KN_ROW_AVAILABLE;
}

const kn_doc_findings *kn_doc_findings_make(kn_arena *a, const kn_sink *sink, size_t unit, const kn_schema *s,
                                            const kn_timeline *t)
{
    kn_doc_findings *f = kn_alloc(a, sizeof *f);
    size_t n = 0;
    const kn_view *v = sink && kn_sink_finished(sink) ? kn_sink_view_all(sink, a, &n) : NULL;
    /* this schema's findings only */
    kn_view *mine = kn_alloc_array(a, n ? n : 1, sizeof *mine);
    size_t n_mine = 0;
    for (size_t i = 0; i < n; i++) {
        if (!unit || v[i].unit == unit) {
            mine[n_mine++] = v[i];
        }
    }
    f->all = mine;
    f->n_all = n_mine;
    kn_doc_row *rows = kn_alloc_array(a, s->n_columns ? s->n_columns : 1, sizeof *rows);
    f->rows = rows;
    f->n_rows = s->n_columns;
    kn_name_map *by_name = kn_names_new(a);
    for (size_t i = 0; i < s->n_columns; i++) {
        kn_names_put(by_name, s->columns[i]->name, &rows[i]);
    }
    /* two passes: count, then fill, so each row's findings are one array */
    kn_doc_row **row_of = kn_alloc_array(a, n_mine ? n_mine : 1, sizeof *row_of);
    for (size_t i = 0; i < n_mine; i++) {
        if (kn_rule_about_column(mine[i].rule) && mine[i].subject[0]) {
            row_of[i] = kn_names_get(by_name, mine[i].subject);
        }
        if (row_of[i]) {
            row_of[i]->n_findings++;
        }
    }
    kn_row_finding **fill = kn_alloc_array(a, s->n_columns ? s->n_columns : 1, sizeof *fill);
    for (size_t i = 0; i < s->n_columns; i++) {
        fill[i] = kn_alloc_array(a, rows[i].n_findings ? rows[i].n_findings : 1, sizeof(kn_row_finding));
        rows[i].findings = fill[i];
        rows[i].n_findings = 0;
    }
    for (size_t i = 0; i < n_mine; i++) {
        kn_doc_row *r = row_of[i];
        if (!r) {
            continue;
        }
        kn_row_finding *rf = &fill[r - rows][r->n_findings++];
        *rf = (kn_row_finding){mine[i].rule,          mine[i].severity,   mine[i].waived,
                               mine[i].waiver_reason, mine[i].some_cases, mine[i].message};
    }
    for (size_t i = 0; i < s->n_columns; i++) {
        rows[i].cls = classify(s, t, s->columns[i], &rows[i]);
    }
    return f;
}

const char *kn_doc_join(kn_arena *a, const char *const *parts, size_t n, const char *sep)
{
    size_t len = 0, sep_len = strlen(sep);
    for (size_t i = 0; i < n; i++) {
        len += strlen(parts[i]) + (i ? sep_len : 0);
    }
    char *out = kn_alloc(a, len + 1), *p = out;
    for (size_t i = 0; i < n; i++) {
        if (i) {
            memcpy(p, sep, sep_len);
            p += sep_len;
        }
        size_t k = strlen(parts[i]);
        memcpy(p, parts[i], k);
        p += k;
    }
    *p = '\0';
    return out;
}

const char *kn_doc_names(kn_arena *a, const kn_ref *refs, size_t n, const char *sep)
{
    size_t shown = n > KN_DOC_NAMES_SHOWN ? KN_DOC_NAMES_SHOWN : n;
    const char **parts = kn_alloc_array(a, shown + 1, sizeof *parts);
    for (size_t i = 0; i < shown; i++) {
        parts[i] = refs[i].name ? refs[i].name : "";
    }
    if (shown < n) {
        parts[shown++] = kn_printf(a, "and %zu more", n - KN_DOC_NAMES_SHOWN);
    }
    return kn_doc_join(a, parts, shown, sep);
}

/* "+1d", "-2h", "0s". */
static const char *signed_duration(kn_arena *a, int64_t v)
{
    char b[48];
    kn_duration_format(v, b, sizeof b);
    return kn_printf(a, "%s%s", v > 0 ? "+" : "", b);
}

/* The source a column's value is read from: the join's, else its own. */
static const kn_source *read_source(const kn_column *c)
{
    const kn_source *j = c->join.present ? KN_REF_SOURCE(c->join.source) : NULL;
    return j ? j : KN_REF_SOURCE(c->source);
}

/* Where the column's timing comes from, every name in full: "known at one of
 * A | B, window on E from -1d to 0s, derived from x, y, source S, as of E -1d,
 * source settles up to 180d later". */
const char *kn_column_timing_words(kn_arena *a, const kn_column *c)
{
    const char *s = "";
    const char *sep = "";
    char b1[48], b2[48];
    if (c->n_one_of) {
        s = kn_printf(a, "%s%sknown at one of %s", s, sep, kn_doc_names(a, c->one_of, c->n_one_of, " | "));
        sep = ", ";
    } else if (c->known.name) {
        s = kn_printf(a, "%s%sknown at %s", s, sep, (c->known.name));
        sep = ", ";
    }
    if (c->window.present && c->window.anchor.name) {
        s = kn_printf(a, "%s%swindow on %s from %s to %s", s, sep, (c->window.anchor.name),
                      kn_duration_format(c->window.from.lo, b1, sizeof b1),
                      kn_duration_format(c->window.to.hi, b2, sizeof b2));
        sep = ", ";
    }
    if (c->n_derived) {
        s = kn_printf(a, "%s%sderived from %s", s, sep, kn_doc_names(a, c->derived_from, c->n_derived, ", "));
        sep = ", ";
    }
    const kn_source *src = read_source(c);
    if (c->source.name) {
        s = kn_printf(a, "%s%ssource %s", s, sep, (c->source.name));
        sep = ", ";
    }
    if (c->join.present && c->join.source.name &&
        (!c->source.name || strcmp(c->join.source.name, c->source.name))) {
        s = kn_printf(a, "%s%sjoined from %s", s, sep, (c->join.source.name));
        sep = ", ";
    }
    if (c->join.present && c->join.as_of.name) {
        s = kn_printf(a, "%s%sas of %s", s, sep, (c->join.as_of.name));
        if (c->join.has_offset) {
            s = kn_printf(a, "%s %s", s,
                          signed_duration(a, c->join.offset.lo < 0 ? c->join.offset.lo : c->join.offset.hi));
        }
        sep = ", ";
    } else if (c->join.present) {
        s = kn_printf(a, "%s%sjoined at its latest value", s, sep);
        sep = ", ";
    }
    if (src && src->matures.present && src->matures.hi > 0) {
        s = kn_printf(a, "%s%ssource settles up to %s later", s, sep,
                      kn_duration_format(src->matures.hi, b1, sizeof b1));
    }
    return s;
}

/* An event the column's timing names that has no range, or NULL. */
static const kn_event *event_set_aside(const kn_timeline *t, const kn_column *c)
{
    const kn_event *named[3] = {KN_REF_EVENT(c->known),
                                c->window.present ? KN_REF_EVENT(c->window.anchor) : NULL,
                                c->join.present ? KN_REF_EVENT(c->join.as_of) : NULL};
    kn_interval r;
    for (size_t i = 0; i < 3; i++) {
        if (named[i] && !kn_timeline_event_range(t, named[i], &r)) {
            return named[i];
        }
    }
    for (size_t i = 0; i < c->n_one_of; i++) {
        const kn_event *e = KN_REF_EVENT(c->one_of[i]);
        if (e && !kn_timeline_event_range(t, e, &r)) {
            return e;
        }
    }
    return NULL;
}

const char *kn_column_not_placed_words(kn_arena *a, const kn_timeline *t, const kn_column *c)
{
    const kn_column_timing *T = kn_timeline_column_timing(t, c);
    if (!T || !T->ordered) {
        return "on or behind a derivation cycle";
    }
    /* A derived column is placed only when all its inputs are. */
    for (size_t i = 0; i < c->n_derived; i++) {
        const kn_column *in = KN_REF_COLUMN(c->derived_from[i]);
        const kn_column_timing *TI = in ? kn_timeline_column_timing(t, in) : NULL;
        if (!TI || !TI->computed) {
            return kn_printf(a, "its input '%s' is not placed", c->derived_from[i].name);
        }
    }
    const kn_event *e = event_set_aside(t, c);
    if (e) {
        return kn_printf(a, "its event '%s' is set aside (a schema error or a contradiction)", e->name);
    }
    return "a reference or duration is in error";
}

const kn_source *kn_doc_finding_source(const kn_schema *s, const kn_view *v, const kn_column **column)
{
    *column = NULL;
    if (v->rule == KN_R_EXTERNAL_WITHOUT_PROVENANCE || v->rule == KN_R_UNUSED_SOURCE) {
        return kn_schema_source(s, v->subject);
    }
    if (v->rule != KN_R_JOIN_LATEST_VALUE && v->rule != KN_R_NO_POINT_IN_TIME_HISTORY &&
        v->rule != KN_R_READS_UNSETTLED_VALUES) {
        return NULL;
    }
    const kn_column *c = kn_schema_column(s, v->subject);
    if (!c) {
        return NULL;
    }
    *column = c;
    return c->join.source.name ? KN_REF_SOURCE(c->join.source) : KN_REF_SOURCE(c->source);
}

const char *kn_row_finding_words(kn_arena *a, const kn_row_finding *f)
{
    const char *id = kn_rule_get(f->rule)->id;
    if (f->waived) {
        return kn_printf(a, "%s (%s, waived)", id, kn_severity_name(f->severity));
    }
    return kn_printf(a, "%s (%s)", id, kn_severity_name(f->severity));
}

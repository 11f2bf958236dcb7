/* sources.c - `knowable sources SCHEMA...`: the register of feature sources
 * that reviewers and data stewards read.  Loads each schema (with its
 * includes), gathers every source once - a source is identified by the file
 * that defines it and its name, so a shared register included by several
 * schemas is listed once with all its uses - and writes external sources
 * first (every provenance field, the required ones that are missing marked
 * as missing), then internal ones, each followed by the findings of `check`
 * against it (provenance, latest-value joins, unsettled values; waived ones
 * with the waiver's reason), the waivers declared on it, and the columns
 * that come from it, by which key and as of which event.  Markdown or JSON.
 * Reads the schema model and the findings; pushes no diagnostics. */
#include <knowable/knowable.h>

#include <setjmp.h>
#include <string.h>

#include "../report/diag.h"
#include "docs.h"
#include "../rulebook/rulebook.h"
#include "../schema/schema.h"
#include "../time/duration.h"
#include "../util/arena.h"
#include "../util/names.h"
#include "../util/text.h"

typedef enum use_via { VIA_SOURCE, VIA_JOIN, VIA_DERIVED } use_via;

/* One column that takes values from a source. */
typedef struct use {
    size_t schema;          /* index into the loaded schemas */
    const kn_column *c;
    use_via via;
    bool joined;            /* the column's join reads from this source */
    const kn_column *input; /* VIA_DERIVED: the input that comes from it */
} use;

/* One finding of `check` against a source. */
typedef struct against {
    size_t schema;
    const kn_view *v;
    const char *column; /* the column it is about, NULL for the source itself */
} against;

typedef struct entry {
    const kn_source *src; /* the definition, as first loaded */
    kn_vec *uses;         /* use */
    kn_vec *findings;     /* against */
} entry;

typedef struct reg {
    kn_arena *a;
    const kn_rulebook *rb;
    kn_schema **schemas;
    const kn_doc_findings *const *found;
    size_t n_schemas;
    kn_name_map *by_id; /* "real path\nname" -> entry */
    kn_vec *entries;    /* entry *, in order of first appearance */
    entry **of_source;  /* the current schema's sources (by index) -> entry */
    size_t walked;      /* inputs visited tracing derived columns */
    bool truncated;     /* the tracing stopped at DERIVED_WALK_LIMIT */
} reg;

/* Tracing derived columns visits each input once per derived column; long
 * chains make that quadratic, so the walk is capped (a register of a
 * hostile schema must still be written in bounded time). */
#define DERIVED_WALK_LIMIT 20000000u

/* ---- gathering ---- */

/* The opened path of the file a node comes from (display -> real). */
static const char *real_file(const kn_schema *s, const char *display)
{
    for (size_t i = 0; i < s->n_files; i++) {
        if (s->files[i].display == display || strcmp(s->files[i].display, display) == 0) {
            return s->files[i].path;
        }
    }
    return display;
}

static entry *entry_of(reg *r, const kn_schema *s, const kn_source *src)
{
    const char *id = kn_printf(r->a, "%s\n%s", real_file(s, src->key->pos.file), src->name);
    entry *e = kn_names_get(r->by_id, id);
    if (!e) {
        e = kn_alloc(r->a, sizeof *e);
        e->src = src;
        e->uses = kn_vec_new(r->a, sizeof(use));
        e->findings = kn_vec_new(r->a, sizeof(against));
        kn_names_put(r->by_id, id, e);
        kn_vec_push(r->entries, &e);
    }
    return e;
}

static void add_use(reg *r, const kn_schema *s, const kn_source *src, use u)
{
    if (src) {
        kn_vec_push(entry_of(r, s, src)->uses, &u);
    }
}

/* The sources a column's value comes from directly, for derived columns. */
static void direct_sources(const kn_column *c, const kn_source **out)
{
    out[0] = KN_REF_SOURCE(c->source);
    out[1] = KN_REF_SOURCE(c->join.source);
    if (out[1] == out[0]) {
        out[1] = NULL;
    }
}

/* A derived column takes its provenance from its inputs: walk them
 * (iteratively, each column once per derived column: seen[] holds the
 * stamp of the derived column that last reached it) and record a use of
 * every source met, naming the input that brings it in. */
static void derived_uses(reg *r, size_t si, const kn_column *c, size_t *seen, const kn_column **stack)
{
    size_t top = 0, stamp = c->index + 1;
    seen[c->index] = stamp;
    for (size_t i = 0; i < c->n_derived; i++) {
        const kn_column *in = KN_REF_COLUMN(c->derived_from[i]);
        if (in && seen[in->index] != stamp) {
            seen[in->index] = stamp;
            stack[top++] = in;
        }
    }
    while (top) {
        if (++r->walked > DERIVED_WALK_LIMIT) {
            r->truncated = true;
            return;
        }
        const kn_column *in = stack[--top];
        const kn_source *direct[2];
        direct_sources(in, direct);
        for (size_t k = 0; k < 2; k++) {
            if (!direct[k]) {
                continue;
            }
            entry *e = r->of_source[direct[k]->index];
            /* This column's uses of e are the newest ones: look back only
             * as far as they go. */
            bool dup = false;
            for (size_t j = e->uses->len; j-- > 0 && !dup;) {
                const use *u = &KN_VEC_AT(e->uses, use, j);
                if (u->schema != si || u->c != c) {
                    break;
                }
                dup = u->via == VIA_DERIVED;
            }
            if (!dup) {
                kn_vec_push(e->uses, &(use){si, c, VIA_DERIVED, false, in});
            }
        }
        for (size_t i = 0; i < in->n_derived; i++) {
            const kn_column *next = KN_REF_COLUMN(in->derived_from[i]);
            if (next && seen[next->index] != stamp) {
                seen[next->index] = stamp;
                stack[top++] = next;
            }
        }
    }
}

/* The findings of schema si against its sources (kn_doc_finding_source). */
static void gather_findings(reg *r, size_t si)
{
    const kn_schema *s = r->schemas[si];
    const kn_doc_findings *f = r->found ? r->found[si] : NULL;
    if (!f) {
        return;
    }
    for (size_t i = 0; i < f->n_all; i++) {
        const kn_view *v = &f->all[i];
        const kn_column *c;
        const kn_source *src = kn_doc_finding_source(s, v, &c);
        if (src) {
            kn_vec_push(r->of_source[src->index]->findings, &(against){si, v, c ? c->name : NULL});
        }
    }
}

static void gather(reg *r)
{
    for (size_t si = 0; si < r->n_schemas; si++) {
        const kn_schema *s = r->schemas[si];
        r->of_source = kn_alloc_array(r->a, s->n_sources ? s->n_sources : 1, sizeof(entry *));
        for (size_t i = 0; i < s->n_sources; i++) {
            r->of_source[i] = entry_of(r, s, s->sources[i]);
        }
        size_t *seen = kn_alloc_array(r->a, s->n_columns ? s->n_columns : 1, sizeof *seen);
        const kn_column **stack = kn_alloc_array(r->a, s->n_columns ? s->n_columns : 1, sizeof *stack);
        for (size_t i = 0; i < s->n_columns; i++) {
            const kn_column *c = s->columns[i];
            const kn_source *own = KN_REF_SOURCE(c->source), *joined = KN_REF_SOURCE(c->join.source);
            if (own && own != joined) {
                add_use(r, s, own, (use){si, c, VIA_SOURCE, c->join.present && !c->join.source.name, NULL});
            }
            if (joined) {
                add_use(r, s, joined, (use){si, c, VIA_JOIN, true, NULL});
            }
            if (c->n_derived && !r->truncated) {
                derived_uses(r, si, c, seen, stack);
            }
        }
        gather_findings(r, si);
    }
}

/* ---- field values ---- */

static bool field_missing(const kn_source *src, kn_source_field f)
{
    const kn_node *n = src->field[f];
    if (!n) {
        return true;
    }
    return n->kind == KN_NODE_SCALAR && (kn_node_is_null(n) || n->u.scalar.len == 0);
}

static bool required(const reg *r, const kn_source *src, kn_source_field f)
{
    return src->kind == KN_SOURCE_EXTERNAL && r->rb->require_external[f];
}

/* A duration node as written: "PT2H" or "[PT1M, PT20M]". */
static const char *written(reg *r, const kn_node *n)
{
    if (n->kind == KN_NODE_SCALAR) {
        return n->u.scalar.text;
    }
    if (n->kind == KN_NODE_SEQ) {
        const char *s = "[";
        for (size_t i = 0; i < n->u.seq.n; i++) {
            const kn_node *it = n->u.seq.items[i];
            const char *t = it->kind == KN_NODE_SCALAR ? it->u.scalar.text : "?";
            s = kn_printf(r->a, "%s%s%s", s, i ? ", " : "", kn_node_is_null(it) ? "null" : t);
        }
        return kn_printf(r->a, "%s]", s);
    }
    return "";
}

static const char *span_words(reg *r, int64_t lo, int64_t hi)
{
    char b1[48], b2[48];
    if (lo == hi) {
        return kn_printf(r->a, "%s", kn_duration_format(lo, b1, sizeof b1));
    }
    if (hi >= KN_TIME_INF) {
        return kn_printf(r->a, "at least %s", kn_duration_format(lo, b1, sizeof b1));
    }
    return kn_printf(r->a, "%s to %s", kn_duration_format(lo, b1, sizeof b1), kn_duration_format(hi, b2, sizeof b2));
}

static const char *history_words(kn_history h)
{
    switch (h) {
    case KN_HISTORY_APPEND:
        return "append (records are added, never changed)";
    case KN_HISTORY_VERSIONED:
        return "versioned (old values are kept as versions)";
    case KN_HISTORY_OVERWRITTEN:
        return "overwritten (updated in place: past values are lost)";
    case KN_HISTORY_UNSET:
        break;
    }
    return NULL;
}

/* The register's rows: label, field, and the text of the value (NULL when
 * not stated).  Values come from the input and are escaped when written. */
typedef struct row {
    const char *label;
    kn_source_field field;
    const char *value;
} row;

#define N_ROWS 11

static size_t rows_of(reg *r, const kn_source *src, row *out)
{
    static const struct {
        const char *label;
        kn_source_field f;
    } order[N_ROWS] = {
        {"Provider", KN_SF_PROVIDER}, {"Licence", KN_SF_LICENSE},   {"Retrieved", KN_SF_RETRIEVED},
        {"Version", KN_SF_VERSION},   {"Point-in-time", KN_SF_POINT_IN_TIME},
        {"Latency", KN_SF_LATENCY},   {"Refresh", KN_SF_REFRESH},   {"History", KN_SF_HISTORY},
        {"Documentation", KN_SF_DOCUMENTATION}, {"Owner", KN_SF_OWNER}, {"Contact", KN_SF_CONTACT},
    };
    bool external = src->kind == KN_SOURCE_EXTERNAL;
    size_t n = 0;
    for (size_t i = 0; i < N_ROWS; i++) {
        kn_source_field f = order[i].f;
        const char *v = NULL;
        if (!field_missing(src, f)) {
            switch (f) {
            case KN_SF_PROVIDER:
                v = src->provider;
                break;
            case KN_SF_LICENSE:
                v = src->license;
                break;
            case KN_SF_RETRIEVED:
                v = src->retrieved;
                break;
            case KN_SF_VERSION:
                v = src->version;
                break;
            case KN_SF_POINT_IN_TIME:
                v = src->point_in_time == 1   ? "yes: the provider can serve values as they stood at a past date"
                    : src->point_in_time == 0 ? "no: only current values can be served"
                                              : NULL;
                break;
            case KN_SF_LATENCY:
                v = kn_printf(r->a, "%s (%s after the event)", written(r, src->field[f]),
                              span_words(r, src->latency.lo, src->latency.hi));
                break;
            case KN_SF_REFRESH:
                if (src->has_refresh) {
                    char b[48];
                    v = kn_printf(r->a, "%s (a record can wait up to %s for the next batch)", written(r, src->field[f]),
                                  kn_duration_format(src->refresh, b, sizeof b));
                }
                break;
            case KN_SF_HISTORY:
                v = history_words(src->history);
                break;
            case KN_SF_DOCUMENTATION:
                v = src->documentation;
                break;
            case KN_SF_OWNER:
                v = src->owner;
                break;
            case KN_SF_CONTACT:
                v = src->contact;
                break;
            default:
                break;
            }
        }
        /* Internal sources list only what they state (and their timing);
         * external ones list every field, stated or not. */
        if (!external && !v && f != KN_SF_LATENCY && f != KN_SF_HISTORY) {
            continue;
        }
        out[n++] = (row){order[i].label, f, v};
    }
    return n;
}

static size_t missing_required(const reg *r, const kn_source *src, const char **names)
{
    size_t n = 0;
    for (size_t f = 0; f < KN_SF_COUNT; f++) {
        if (required(r, src, (kn_source_field)f) && field_missing(src, (kn_source_field)f)) {
            names[n++] = kn_source_field_names[f];
        }
    }
    return n;
}

static const char *dataset_of(const kn_schema *s)
{
    return s->dataset ? s->dataset : s->path;
}

/* ---- Markdown ---- */

static void md(FILE *out, const char *s)
{
    kn_fput_markdown(out, s, strlen(s));
}

static void md_use_cells(FILE *out, const reg *r, const use *u)
{
    const kn_column *c = u->c;
    fputs("| ", out);
    md(out, dataset_of(r->schemas[u->schema]));
    fputs(" | ", out);
    md(out, c->name);
    fputs(" | ", out);
    md(out, kn_role_name(c->role));
    fputs(" | ", out);
    if (u->via == VIA_DERIVED) {
        fputs("derived, through ", out);
        md(out, u->input->name);
    } else if (c->n_one_of) {
        fputs("one of ", out);
        md(out, kn_doc_names(r->a, c->one_of, c->n_one_of, " | "));
    } else if (c->known.name) {
        md(out, c->known.name);
    } else if (c->window.present && c->window.anchor.name) {
        char b1[48], b2[48];
        fputs("window at ", out);
        md(out, c->window.anchor.name);
        fprintf(out, ", %s to %s", kn_duration_format(c->window.from.lo, b1, sizeof b1),
                kn_duration_format(c->window.to.hi, b2, sizeof b2));
    } else if (c->n_derived) {
        fputs("derived", out);
    } else {
        fputs("not stated", out);
    }
    fputs(" | ", out);
    if (!u->joined) {
        fputs("not joined | |\n", out);
        return;
    }
    for (size_t k = 0; k < c->join.n_keys; k++) {
        if (k) {
            fputs(", ", out);
        }
        md(out, c->join.keys[k].name);
    }
    if (!c->join.n_keys) {
        fputs("not stated", out);
    }
    fputs(" | ", out);
    if (c->join.as_of.name) {
        md(out, c->join.as_of.name);
        if (c->join.has_offset) {
            char b[48];
            int64_t v = c->join.offset.lo < 0 ? c->join.offset.lo : c->join.offset.hi;
            fprintf(out, " %s%s", v > 0 ? "+" : "", kn_duration_format(v, b, sizeof b));
        }
    } else {
        fputs("**latest value**", out);
    }
    fputs(" |\n", out);
}

/* The findings against a source and the waivers declared on it. */
static void md_findings(FILE *out, const reg *r, const entry *e)
{
    const kn_source *src = e->src;
    if (!e->findings->len) {
        fputs("No finding of `knowable check` against this source.\n\n", out);
    } else {
        fprintf(out, "Findings of `knowable check` against this source (%zu):\n\n", e->findings->len);
        fputs("| Dataset | Column | Rule | Severity | Finding | At |\n|---|---|---|---|---|---|\n", out);
        for (size_t i = 0; i < e->findings->len; i++) {
            const against *g = &KN_VEC_AT(e->findings, against, i);
            fputs("| ", out);
            md(out, dataset_of(r->schemas[g->schema]));
            fputs(" | ", out);
            md(out, g->column ? g->column : "(the source)");
            fprintf(out, " | %s | %s", kn_rule_get(g->v->rule)->id, kn_severity_name(g->v->severity));
            if (g->v->waived) {
                fputs(", **waived**: ", out);
                md(out, g->v->waiver_reason ? g->v->waiver_reason : "");
            }
            fputs(" | ", out);
            md(out, g->v->message);
            fputs(" | ", out);
            md(out, g->v->pos.file ? g->v->pos.file : "");
            fprintf(out, ":%u |\n", g->v->pos.line);
        }
        fputc('\n', out);
    }
    if (src->n_waivers) {
        fputs("Waivers declared on this source:\n\n| Rule | Reason | Expires |\n|---|---|---|\n", out);
        for (size_t i = 0; i < src->n_waivers; i++) {
            const kn_waiver *w = &src->waivers[i];
            fputs("| ", out);
            md(out, w->rule_ref.name ? w->rule_ref.name : "");
            fputs(" | ", out);
            if (w->reason && *w->reason) {
                md(out, w->reason);
            } else {
                fputs("**no reason given**", out);
            }
            fputs(" | ", out);
            md(out, w->expires ? w->expires : "never");
            fputs(" |\n", out);
        }
        fputc('\n', out);
    }
}

static void md_source(FILE *out, reg *r, const entry *e)
{
    const kn_source *src = e->src;
    fputs("### ", out);
    md(out, src->name);
    fputs("\n\n", out);
    fputs("Defined in ", out);
    md(out, src->key->pos.file);
    fprintf(out, ", line %u.\n\n", src->key->pos.line);
    const char *miss[KN_SF_COUNT];
    size_t n_miss = missing_required(r, src, miss);
    if (n_miss) {
        fputs("**Provenance incomplete:** the rulebook requires ", out);
        for (size_t i = 0; i < n_miss; i++) {
            fprintf(out, "%s%s", i == 0 ? "" : i + 1 == n_miss ? " and " : ", ", miss[i]);
        }
        fputs(", which this source does not state.\n\n", out);
    }
    row rows[N_ROWS];
    size_t n = rows_of(r, src, rows);
    fputs("| Field | Value |\n|---|---|\n", out);
    fprintf(out, "| Kind | %s |\n", src->kind == KN_SOURCE_EXTERNAL ? "external" : "internal");
    if (!field_missing(src, KN_SF_DESCRIPTION) && src->description) {
        fputs("| Description | ", out);
        md(out, src->description);
        fputs(" |\n", out);
    }
    for (size_t i = 0; i < n; i++) {
        fprintf(out, "| %s | ", rows[i].label);
        if (rows[i].value) {
            md(out, rows[i].value);
        } else if (required(r, src, rows[i].field)) {
            fputs("**MISSING** (required)", out);
        } else if (rows[i].field == KN_SF_LATENCY) {
            fputs("not stated (taken as 0s)", out);
        } else {
            fputs("not stated", out);
        }
        fputs(" |\n", out);
    }
    fputc('\n', out);
    md_findings(out, r, e);
    if (!e->uses->len) {
        fputs("No column of these schemas takes values from this source.\n\n", out);
        return;
    }
    fputs("Columns from this source:\n\n", out);
    fputs("| Dataset | Column | Role | Known from | Join key | As of |\n|---|---|---|---|---|---|\n", out);
    for (size_t i = 0; i < e->uses->len; i++) {
        md_use_cells(out, r, &KN_VEC_AT(e->uses, use, i));
    }
    fputc('\n', out);
}

static size_t count_kind(const reg *r, kn_source_kind k, size_t *incomplete)
{
    size_t n = 0;
    const char *miss[KN_SF_COUNT];
    for (size_t i = 0; i < r->entries->len; i++) {
        const entry *e = KN_VEC_AT(r->entries, entry *, i);
        if ((k == KN_SOURCE_EXTERNAL) == (e->src->kind == KN_SOURCE_EXTERNAL)) {
            n++;
            if (incomplete && missing_required(r, e->src, miss)) {
                (*incomplete)++;
            }
        }
    }
    return n;
}

static void write_markdown(FILE *out, reg *r)
{
    fputs("# Register of feature sources\n\n", out);
    fputs("Written by knowable " KN_VERSION_STRING " from ", out);
    for (size_t i = 0; i < r->n_schemas; i++) {
        const kn_schema *s = r->schemas[i];
        fputs(i == 0 ? "" : i + 1 == r->n_schemas ? " and " : ", ", out);
        md(out, s->path);
        if (s->dataset) {
            fputs(" (dataset ", out);
            md(out, s->dataset);
            fputc(')', out);
        }
    }
    fputs(".", out);
    bool any = false;
    for (size_t f = 0; f < KN_SF_COUNT; f++) {
        if (r->rb->require_external[f]) {
            fprintf(out, "%s%s", any ? ", " : " Every external source must state ", kn_source_field_names[f]);
            any = true;
        }
    }
    if (any) {
        fputs(" (", out);
        if (strcmp(r->rb->origin, "(built-in)") == 0) {
            fputs("the built-in rulebook", out);
        } else {
            fputs("rulebook ", out);
            md(out, r->rb->origin);
        }
        fputs(").", out);
    }
    fputs("\n\n", out);
    size_t incomplete = 0;
    size_t n_ext = count_kind(r, KN_SOURCE_EXTERNAL, &incomplete);
    size_t n_int = count_kind(r, KN_SOURCE_INTERNAL, NULL);
    fprintf(out, "%zu external source%s (%zu with provenance missing), %zu internal source%s.", n_ext,
            n_ext == 1 ? "" : "s", incomplete, n_int, n_int == 1 ? "" : "s");
    size_t n_found[2] = {0}, n_waived = 0;
    for (size_t i = 0; i < r->entries->len; i++) {
        const entry *e = KN_VEC_AT(r->entries, entry *, i);
        n_found[e->src->kind == KN_SOURCE_EXTERNAL] += e->findings->len;
        for (size_t k = 0; k < e->findings->len; k++) {
            n_waived += KN_VEC_AT(e->findings, against, k).v->waived;
        }
    }
    fprintf(out, " Findings of `knowable check` against them: %zu on external sources, %zu on internal ones (%zu waived).\n\n",
            n_found[1], n_found[0], n_waived);
    if (r->truncated) {
        fputs("**Derived columns were traced only in part:** the schemas chain more derivations than the register "
              "follows; the columns listed as derived are not all of them.\n\n",
              out);
    }
    for (int pass = 0; pass < 2; pass++) {
        bool ext = pass == 0;
        fputs(ext ? "## External sources\n\n" : "## Internal sources\n\n", out);
        if (!(ext ? n_ext : n_int)) {
            fputs("None.\n\n", out);
        }
        for (size_t i = 0; i < r->entries->len; i++) {
            const entry *e = KN_VEC_AT(r->entries, entry *, i);
            if (ext == (e->src->kind == KN_SOURCE_EXTERNAL)) {
                md_source(out, r, e);
            }
        }
    }
}

/* ---- JSON ---- */

static void js_str_or_null(FILE *out, const char *s)
{
    if (s) {
        kn_fput_json_str(out, s);
    } else {
        fputs("null", out);
    }
}

static void js_seconds(FILE *out, int64_t us)
{
    if (us >= KN_TIME_INF || us <= -KN_TIME_INF) {
        fputs("null", out);
    } else {
        fprintf(out, "%.17g", kn_time_seconds(us));
    }
}

static void js_use(FILE *out, const reg *r, const use *u)
{
    const kn_schema *s = r->schemas[u->schema];
    const kn_column *c = u->c;
    fputs("{\"schema\": ", out);
    kn_fput_json_str(out, s->path);
    fputs(", \"dataset\": ", out);
    js_str_or_null(out, s->dataset);
    fputs(", \"column\": ", out);
    kn_fput_json_str(out, c->name);
    fputs(", \"role\": ", out);
    kn_fput_json_str(out, kn_role_name(c->role));
    fprintf(out, ", \"via\": \"%s\"", u->via == VIA_SOURCE ? "source" : u->via == VIA_JOIN ? "join.source" : "derived_from");
    fputs(", \"input\": ", out);
    js_str_or_null(out, u->input ? u->input->name : NULL);
    fputs(", \"known\": ", out);
    js_str_or_null(out, c->known.name);
    fputs(", \"known_one_of\": ", out);
    if (c->n_one_of) {
        for (size_t k = 0; k < c->n_one_of; k++) {
            fputs(k ? ", " : "[", out);
            kn_fput_json_str(out, c->one_of[k].name);
        }
        fputs("]", out);
    } else {
        fputs("null", out);
    }
    fputs(", \"window\": ", out);
    if (c->window.present && c->window.anchor.name) {
        fputs("{\"anchor\": ", out);
        kn_fput_json_str(out, c->window.anchor.name);
        fputs(", \"from_seconds\": ", out);
        js_seconds(out, c->window.from.lo);
        fputs(", \"to_seconds\": ", out);
        js_seconds(out, c->window.to.hi);
        fputs("}", out);
    } else {
        fputs("null", out);
    }
    fputs(", \"join\": ", out);
    if (u->joined) {
        fputs("{\"key\": [", out);
        for (size_t k = 0; k < c->join.n_keys; k++) {
            fputs(k ? ", " : "", out);
            kn_fput_json_str(out, c->join.keys[k].name);
        }
        fputs("], \"as_of\": ", out);
        js_str_or_null(out, c->join.as_of.name);
        fputs(", \"as_of_offset_seconds\": ", out);
        if (c->join.as_of.name && c->join.has_offset) {
            js_seconds(out, c->join.offset.lo < 0 ? c->join.offset.lo : c->join.offset.hi);
        } else {
            fputs("null", out);
        }
        fprintf(out, ", \"latest_value\": %s}", c->join.as_of.name ? "false" : "true");
    } else {
        fputs("null", out);
    }
    fputs("}", out);
}

static void js_source(FILE *out, reg *r, const entry *e)
{
    const kn_source *src = e->src;
    fputs("    {\"name\": ", out);
    kn_fput_json_str(out, src->name);
    fprintf(out, ", \"kind\": \"%s\"", src->kind == KN_SOURCE_EXTERNAL ? "external" : "internal");
    fputs(", \"file\": ", out);
    kn_fput_json_str(out, src->key->pos.file);
    fprintf(out, ", \"line\": %u, \"column\": %u", src->key->pos.line, src->key->pos.col);
    static const kn_source_field strings[] = {KN_SF_DESCRIPTION, KN_SF_OWNER,   KN_SF_CONTACT,
                                              KN_SF_PROVIDER,    KN_SF_LICENSE, KN_SF_RETRIEVED,
                                              KN_SF_VERSION,     KN_SF_DOCUMENTATION};
    const char *values[] = {src->description, src->owner,   src->contact, src->provider,
                            src->license,     src->retrieved, src->version, src->documentation};
    fputs(",\n     ", out);
    for (size_t i = 0; i < sizeof strings / sizeof strings[0]; i++) {
        fprintf(out, "%s\"%s\": ", i ? ", " : "", kn_source_field_names[strings[i]]);
        js_str_or_null(out, field_missing(src, strings[i]) ? NULL : values[i]);
    }
    fputs(",\n     \"point_in_time\": ", out);
    fputs(src->point_in_time == 1 ? "true" : src->point_in_time == 0 ? "false" : "null", out);
    fputs(", \"latency\": ", out);
    if (src->latency.present) {
        fputs("{\"written\": ", out);
        kn_fput_json_str(out, written(r, src->field[KN_SF_LATENCY]));
        fputs(", \"min_seconds\": ", out);
        js_seconds(out, src->latency.lo);
        fputs(", \"max_seconds\": ", out);
        js_seconds(out, src->latency.hi);
        fputs("}", out);
    } else {
        fputs("null", out);
    }
    fputs(", \"refresh\": ", out);
    if (src->has_refresh) {
        fputs("{\"written\": ", out);
        kn_fput_json_str(out, written(r, src->field[KN_SF_REFRESH]));
        fputs(", \"max_seconds\": ", out);
        js_seconds(out, src->refresh);
        fputs("}", out);
    } else {
        fputs("null", out);
    }
    fputs(", \"history\": ", out);
    js_str_or_null(out, src->history == KN_HISTORY_UNSET ? NULL : kn_history_name(src->history));
    fputs(",\n     \"missing_required\": [", out);
    const char *miss[KN_SF_COUNT];
    size_t n_miss = missing_required(r, src, miss);
    for (size_t i = 0; i < n_miss; i++) {
        fprintf(out, "%s\"%s\"", i ? ", " : "", miss[i]);
    }
    fputs("],\n     \"findings\": [", out);
    for (size_t i = 0; i < e->findings->len; i++) {
        const against *g = &KN_VEC_AT(e->findings, against, i);
        fputs(i ? ",\n       " : "\n       ", out);
        fputs("{\"schema\": ", out);
        kn_fput_json_str(out, r->schemas[g->schema]->path);
        fputs(", \"column\": ", out);
        js_str_or_null(out, g->column);
        fprintf(out, ", \"rule\": \"%s\", \"severity\": \"%s\", \"message\": ", kn_rule_get(g->v->rule)->id,
                kn_severity_name(g->v->severity));
        kn_fput_json_str(out, g->v->message);
        fputs(", \"file\": ", out);
        js_str_or_null(out, g->v->pos.file);
        fprintf(out, ", \"line\": %u, \"waived\": %s, \"waiver_reason\": ", g->v->pos.line,
                g->v->waived ? "true" : "false");
        js_str_or_null(out, g->v->waived ? g->v->waiver_reason : NULL);
        fputs("}", out);
    }
    fputs(e->findings->len ? "\n     ],\n     \"waivers\": [" : "],\n     \"waivers\": [", out);
    for (size_t i = 0; i < src->n_waivers; i++) {
        const kn_waiver *w = &src->waivers[i];
        fputs(i ? ", " : "", out);
        fputs("{\"rule\": ", out);
        js_str_or_null(out, w->rule_ref.name);
        fputs(", \"reason\": ", out);
        js_str_or_null(out, w->reason && *w->reason ? w->reason : NULL);
        fputs(", \"expires\": ", out);
        js_str_or_null(out, w->expires);
        fputs("}", out);
    }
    fputs("],\n     \"uses\": [", out);
    for (size_t i = 0; i < e->uses->len; i++) {
        fputs(i ? ",\n       " : "\n       ", out);
        js_use(out, r, &KN_VEC_AT(e->uses, use, i));
    }
    fputs(e->uses->len ? "\n     ]}" : "]}", out);
}

static void write_json(FILE *out, reg *r)
{
    fputs("{\"version\": 1, \"generator\": \"knowable " KN_VERSION_STRING "\",\n \"schemas\": [", out);
    for (size_t i = 0; i < r->n_schemas; i++) {
        fputs(i ? ", " : "", out);
        fputs("{\"file\": ", out);
        kn_fput_json_str(out, r->schemas[i]->path);
        fputs(", \"dataset\": ", out);
        js_str_or_null(out, r->schemas[i]->dataset);
        fputs("}", out);
    }
    fputs("],\n \"rulebook\": ", out);
    kn_fput_json_str(out, r->rb->origin);
    fputs(", \"required_external\": [", out);
    bool any = false;
    for (size_t f = 0; f < KN_SF_COUNT; f++) {
        if (r->rb->require_external[f]) {
            fprintf(out, "%s\"%s\"", any ? ", " : "", kn_source_field_names[f]);
            any = true;
        }
    }
    fprintf(out, "], \"derived_fully_traced\": %s,\n \"sources\": [", r->truncated ? "false" : "true");
    bool first = true;
    for (int pass = 0; pass < 2; pass++) {
        for (size_t i = 0; i < r->entries->len; i++) {
            const entry *e = KN_VEC_AT(r->entries, entry *, i);
            if ((pass == 0) == (e->src->kind == KN_SOURCE_EXTERNAL)) {
                fputs(first ? "\n" : ",\n", out);
                first = false;
                js_source(out, r, e);
            }
        }
    }
    fputs(first ? "]}\n" : "\n ]}\n", out);
}

/* ---- entry point ---- */

void kn_sources_write(FILE *out, kn_arena *a, kn_schema *const *schemas, const kn_rulebook *const *rulebooks,
                      const kn_doc_findings *const *findings, size_t n, bool json)
{
    /* One set of required fields for the register: those any schema's
     * rulebook requires, so the result does not depend on their order. */
    kn_rulebook *rb = kn_alloc(a, sizeof *rb);
    *rb = *rulebooks[0];
    for (size_t i = 1; i < n; i++) {
        for (size_t f = 0; f < KN_SF_COUNT; f++) {
            rb->require_external[f] = rb->require_external[f] || rulebooks[i]->require_external[f];
        }
        if (strcmp(rulebooks[i]->origin, rb->origin) != 0) {
            rb->origin = "the rulebook of each schema";
        }
    }
    reg r = {0};
    r.a = a;
    r.rb = rb;
    r.schemas = kn_alloc_array(a, n ? n : 1, sizeof(kn_schema *));
    for (size_t i = 0; i < n; i++) {
        r.schemas[i] = schemas[i];
    }
    r.n_schemas = n;
    r.found = findings;
    r.by_id = kn_names_new(a);
    r.entries = kn_vec_new(a, sizeof(entry *));
    gather(&r);
    if (json) {
        write_json(out, &r);
    } else {
        write_markdown(out, &r);
    }
}

/* features.c - hover, go to definition, completion and code actions of
 * `knowable lsp`, answered from the last analysis of the schema that
 * covers the document (its own, or that of an open schema including it). */
#include "lsp.h"

#include <setjmp.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../docs/docs.h"
#include "../schema/shape.h"
#include "../time/timeline.h"
#include "../util/text.h"
#include "xalloc.h"

/* --- Names under the cursor ---------------------------------------------- */

static bool name_byte(unsigned char c)
{
    return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_' ||
           c == '-' || c == '.' || c >= 0x80;
}

/* The name around offset (malloc), or NULL. */
static char *word_at(const kn_doc *d, size_t off)
{
    size_t a = off, b = off;
    while (a > 0 && name_byte((unsigned char)d->text[a - 1])) {
        a--;
    }
    while (b < d->len && name_byte((unsigned char)d->text[b])) {
        b++;
    }
    return b > a ? kn_lsp_xstrndup(d->text + a, b - a) : NULL;
}

/* The schema covering d and the name under the cursor. */
static const kn_unit *lookup(kn_server *s, kn_doc *d, long line, long character, char **name)
{
    kn_doc *m = kn_model_for(s, d);
    *name = NULL;
    if (!m) {
        return NULL;
    }
    *name = word_at(d, kn_doc_offset(d, line, character));
    return *name ? m->unit : NULL;
}

/* --- Hover --------------------------------------------------------------- */

static const char *verdict_name(kn_verdict v)
{
    switch (v) {
    case KN_VERDICT_AVAILABLE:
        return "available at the moment";
    case KN_VERDICT_MAYBE_LATE:
        return "maybe after the moment";
    case KN_VERDICT_LATE:
        return "after the moment";
    case KN_VERDICT_UNORDERED:
        return "unordered: no chain of constraints bounds it relative to the moment";
    case KN_VERDICT_UNKNOWN:
        break;
    }
    return "not placed: no timing declared, or a reference or duration in error";
}

static const char *moment_name(const kn_timeline *t)
{
    const kn_event *m = t ? kn_timeline_moment(t) : NULL;
    return m ? m->name : "?";
}

/* A column's range, verdict and rules as `check` and the documents give
 * them (docs/findings.c: the groups come from the findings, so a column
 * with an as_of join alone is "no timing declared" here as `check` calls it
 * missing-known, and a column that is no feature is never late). */
static void hover_column(FILE *f, kn_arena *a, const kn_schema *sc, const kn_timeline *t, const kn_sink *sink,
                         const kn_column *c)
{
    fprintf(f, "**column `%s`** (%s)\n\n", c->name, kn_role_name(c->role));
    const kn_column_timing *T = kn_timeline_column_timing(t, c);
    const kn_doc_findings *df = kn_doc_findings_make(a, sink, 0, sc, t);
    const kn_doc_row *row = c->index < df->n_rows ? &df->rows[c->index] : NULL;
    kn_row_class cls = row ? row->cls : KN_ROW_NOT_PLACED;
    if (cls == KN_ROW_NO_TIMING) {
        fprintf(f, "- no timing: none of known, window, derived_from%s\n",
                c->join.present && c->join.as_of.name
                    ? " (the as_of join says when the join reads, not when the value exists)"
                    : "");
    } else if (T && T->computed && cls != KN_ROW_NOT_PLACED) {
        fprintf(f, "- available %s\n", kn_timeline_range_words(a, T->range, moment_name(t)));
    }
    fprintf(f, "- verdict: %s\n", kn_row_verdict_words(a, t, c, cls));
    if (row && row->n_findings) {
        fprintf(f, "- rules: %s\n", kn_row_rules_words(a, row));
    }
    if (T && T->from_target && kn_column_is_feature(sc, c)) {
        fprintf(f, "- built from the target%s%s\n", T->target_via ? " via " : "",
                T->target_via ? T->target_via->name : "");
    }
    if (c->known.name) {
        fprintf(f, "- known at `%s`\n", c->known.name);
    }
    if (c->source.name) {
        fprintf(f, "- source `%s`\n", c->source.name);
    }
    if (c->n_derived) {
        fputs("- derived from", f);
        for (size_t i = 0; i < c->n_derived; i++) {
            fprintf(f, "%s `%s`", i ? "," : "", c->derived_from[i].name);
        }
        /* The chain of latest inputs: what makes the column as late as it is. */
        fprintf(f, "\n- derivation chain: `%s`", c->name);
        const kn_column *cur = c;
        for (int steps = 0; cur && cur->n_derived && steps < 16; steps++) {
            const kn_column_timing *CT = kn_timeline_column_timing(t, cur);
            const kn_column *next = CT && CT->latest_hi ? CT->latest_hi : KN_REF_COLUMN(cur->derived_from[0]);
            if (!next || next == c) {
                break;
            }
            fprintf(f, " ← `%s`", next->name);
            cur = next;
        }
        fputc('\n', f);
    }
    if (c->description) {
        fprintf(f, "\n%s\n", c->description);
    }
}

static void hover_event(FILE *f, kn_arena *a, const kn_timeline *t, const kn_event *e)
{
    fprintf(f, "**event `%s`**%s\n\n", e->name,
            t && kn_timeline_moment(t) == e ? " (the prediction moment)" : "");
    kn_interval r;
    if (t && kn_timeline_event_range(t, e, &r) && kn_timeline_moment(t)) {
        fprintf(f, "- %s\n- verdict: %s\n", kn_timeline_range_words(a, r, moment_name(t)),
                verdict_name(kn_timeline_classify(t, r)));
    } else {
        fputs("- not placed relative to the moment (no chain of constraints, or a contradiction)\n", f);
    }
    if (e->description) {
        fprintf(f, "\n%s\n", e->description);
    }
}

static void hover_source(FILE *f, kn_arena *a, const kn_schema *sc, const kn_timeline *t, const kn_sink *sink,
                         const kn_source *src)
{
    char lo[48], hi[48];
    fprintf(f, "**source `%s`** (%s)\n\n", src->name,
            src->kind == KN_SOURCE_EXTERNAL   ? "external"
            : src->kind == KN_SOURCE_INTERNAL ? "internal"
                                              : "kind unset");
    kn_duration_format(src->latency.lo, lo, sizeof lo);
    kn_duration_format(src->latency.hi, hi, sizeof hi);
    if (src->latency.lo == src->latency.hi) {
        fprintf(f, "- queryable %s after its event", lo);
    } else {
        fprintf(f, "- queryable between %s and %s after its event", lo, hi);
    }
    if (src->has_refresh) {
        kn_duration_format(src->refresh, hi, sizeof hi);
        fprintf(f, ", plus up to %s of refresh", hi);
    }
    fputs(" (serving path)\n", f);
    size_t used = 0;
    for (size_t i = 0; i < sc->n_columns; i++) {
        used += KN_REF_SOURCE(sc->columns[i]->source) == src;
    }
    fprintf(f, "- %zu column%s read from it\n", used, used == 1 ? "" : "s");
    /* The findings against it, as the register of sources lists them. */
    const kn_doc_findings *df = kn_doc_findings_make(a, sink, 0, sc, t);
    for (size_t i = 0; i < df->n_all; i++) {
        const kn_column *c;
        const kn_view *v = &df->all[i];
        if (kn_doc_finding_source(sc, v, &c) == src) {
            fprintf(f, "- %s%s%s%s: %s%s\n", kn_rule_get(v->rule)->id, c ? " on `" : "", c ? c->name : "",
                    c ? "`" : "", v->waived ? "waived, " : "", kn_severity_name(v->severity));
        }
    }
    if (src->description) {
        fprintf(f, "\n%s\n", src->description);
    }
}

json_t *kn_lsp_hover(kn_server *s, kn_doc *d, long line, long character)
{
    char *name;
    const kn_unit *u = lookup(s, d, line, character, &name);
    if (!u) {
        free(name);
        return NULL;
    }
    const kn_schema *sc = u->schema;
    const kn_sink *sink = kn_model_for(s, d)->run->sink;
    const kn_column *c = kn_schema_column(sc, name);
    const kn_event *e = kn_schema_event(sc, name);
    const kn_source *src = kn_schema_source(sc, name);
    json_t *result = NULL;
    if (c || e || src) {
        kn_arena *a = kn_arena_new();
        char *buf = NULL;
        size_t len = 0;
        FILE *f = a ? open_memstream(&buf, &len) : NULL;
        jmp_buf oom;
        if (f && !setjmp(oom)) {
            kn_arena_set_oom(a, &oom);
            const char *sep = "";
            if (c) {
                hover_column(f, a, sc, u->timeline, sink, c);
                sep = "\n---\n\n";
            }
            if (e) {
                fputs(sep, f);
                hover_event(f, a, u->timeline, e);
                sep = "\n---\n\n";
            }
            if (src) {
                fputs(sep, f);
                hover_source(f, a, sc, u->timeline, sink, src);
            }
        }
        if (f && fclose(f) == 0 && buf) {
            result = json_pack("{s:{s:s,s:s}}", "contents", "kind", "markdown", "value", buf);
        }
        free(buf);
        kn_arena_free(a);
    }
    free(name);
    return result;
}

/* --- Definition ---------------------------------------------------------- */

/* The file an include item at offset names, when the cursor is on one: the
 * first item that read each included file is kept by the loader. */
static const kn_schema_file *included_at(const kn_schema *sc, const kn_doc *d, size_t offset)
{
    const char *display = NULL;
    for (size_t k = 0; d->real && k < sc->n_files; k++) {
        if (strcmp(sc->files[k].path, d->real) == 0) {
            display = sc->files[k].display;
        }
    }
    for (size_t j = 0; display && j < sc->n_files; j++) {
        const kn_node *via = sc->files[j].via;
        if (!via || strcmp(via->pos.file, display) != 0 || via->pos.offset > offset || via->pos.offset > d->len) {
            continue;
        }
        if (offset <= via->pos.offset + kn_token_len(d->text, d->len, via->pos.offset)) {
            return &sc->files[j];
        }
    }
    return NULL;
}

json_t *kn_lsp_definition(kn_server *s, kn_doc *d, long line, long character)
{
    kn_doc *m = kn_model_for(s, d);
    if (m && m->unit && m->unit->schema) {
        const kn_schema_file *f = included_at(m->unit->schema, d, kn_doc_offset(d, line, character));
        if (f) {
            kn_pos start = {f->display, 1, 1, 0};
            json_t *out = json_array();
            json_array_append_new(out, kn_location_at(s, &start));
            return out;
        }
    }
    char *name;
    const kn_unit *u = lookup(s, d, line, character, &name);
    if (!u) {
        free(name);
        return NULL;
    }
    json_t *out = json_array();
    const kn_column *c = kn_schema_column(u->schema, name);
    const kn_event *e = kn_schema_event(u->schema, name);
    const kn_source *src = kn_schema_source(u->schema, name);
    if (e && e->key) {
        json_array_append_new(out, kn_location_at(s, &e->key->pos));
    }
    if (src && src->key) {
        json_array_append_new(out, kn_location_at(s, &src->key->pos));
    }
    if (c && c->key) {
        json_array_append_new(out, kn_location_at(s, &c->key->pos));
    }
    free(name);
    if (!json_array_size(out)) {
        json_decref(out);
        return NULL;
    }
    return out;
}

/* --- Completion ---------------------------------------------------------- */

#define MAX_PATH 16

enum { ITEM_PROPERTY = 10, ITEM_VALUE = 12, ITEM_REFERENCE = 18, ITEM_EVENT = 23, ITEM_FIELD = 5 };

static size_t indent_of(const char *p, const char *end)
{
    size_t n = 0;
    while (p + n < end && (p[n] == ' ' || p[n] == '-')) {
        n++;
    }
    return n;
}

/* The keys of [p, end) that lead to its end, appended to path (at most
 * max): "key:" words and quoted keys ("🥐_sold":), outermost first.  In a
 * flow mapping a key whose value ended (at a comma or a closing bracket)
 * gives way to its sibling: {type: number, known: } leads to known.
 * *after is where the value of the last key kept starts. */
static size_t keys_in(const char *p, const char *end, char **path, size_t n, size_t max, const char **after)
{
    size_t first = n;
    int depth = 0, depth_of[MAX_PATH + 8];
    const char *after_of[MAX_PATH + 8];
    const char *qs = NULL, *qe = NULL; /* the last quoted scalar */
    *after = p;
    for (const char *q = p; q < end; q++) {
        if (*q == '"' || *q == '\'') {
            const char *r = q + 1;
            while (r < end && *r != *q) {
                r += *q == '"' && *r == '\\' && r + 1 < end ? 2 : 1;
            }
            if (r >= end) {
                break; /* the end is inside the quotes */
            }
            qs = q + 1;
            qe = r;
            q = r;
            continue;
        }
        if (*q == '{' || *q == '[') {
            depth++;
            continue;
        }
        bool key = *q == ':' && (q + 1 == end || q[1] == ' ' || q[1] == '\n' || q[1] == '\r');
        if (!key && *q != ',' && *q != '}' && *q != ']') {
            continue;
        }
        if (*q == '}' || *q == ']') {
            depth -= depth > 0;
        }
        /* The keys whose values end here (siblings, and deeper ones). */
        int from = *q == '}' || *q == ']' ? depth + 1 : depth;
        while (n > first && depth_of[n - 1 - first] >= from) {
            free(path[--n]);
        }
        *after = n > first ? after_of[n - 1 - first] : p;
        if (!key) {
            continue;
        }
        const char *b = q, *e = q;
        if (qe && q == qe + 1) {
            b = qs;
            e = qe;
        } else {
            while (b > p && name_byte((unsigned char)b[-1])) {
                b--;
            }
        }
        if (b < e && n < max && n - first < MAX_PATH + 8) {
            depth_of[n - first] = depth;
            after_of[n - first] = q + 1;
            path[n++] = kn_lsp_xstrndup(b, (size_t)(e - b));
        }
        *after = q + 1;
    }
    return n;
}

static void add_item(json_t *items, const char *label, int kind, const char *insert, const char *detail)
{
    json_t *it = json_pack("{s:s,s:i}", "label", label, "kind", kind);
    if (insert) {
        json_object_set_new(it, "insertText", json_string(insert));
    }
    if (detail) {
        json_object_set_new(it, "detail", json_string(detail));
    }
    json_array_append_new(items, it);
}

/* The names kept from the last analysis that loaded d as a schema. */
static void add_kept_names(json_t *items, const kn_doc *d, kn_ref_kind k)
{
    int kind = k == KN_REF_EVENT_K ? 0 : k == KN_REF_SOURCE_K ? 1 : k == KN_REF_COLUMN_K ? 2 : -1;
    if (!d->kept || kind < 0) {
        return;
    }
    static const int item_kind[] = {ITEM_EVENT, ITEM_REFERENCE, ITEM_FIELD};
    static const char *const detail[] = {"event", "source", "column"};
    size_t from = 0;
    for (int i = 0; i < kind; i++) {
        from += d->n_kept[i];
    }
    for (size_t i = 0; i < d->n_kept[kind]; i++) {
        add_item(items, d->kept[from + i], item_kind[kind], NULL, detail[kind]);
    }
}

/* The names of kind k: of sc, else those kept for d. */
static void add_names(json_t *items, const kn_schema *sc, const kn_doc *d, kn_ref_kind k)
{
    if (!sc && k != KN_REF_RULE_K) {
        add_kept_names(items, d, k);
        return;
    }
    if (k == KN_REF_EVENT_K) {
        for (size_t i = 0; i < sc->n_events; i++) {
            add_item(items, sc->events[i]->name, ITEM_EVENT, NULL, "event");
        }
    } else if (k == KN_REF_SOURCE_K) {
        for (size_t i = 0; i < sc->n_sources; i++) {
            add_item(items, sc->sources[i]->name, ITEM_REFERENCE, NULL, "source");
        }
    } else if (k == KN_REF_COLUMN_K) {
        for (size_t i = 0; i < sc->n_columns; i++) {
            add_item(items, sc->columns[i]->name, ITEM_FIELD, NULL, "column");
        }
    } else if (k == KN_REF_RULE_K) {
        for (size_t i = 0; i < KN_RULE_COUNT; i++) {
            add_item(items, kn_rule_get((kn_rule)i)->id, ITEM_VALUE, NULL, kn_rule_get((kn_rule)i)->summary);
        }
    }
}

json_t *kn_lsp_completion(kn_server *s, kn_doc *d, long line, long character)
{
    kn_doc *m = kn_model_for(s, d);
    const kn_schema *sc = m ? m->unit->schema : NULL;
    size_t off = kn_doc_offset(d, line, character);
    long cur_line, cur_char;
    kn_doc_position(d, off, &cur_line, &cur_char);
    size_t ls = d->lines[cur_line];
    const char *lp = d->text + ls, *cur = d->text + off;
    size_t ind = indent_of(lp, cur);
    bool list_item = memchr(lp, '-', ind) != NULL;

    /* The keys of the lines above with less indentation, outermost first. */
    char *path[MAX_PATH + 8];
    size_t n = 0;
    {
        char *rev[MAX_PATH];
        size_t nr = 0, want = ind;
        size_t i = (size_t)cur_line;
        while (i > 0 && want > 0 && nr < MAX_PATH) {
            i--;
            /* The line without its line end ("\n", "\r\n" or "\r"). */
            size_t b = d->lines[i], e = d->lines[i + 1] - 1;
            if (e > b && d->text[e] == '\n' && d->text[e - 1] == '\r') {
                e--;
            }
            const char *p = d->text + b, *end = d->text + e;
            size_t li = indent_of(p, end);
            if (p + li >= end || p[li] == '#' || li >= want) {
                continue;
            }
            const char *after;
            char *k[8];
            size_t nk = keys_in(p + li, end, k, 0, 1, &after);
            if (nk) {
                rev[nr++] = k[0];
                want = li;
            }
        }
        while (nr) {
            path[n++] = rev[--nr];
        }
    }
    const char *after;
    size_t before_line = n;
    n = keys_in(lp + ind, cur, path, n, MAX_PATH + 8, &after);
    bool value_pos = n > before_line && !memchr(after, '{', (size_t)(cur - after));
    bool in_flow_map = n > before_line && !value_pos;

    /* Walk the shape tables along the path. */
    const kn_shape *sh = (sc && m == d) || !m ? &kn_shape_top : &kn_shape_included;
    const kn_key_spec *spec = NULL;
    bool names_of_event_keys = false; /* inside after/before: event -> LAG */
    size_t i = 0;
    for (; i < n && sh; i++) {
        int k = kn_shape_find(sh, path[i]);
        if (k < 0) {
            if (strcmp(path[i], "one_of") == 0 && spec && spec->ref == KN_REF_EVENT_K) {
                continue; /* known: {one_of: [...]} */
            }
            sh = NULL;
            spec = NULL;
            break;
        }
        spec = &sh->keys[k];
        if (i + 1 == n && value_pos) {
            break;
        }
        if (spec->kind == KN_V_NAMED_MAPS) {
            i++; /* the name itself */
            sh = spec->sub;
            if (i == n) {
                sh = NULL; /* a new name: nothing to offer */
            }
        } else if (spec->kind == KN_V_MAP || spec->kind == KN_V_LIST_OF_MAP) {
            sh = spec->sub;
        } else if (spec->kind == KN_V_RELATION) {
            names_of_event_keys = i + 1 == n;
            sh = NULL;
        } else {
            sh = NULL;
        }
    }
    (void)in_flow_map;
    json_t *items = json_array();
    if (value_pos && spec) {
        if (spec->ref != KN_REF_NONE) {
            add_names(items, sc, d, spec->ref);
        } else if (spec->kind == KN_V_RELATION) {
            add_names(items, sc, d, KN_REF_EVENT_K);
        } else if (spec->kind == KN_V_ENUM && spec->values) {
            for (const char *const *v = spec->values; *v; v++) {
                add_item(items, *v, ITEM_VALUE, NULL, NULL);
            }
        } else if (spec->kind == KN_V_BOOL) {
            add_item(items, "true", ITEM_VALUE, NULL, NULL);
            add_item(items, "false", ITEM_VALUE, NULL, NULL);
        }
    } else if (names_of_event_keys) {
        add_names(items, sc, d, KN_REF_EVENT_K);
    } else if (list_item && spec && spec->ref != KN_REF_NONE && i == n) {
        add_names(items, sc, d, spec->ref); /* - name, in a block list of names */
    } else if (sh) {
        for (size_t k = 0; k < sh->n_keys; k++) {
            const kn_key_spec *ks = &sh->keys[k];
            bool block = ks->kind == KN_V_MAP || ks->kind == KN_V_NAMED_MAPS || ks->kind == KN_V_LIST_OF_MAP;
            char ins[64];
            snprintf(ins, sizeof ins, "%s:%s", ks->name, block ? "" : " ");
            add_item(items, ks->name, ITEM_PROPERTY, ins, ks->doc);
        }
    }
    for (size_t k = 0; k < n; k++) {
        free(path[k]);
    }
    return json_pack("{s:b,s:o}", "isIncomplete", 0, "items", items);
}

/* --- Code actions -------------------------------------------------------- */

/* The suggestion of a "did you mean 'X'" in text (malloc), or NULL. */
static char *suggestion(const char *text)
{
    const char *p = strstr(text, "did you mean '");
    if (!p) {
        return NULL;
    }
    p += 14;
    const char *q = strchr(p, '\'');
    return q && q > p ? kn_lsp_xstrndup(p, (size_t)(q - p)) : NULL;
}

static json_t *edit_action(const char *title, const char *uri, json_t *range, const char *text,
                           bool preferred)
{
    json_t *edits = json_pack("[{s:o,s:s}]", "range", range, "newText", text);
    json_t *changes = json_object();
    json_object_set_new(changes, uri, edits);
    return json_pack("{s:s,s:s,s:b,s:{s:o}}", "title", title, "kind", "quickfix", "isPreferred", preferred,
                     "edit", "changes", changes);
}

static json_t *point_range(long line, long character)
{
    return json_pack("{s:{s:i,s:i},s:{s:i,s:i}}", "start", "line", (json_int_t)line, "character",
                     (json_int_t)character, "end", "line", (json_int_t)line, "character",
                     (json_int_t)character);
}

/* The LSP position of a model position (in its file's open buffer, or in
 * the file as on disk). */
static void lsp_pos(kn_server *s, const kn_pos *p, size_t extra, long *line, long *character)
{
    const kn_doc *d = kn_doc_text(s, p->file);
    if (d && p->offset + extra <= d->len) {
        kn_doc_position(d, p->offset + extra, line, character);
    } else {
        *line = p->line ? (long)p->line - 1 : 0;
        *character = p->col ? (long)(p->col - 1 + extra) : 0;
    }
}

/* A waiver skeleton in the block (key: value) that holds the finding. */
static json_t *waiver_action(kn_server *s, const kn_view *v, kn_node *key, kn_node *value)
{
    if (!key || !v->pos.file || strcmp(key->pos.file, v->pos.file) != 0 || key->pos.offset > v->pos.offset) {
        return NULL;
    }
    const char *id = kn_rule_get(v->rule)->id;
    char waiver[160];
    snprintf(waiver, sizeof waiver, "waive: [{rule: %s, reason: \"TODO: why this does not apply\"}]", id);
    char *title = NULL;
    json_t *range = NULL;
    char *text = NULL;
    long line, character;
    kn_node *list = value && value->kind == KN_NODE_MAP ? kn_map_get(value, "waive") : NULL;
    char item[160];
    snprintf(item, sizeof item, "{rule: %s, reason: \"TODO: why this does not apply\"}", id);
    if (list) {
        /* A waive list exists: the skeleton becomes its first item. */
        if (list->kind != KN_NODE_SEQ || !list->raw) {
            return NULL;
        }
        if (list->raw[0] == '[') {
            lsp_pos(s, &list->pos, 1, &line, &character);
            range = point_range(line, character);
            size_t n = strlen(item) + 3;
            text = kn_lsp_xmalloc(n);
            snprintf(text, n, "%s%s", item, list->u.seq.n ? ", " : "");
        } else {
            /* A block list: a line like its first item's, before it. */
            kn_doc *d = kn_doc_by_file(s, key->pos.file);
            const kn_node *first = list->u.seq.n ? list->u.seq.items[0] : NULL;
            if (!d || !first || first->pos.offset > d->len) {
                return NULL;
            }
            size_t b = first->pos.offset;
            while (b > 0 && d->text[b - 1] != '\n' && d->text[b - 1] != '\r') {
                b--;
            }
            size_t plen = first->pos.offset - b;
            for (size_t k = 0; k < plen; k++) {
                if (d->text[b + k] != ' ' && d->text[b + k] != '-') {
                    return NULL;
                }
            }
            if (!memchr(d->text + b, '-', plen)) {
                return NULL;
            }
            kn_doc_position(d, b, &line, &character);
            range = point_range(line, character);
            size_t n = plen + strlen(item) + 2;
            text = kn_lsp_xmalloc(n);
            memcpy(text, d->text + b, plen);
            snprintf(text + plen, n - plen, "%s\n", item);
        }
    } else if (value && value->kind == KN_NODE_MAP && value->raw && value->raw[0] == '{') {
        lsp_pos(s, &value->pos, 1, &line, &character);
        range = point_range(line, character);
        size_t n = strlen(waiver) + 3;
        text = kn_lsp_xmalloc(n);
        snprintf(text, n, "%s%s", waiver, value->u.map.n ? ", " : "");
    } else if (value && value->kind == KN_NODE_MAP && value->pos.line > key->pos.line) {
        lsp_pos(s, &value->pos, 0, &line, &character);
        range = point_range(line, 0);
        size_t ind = value->pos.col - 1, n = ind + strlen(waiver) + 2;
        text = kn_lsp_xmalloc(n);
        memset(text, ' ', ind);
        snprintf(text + ind, n - ind, "%s\n", waiver);
    } else if (!value ||
               (value->kind == KN_NODE_SCALAR && kn_node_is_null(value) && value->u.scalar.len == 0)) {
        /* "name:" with nothing after it: the mapping starts on the next line. */
        kn_doc *d = kn_doc_by_file(s, key->pos.file);
        if (!d) {
            return NULL;
        }
        size_t e = key->pos.offset;
        while (e < d->len && d->text[e] != '\n') {
            e++;
        }
        while (e > key->pos.offset && (d->text[e - 1] == ' ' || d->text[e - 1] == '\r')) {
            e--;
        }
        if (e == 0 || d->text[e - 1] != ':') {
            return NULL;
        }
        kn_doc_position(d, e, &line, &character);
        range = point_range(line, character);
        size_t ind = key->pos.col - 1 + 2, n = ind + strlen(waiver) + 2;
        text = kn_lsp_xmalloc(n);
        text[0] = '\n';
        memset(text + 1, ' ', ind);
        snprintf(text + 1 + ind, n - 1 - ind, "%s", waiver);
    } else {
        return NULL;
    }
    size_t tn = strlen(id) + strlen(v->subject) + 64;
    title = kn_lsp_xmalloc(tn);
    snprintf(title, tn, "Waive %s for '%s' (a reason must be filled in)", id, v->subject);
    char *uri = kn_file_uri(s, key->pos.file);
    json_t *a = edit_action(title, uri, range, text, false);
    free(uri);
    free(title);
    free(text);
    return a;
}

json_t *kn_lsp_code_actions(kn_server *s, kn_doc *d, long l0, long c0, long l1, long c1)
{
    (void)c0;
    (void)c1;
    json_t *out = json_array();
    kn_doc *m = kn_model_for(s, d);
    if (!m) {
        return out;
    }
    const kn_schema *sc = m->unit->schema;
    for (size_t i = 0; i < m->n_view; i++) {
        const kn_view *v = &m->view[i];
        if (!v->pos.line || kn_doc_by_file(s, v->pos.file) != d) {
            continue;
        }
        long line, character;
        lsp_pos(s, &v->pos, 0, &line, &character);
        if (line < l0 || line > l1) {
            continue;
        }
        /* The "did you mean" of the message, or of a note at the same place. */
        char *near = suggestion(v->message);
        for (size_t k = 0; !near && k < v->n_notes; k++) {
            if (v->notes[k].pos.file && v->notes[k].pos.offset == v->pos.offset) {
                near = suggestion(v->notes[k].message);
            }
        }
        if (near) {
            size_t tl = kn_token_len(d->text, d->len, v->pos.offset);
            if (!(tl == strlen(near) && memcmp(d->text + v->pos.offset, near, tl) == 0)) {
                size_t n = strlen(near) + tl + 32;
                char *title = kn_lsp_xmalloc(n);
                snprintf(title, n, "Replace '%.*s' with '%s'", (int)tl, d->text + v->pos.offset, near);
                json_array_append_new(out, edit_action(title, d->uri, kn_range_at(s, &v->pos), near, true));
                free(title);
            }
            free(near);
        }
        if (!v->subject[0] || v->rule == KN_R_WAIVER_WITHOUT_REASON || v->rule == KN_R_WAIVER_EXPIRED ||
            v->rule == KN_R_WAIVER_UNUSED) {
            continue;
        }
        json_t *w = NULL;
        const kn_column *c = kn_schema_column(sc, v->subject);
        const kn_event *e = kn_schema_event(sc, v->subject);
        const kn_source *src = kn_schema_source(sc, v->subject);
        if (c) {
            w = waiver_action(s, v, c->key, c->value);
        }
        if (!w && e) {
            w = waiver_action(s, v, e->key, e->value);
        }
        if (!w && src) {
            w = waiver_action(s, v, src->key, src->value);
        }
        if (w) {
            json_array_append_new(out, w);
        }
    }
    return out;
}

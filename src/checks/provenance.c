/* provenance.c - the provenance rules (SPEC §4.3): where each feature comes
 * from and how it was joined in.  external-without-provenance,
 * join-latest-value, no-point-in-time-history, missing-source, missing-known
 * and unused-source.  Reads the loaded schema model (references already
 * resolved, kn_source.used already marked) and pushes one diagnostic per
 * finding into the sink, at the value at fault, with the reasons in notes. */
#include <string.h>

#include "../util/text.h"
#include "checks.h"

typedef struct px {
    kn_ctx *ctx;
    const kn_schema *s;
} px;

static const char *esc(const px *x, const char *s)
{
    return kn_escape_term(x->ctx->arena, s, strlen(s));
}

static const kn_pos *col_at(const kn_column *c, const kn_node *n)
{
    return kn_column_pos(c, n);
}

/* Why a reviewer needs each provenance field, for the notes of
 * external-without-provenance. */
static const char *const field_why[KN_SF_COUNT] = {
    [KN_SF_KIND] = "says whether the data is the organisation's own or a third party's",
    [KN_SF_DESCRIPTION] = "tells a reviewer what the source holds and at what grain",
    [KN_SF_OWNER] = "names who answers for the source inside the organisation",
    [KN_SF_CONTACT] = "says whom to ask when the feed changes, breaks or its terms change",
    [KN_SF_LATENCY] = "says how long after an event its record can be queried; without it the timeline assumes no delay",
    [KN_SF_REFRESH] = "gives the batch period; a record can wait up to one whole period before it is visible",
    [KN_SF_HISTORY] = "says whether old values are kept or overwritten, which decides whether a join can see past values",
    [KN_SF_PROVIDER] = "names who supplies the data: the party whose terms apply and who is asked when values look wrong",
    [KN_SF_LICENSE] = "states the terms under which the data may be used to train and serve a model; without it nobody can tell whether this use is allowed",
    [KN_SF_RETRIEVED] = "dates the copy in use; values and coverage change between copies, so a result cannot be reproduced or audited without it",
    [KN_SF_VERSION] = "ties the model to the provider's exact release or snapshot it was trained on",
    [KN_SF_POINT_IN_TIME] = "says whether the provider can serve values as they stood at a past date; without that a join gives past rows today's values",
    [KN_SF_DOCUMENTATION] = "points at the provider's description of how values are computed and when they are revised",
};

/* A field counts as missing when absent, null or an empty string. */
static bool field_missing(const kn_source *src, kn_source_field f)
{
    const kn_node *n = src->field[f];
    if (!n) {
        return true;
    }
    if (n->kind != KN_NODE_SCALAR) {
        return false;
    }
    return kn_node_is_null(n) || n->u.scalar.len == 0;
}

static void check_external(px *x, const kn_source *src)
{
    const kn_rulebook *rb = x->ctx->rulebook;
    size_t n_missing = 0;
    for (size_t f = 0; f < KN_SF_COUNT; f++) {
        if (rb->require_external[f] && field_missing(src, (kn_source_field)f)) {
            n_missing++;
        }
    }
    if (!n_missing) {
        return;
    }
    kn_arena *a = x->ctx->arena;
    const char *list = "";
    size_t k = 0;
    for (size_t f = 0; f < KN_SF_COUNT; f++) {
        if (rb->require_external[f] && field_missing(src, (kn_source_field)f)) {
            const char *sep = k == 0 ? "" : k + 1 == n_missing ? " and " : ", ";
            list = kn_printf(a, "%s%s%s", list, sep, kn_source_field_names[f]);
            k++;
        }
    }
    kn_diag *d = kn_diag_push(x->ctx->sink, KN_R_EXTERNAL_WITHOUT_PROVENANCE, &src->key->pos, src->name,
                              "external source '%s' lacks %s, which the rulebook requires of every external source",
                              esc(x, src->name), list);
    kn_diag_key(x->ctx->sink, d, "external source lacks %s", list);
    for (size_t f = 0; f < KN_SF_COUNT; f++) {
        if (!(rb->require_external[f] && field_missing(src, (kn_source_field)f))) {
            continue;
        }
        const kn_node *n = src->field[f];
        kn_diag_note(x->ctx->sink, d, n ? &n->pos : &src->key->pos, "%s %s: it %s", kn_source_field_names[f],
                     n ? "is empty" : "is missing", field_why[f]);
    }
    const char *origin = rb->origin && strcmp(rb->origin, "(built-in)") != 0
                             ? kn_printf(a, "the rulebook %s", esc(x, rb->origin))
                             : "the built-in rulebook";
    kn_diag_note(x->ctx->sink, d, &src->key->pos, "the required fields are require.external_source in %s", origin);
}

/* The source a column's join reads from: join.source, else the column's. */
static const kn_source *join_source(const kn_column *c, const kn_node **named_at)
{
    if (c->join.source.name) {
        *named_at = c->join.source.node;
        return KN_REF_SOURCE(c->join.source);
    }
    *named_at = c->source.node;
    return KN_REF_SOURCE(c->source);
}

static const char *moment_name(const px *x)
{
    const char *m = x->s->prediction.moment.name;
    return m ? esc(x, m) : "the moment";
}

static void check_latest_value(px *x, const kn_column *c, const kn_source *src, const kn_node *named_at)
{
    bool external = src->kind == KN_SOURCE_EXTERNAL;
    bool overwritten = src->history == KN_HISTORY_OVERWRITTEN;
    if (!external && !overwritten) {
        return;
    }
    kn_sink *sink = x->ctx->sink;
    const char *why = external && overwritten ? "an external source that overwrites its values in place"
                      : overwritten           ? "which overwrites its values in place"
                                              : "an external source";
    kn_diag *d = kn_diag_push(sink, KN_R_JOIN_LATEST_VALUE, col_at(c, c->join.node), c->name,
                              "column '%s' is joined from source '%s', %s, without as_of: training rows see today's "
                              "value rather than the value at the moment",
                              esc(x, c->name), esc(x, src->name), why);
    kn_diag_key(sink, d, "joined from '%s' without as_of", src->name);
    if (named_at && named_at != c->join.node) {
        kn_diag_note(sink, d, &named_at->pos, "the value comes from source '%s'", esc(x, src->name));
    }
    if (overwritten) {
        kn_diag_note(sink, d, &src->field[KN_SF_HISTORY]->pos,
                     "source '%s' keeps only the latest value (history: overwritten): for a row whose moment is in the "
                     "past, the joined value may have been written after that moment",
                     esc(x, src->name));
    }
    if (external) {
        const kn_node *kind = src->field[KN_SF_KIND];
        if (src->retrieved) {
            kn_diag_note(sink, d, &src->field[KN_SF_RETRIEVED]->pos,
                         "source '%s' is external and its copy was retrieved on %s: every row gets the value as it "
                         "stood that day, whatever the row's own moment",
                         esc(x, src->name), esc(x, src->retrieved));
        } else {
            kn_diag_note(sink, d, &kind->pos,
                         "source '%s' is external: every row gets the value as the provider served it when the copy "
                         "was taken, whatever the row's own moment",
                         esc(x, src->name));
        }
    }
    if (overwritten) {
        kn_diag_note(sink, d, col_at(c, c->join.node),
                     "keep the history of '%s' (history: append or versioned) and join it with as_of: %s",
                     esc(x, src->name), moment_name(x));
    } else if (src->point_in_time == 1) {
        kn_diag_note(sink, d, col_at(c, c->join.node),
                     "the provider can serve past values (point_in_time: true): join with as_of: %s",
                     moment_name(x));
    } else {
        kn_diag_note(sink, d, col_at(c, c->join.node),
                     "join with as_of: %s from a copy that keeps past values (dated snapshots, or a provider "
                     "offering point-in-time queries)",
                     moment_name(x));
    }
}

static void check_as_of(px *x, const kn_column *c, const kn_source *src)
{
    bool no_pit = src->point_in_time == 0;
    bool overwritten = src->history == KN_HISTORY_OVERWRITTEN;
    if (!no_pit && !overwritten) {
        return;
    }
    kn_sink *sink = x->ctx->sink;
    const char *as_of = esc(x, c->join.as_of.name);
    const char *why = no_pit ? "cannot serve values as they stood at a past date (point_in_time: false)"
                             : "keeps only the latest value (history: overwritten)";
    kn_diag *d = kn_diag_push(sink, KN_R_NO_POINT_IN_TIME_HISTORY, col_at(c, c->join.as_of.node), c->name,
                              "column '%s' is joined as of '%s' from source '%s', which %s: the join gets today's "
                              "value whatever as_of says",
                              esc(x, c->name), as_of, esc(x, src->name), why);
    kn_diag_key(sink, d, "as_of join from '%s' without history", src->name);
    if (no_pit) {
        kn_diag_note(sink, d, &src->field[KN_SF_POINT_IN_TIME]->pos,
                     "source '%s' declares point_in_time: false here", esc(x, src->name));
    }
    if (overwritten) {
        kn_diag_note(sink, d, &src->field[KN_SF_HISTORY]->pos,
                     "source '%s' declares history: overwritten here: each update replaces the old value",
                     esc(x, src->name));
    }
    kn_diag_note(sink, d, col_at(c, c->join.as_of.node),
                 "take the value from a source that keeps its history (append or versioned), or record it at "
                 "'%s' when the row is made",
                 as_of);
}

static void check_column(px *x, const kn_column *c)
{
    kn_sink *sink = x->ctx->sink;
    if (c->role == KN_ROLE_FEATURE) {
        /* A misspelt key (schema-shape) may be the missing `known`: its own
         * error says so, and guessing twice helps nobody. */
        if (!c->known.name && !c->n_one_of && !c->window.present && !c->n_derived && !c->stray_key) {
            kn_diag *d = kn_diag_push(sink, KN_R_MISSING_KNOWN, col_at(c, NULL), c->name,
                                      "feature '%s' has none of known, window or derived_from: nothing says when its "
                                      "value exists, so its availability at the moment cannot be checked",
                                      esc(x, c->name));
            kn_diag_note(sink, d, col_at(c, NULL),
                         "add known: EVENT (the event from which the value exists), a window over its source's "
                         "records, or derived_from for a computed column");
        }
        /* A derived column takes its provenance from its inputs. */
        if (x->ctx->rulebook->require_feature_source && !c->source.name && !c->join.source.name && !c->n_derived) {
            kn_diag *d = kn_diag_push(sink, KN_R_MISSING_SOURCE, col_at(c, NULL), c->name,
                                      "feature '%s' has no source: the rulebook requires every feature to name where "
                                      "its value comes from",
                                      esc(x, c->name));
            kn_diag_note(sink, d, col_at(c, NULL),
                         "without a source a reviewer cannot see its latency, refresh, history or licence; add "
                         "source: NAME (a source under sources:)");
        }
    }
    if (!c->join.present || c->role == KN_ROLE_EXCLUDED) {
        return;
    }
    const kn_node *named_at = NULL;
    const kn_source *src = join_source(c, &named_at);
    if (!src) {
        return;
    }
    if (c->join.as_of.name) {
        check_as_of(x, c, src);
    } else {
        check_latest_value(x, c, src, named_at);
    }
}

/* Sources of a shared register are used by other schemas too; only a source
 * defined in the schema's own file is reported as unused. */
static bool defined_in_main(const px *x, const kn_source *src)
{
    const char *f = src->key->pos.file;
    return f == x->s->path || (f && x->s->path && strcmp(f, x->s->path) == 0);
}

void kn_check_provenance(kn_ctx *ctx, const kn_schema *s)
{
    px x = {ctx, s};
    for (size_t i = 0; i < s->n_sources; i++) {
        const kn_source *src = s->sources[i];
        if (src->broken) {
            continue; /* set aside with its own error */
        }
        if (src->kind == KN_SOURCE_EXTERNAL) {
            check_external(&x, src);
        }
        if (!src->used && defined_in_main(&x, src)) {
            kn_diag *d = kn_diag_push(ctx->sink, KN_R_UNUSED_SOURCE, &src->key->pos, src->name,
                                      "source '%s' is not used by any column", esc(&x, src->name));
            kn_diag_note(ctx->sink, d, &src->key->pos,
                         "name it in a column's source or join.source, or remove it; an unused entry hides which "
                         "sources the table really depends on");
        }
    }
    for (size_t i = 0; i < s->n_columns; i++) {
        const kn_column *c = s->columns[i];
        const kn_source *src = KN_REF_SOURCE(c->source), *via = KN_REF_SOURCE(c->join.source);
        if (c->broken || (src && src->broken) || (via && via->broken)) {
            continue;
        }
        check_column(&x, c);
    }
}

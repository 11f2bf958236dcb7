/* maturity.c - reads-unsettled-values (SPEC §4.2): a feature read from a
 * source whose records keep changing for a while after their event
 * (`matures`, a claim confirmed as fraud months later) reads, in the
 * training table, values that had settled by the time the table was
 * built, while the deployed model reads them as they stand at the moment.
 * The records a column reads are timed by its known event (or the members
 * of known.one_of) or, for a window, by the window's end; a record is
 * unsettled at the moment when its event plus matures can lie after it.
 * An as_of join on a source that keeps history (versioned or append, with
 * point_in_time) reads the values as they stood, and is quiet. */
#include <string.h>

#include "checks.h"

static char *words(kn_ctx *ctx, const kn_timeline *t, kn_interval r)
{
    const kn_event *m = kn_timeline_moment(t);
    return kn_timeline_range_words(ctx->arena, r, m ? m->name : "");
}

/* The source the column's values are read from: the join's, else its own. */
static const kn_source *read_source(const kn_column *c, const kn_node **at)
{
    if (c->join.present && KN_REF_SOURCE(c->join.source)) {
        *at = c->join.source.node;
        return KN_REF_SOURCE(c->join.source);
    }
    *at = c->source.node;
    return KN_REF_SOURCE(c->source);
}

/* An as_of join on a source that can serve past values reads settled and
 * unsettled rows alike as they stood. */
static bool reads_as_it_stood(const kn_column *c, const kn_source *src)
{
    return c->join.present && (c->join.as_of.target != NULL) &&
           (src->history == KN_HISTORY_VERSIONED || src->history == KN_HISTORY_APPEND) && src->point_in_time == 1;
}

static void check_column(kn_ctx *ctx, const kn_schema *s, const kn_timeline *t, const kn_column *c)
{
    const kn_column_timing *T = kn_timeline_column_timing(t, c);
    if (!T || !T->computed || c->broken) {
        return;
    }
    const kn_node *src_at = NULL;
    const kn_source *src = read_source(c, &src_at);
    if (!src || src->broken || !src->matures.present || src->matures.hi <= 0 || reads_as_it_stood(c, src)) {
        return;
    }
    /* The newest record the column reads, relative to the moment. */
    kn_interval rec;
    const kn_node *at;
    const char *what;
    if (T->has[KN_PART_WINDOW]) {
        rec = T->window_end;
        at = c->window.to_node ? c->window.to_node : c->window.node;
        what = "the newest record of its window";
    } else if (T->has[KN_PART_KNOWN]) {
        rec = T->event[KN_PART_KNOWN];
        at = c->known.node ? c->known.node : c->one_of_node;
        what = "the record it reads";
    } else {
        return; /* derived: its inputs are judged themselves */
    }
    if (rec.hi >= KN_TIME_INF || rec.lo <= -KN_TIME_INF) {
        return; /* unordered: unordered-event speaks for it */
    }
    kn_interval lag = {src->matures.lo, src->matures.hi};
    kn_interval settled = kn_interval_add(rec, lag);
    kn_verdict v = kn_timeline_classify(t, settled);
    if (v == KN_VERDICT_AVAILABLE) {
        return;
    }
    char b[48];
    kn_diag *d = kn_diag_push(ctx->sink, KN_R_READS_UNSETTLED_VALUES, at ? &at->pos : &c->key->pos, c->name,
                              "column '%s' reads records of source '%s' whose values %s still change after the "
                              "moment: %s settles %s",
                              c->name, src->name, v == KN_VERDICT_LATE ? "can" : "may", what,
                              words(ctx, t, settled));
    kn_diag_range(d, settled.lo, settled.hi);
    if (v == KN_VERDICT_MAYBE_LATE) {
        kn_diag_cap(d, KN_SEV_WARNING);
    }
    kn_diag_note(ctx->sink, d, at ? &at->pos : &c->key->pos, "%s comes %s", what, words(ctx, t, rec));
    const kn_node *mn = src->field[KN_SF_MATURES];
    kn_diag_note(ctx->sink, d, mn ? &mn->pos : (src_at ? &src_at->pos : NULL),
                 "source '%s' keeps changing a record for %s%s after its event (sources.%s.matures)", src->name,
                 src->matures.lo == src->matures.hi ? "" : "up to ",
                 kn_duration_format(src->matures.hi, b, sizeof b), src->name);
    /* How far back the newest record read must lie to be settled. */
    int64_t need = kn_time_add(rec.hi, src->matures.hi);
    char b2[48];
    kn_diag_note(ctx->sink, d, at ? &at->pos : NULL,
                 "the training table holds the settled values; the deployed model reads them unsettled: join "
                 "as_of the moment on a source that keeps history (history: versioned or append, "
                 "point_in_time: true), or %s %s earlier",
                 T->has[KN_PART_WINDOW] ? "end the window" : "read a record", kn_duration_format(need, b2, sizeof b2));
    (void)s;
}

void kn_check_maturity(kn_ctx *ctx, const kn_schema *s, const kn_timeline *t)
{
    if (!kn_timeline_moment(t)) {
        return;
    }
    for (size_t i = 0; i < s->n_columns; i++) {
        const kn_column *c = s->columns[i];
        /* Features only: the target and excluded columns are never read by
         * the deployed model. */
        if (c->role != KN_ROLE_FEATURE || KN_REF_COLUMN(s->prediction.target) == c) {
            continue;
        }
        check_column(ctx, s, t, c);
    }
}

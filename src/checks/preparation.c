/* preparation.c - preparation and splitting (SPEC §4.5): fit-before-split,
 * resample-before-split, target-encoding-in-sample, random-split-temporal,
 * split-gap-short and entity-straddles-split.  Reads the pipeline and the
 * split of the schema model, and for the gap the label horizon from the
 * solved timeline; pushes one diagnostic per finding at the value at fault
 * (the `fit:` value, the split's `method:` or `gap:`), with the numbers and
 * the reason in notes. */
#include <string.h>

#include "checks.h"

typedef struct cx {
    kn_ctx *ctx;
    const kn_schema *s;
    const kn_timeline *t;
} cx;

static const char *dur(int64_t us, char *buf)
{
    return kn_duration_format(us, buf, 48);
}

/* What a step estimates from the rows it is fitted on. */
static const char *estimates(kn_step_kind k)
{
    switch (k) {
    case KN_STEP_SCALE:
        return "the test rows' values move the centre and spread used to scale every row";
    case KN_STEP_IMPUTE:
        return "the values filled into gaps are computed from test rows too";
    case KN_STEP_ENCODE:
        return "the categories and their codes come from test rows too";
    case KN_STEP_TARGET_ENCODE:
        return "each category's encoding averages the test rows' labels, so the answers are built into the features";
    case KN_STEP_SELECT:
        return "the features are chosen by how well they predict the target on the test rows as well";
    case KN_STEP_REDUCE:
        return "the components are computed from the test rows too";
    case KN_STEP_DISCRETIZE:
        return "the bin edges come from the test rows' distribution";
    case KN_STEP_CLIP:
        return "the clipping bounds come from the test rows' distribution";
    case KN_STEP_CUSTOM:
        return "whatever it estimates, it estimates from the test rows too";
    case KN_STEP_RESAMPLE:
        break;
    }
    return "";
}

static size_t n_features(const kn_schema *s)
{
    size_t n = 0;
    for (size_t i = 0; i < s->n_columns; i++) {
        n += s->columns[i]->role == KN_ROLE_FEATURE;
    }
    return n;
}

/* "the 3 columns 'a', 'b', 'c'" or "all 12 features" (the default). */
static const char *step_columns(const cx *x, const kn_step *st)
{
    kn_arena *a = x->ctx->arena;
    if (!st->n_columns) {
        size_t n = n_features(x->s);
        return kn_printf(a, "all %zu feature%s (no columns listed)", n, n == 1 ? "" : "s");
    }
    const char *list = "";
    for (size_t i = 0; i < st->n_columns && i < 6; i++) {
        list = kn_printf(a, "%s%s'%s'", list, i ? ", " : "", st->columns[i].name);
    }
    return kn_printf(a, "%zu column%s: %s%s", st->n_columns, st->n_columns == 1 ? "" : "s", list,
                     st->n_columns > 6 ? ", ..." : "");
}

static void check_steps(const cx *x)
{
    kn_sink *sink = x->ctx->sink;
    for (size_t i = 0; i < x->s->n_steps; i++) {
        const kn_step *st = &x->s->steps[i];
        if (!st->fit_node) {
            continue;
        }
        const char *kind = kn_step_name(st->kind);
        kn_diag *d = NULL;
        if (st->fit == KN_FIT_ALL_ROWS && st->kind == KN_STEP_RESAMPLE) {
            d = kn_diag_push(sink, KN_R_RESAMPLE_BEFORE_SPLIT, &st->fit_node->pos, kind,
                             "pipeline step %zu resamples all rows before the split: copies of a row (or synthetic "
                             "rows built from its neighbours) land in both training and test, so the test score "
                             "rewards memorising",
                             i + 1);
            kn_diag_note(sink, d, st->kind_node ? &st->kind_node->pos : &st->node->pos, "step %zu is '%s' on %s",
                         i + 1, kind, step_columns(x, st));
            kn_diag_note(sink, d, &st->fit_node->pos,
                         "split first, then resample the training rows only (fit: training or fit: fold); leave the "
                         "test rows as they come");
        } else if (st->fit == KN_FIT_ALL_ROWS) {
            d = kn_diag_push(sink, KN_R_FIT_BEFORE_SPLIT, &st->fit_node->pos, kind,
                             "pipeline step %zu ('%s') estimates its parameters on all rows, test rows included: %s",
                             i + 1, kind, estimates(st->kind));
            kn_diag_note(sink, d, st->kind_node ? &st->kind_node->pos : &st->node->pos, "step %zu is '%s' on %s",
                         i + 1, kind, step_columns(x, st));
            kn_diag_note(sink, d, &st->fit_node->pos,
                         "fit it on the training rows (fit: training), or inside each fold (fit: fold), and only "
                         "apply it to the test rows");
        } else if (st->fit == KN_FIT_TRAINING && st->kind == KN_STEP_TARGET_ENCODE) {
            d = kn_diag_push(sink, KN_R_TARGET_ENCODING_IN_SAMPLE, &st->fit_node->pos, kind,
                             "pipeline step %zu target-encodes with statistics of all training rows: each row's "
                             "encoding includes its own label, so the model learns from the answer it is scored "
                             "on and overrates rare categories",
                             i + 1);
            kn_diag_note(sink, d, st->kind_node ? &st->kind_node->pos : &st->node->pos, "step %zu is '%s' on %s",
                         i + 1, kind, step_columns(x, st));
            kn_diag_note(sink, d, &st->fit_node->pos,
                         "encode each training row with statistics from the other folds (fit: fold), and the test "
                         "rows with statistics from all training rows");
        }
        if (d) {
            kn_diag_key(sink, d, "step %s %s", kind, kn_fit_name(st->fit));
        }
    }
}

/* ---- the split ----------------------------------------------------------- */

static const kn_pos *split_pos(const kn_split *sp)
{
    if (sp->method_node) {
        return &sp->method_node->pos;
    }
    return &sp->node->pos;
}

/* The column that dates the rows, if any: moment_column, the split's
 * time_column, or a column with role timestamp. */
static const kn_column *dating_column(const kn_schema *s, const char **how)
{
    if (KN_REF_COLUMN(s->prediction.moment_column)) {
        *how = "prediction.moment_column";
        return KN_REF_COLUMN(s->prediction.moment_column);
    }
    if (KN_REF_COLUMN(s->split.time_column)) {
        *how = "split.time_column";
        return KN_REF_COLUMN(s->split.time_column);
    }
    for (size_t i = 0; i < s->n_columns; i++) {
        if (s->columns[i]->role == KN_ROLE_TIMESTAMP) {
            *how = "role: timestamp";
            return s->columns[i];
        }
    }
    return NULL;
}

/* Fires on every random or group split (SPEC §4.5): whatever the table
 * holds, each row is dated by its moment, an event in time, so a split
 * that ignores time lets training see the test period's future.  The note
 * names the column that carries the date when one is declared. */
static void check_random_split(const cx *x)
{
    const kn_split *sp = &x->s->split;
    if (sp->method != KN_SPLIT_RANDOM && sp->method != KN_SPLIT_GROUP) {
        return;
    }
    kn_sink *sink = x->ctx->sink;
    const kn_prediction *p = &x->s->prediction;
    const char *moment = p->moment.name ? p->moment.name : "";
    const char *method = kn_split_method_name(sp->method);
    kn_diag *d = kn_diag_push(sink, KN_R_RANDOM_SPLIT_TEMPORAL, split_pos(sp), "split",
                              "split method '%s' assigns rows to training and test regardless of time, while each "
                              "row is dated by its moment '%s': training sees the future of the test period, a "
                              "view the deployed model never has",
                              method, moment);
    const char *how = "";
    const kn_column *date = dating_column(x->s, &how);
    if (date) {
        const kn_node *dn = date == KN_REF_COLUMN(p->moment_column) ? p->moment_column.node
                            : date == KN_REF_COLUMN(sp->time_column) ? sp->time_column.node
                                                                     : date->role_node;
        kn_diag_note(sink, d, kn_column_pos(date, dn), "'%s' dates the rows (%s)", date->name, how);
    } else if (p->moment.node) {
        kn_diag_note(sink, d, &p->moment.node->pos,
                     "each row is taken at the moment '%s', an event in time, whether or not a column holds its "
                     "timestamp (declare it as prediction.moment_column)",
                     moment);
    }
    kn_diag_note(sink, d, split_pos(sp),
                 "use method: %s, with a gap of at least the label horizon",
                 sp->method == KN_SPLIT_GROUP ? "group_time (groups kept whole, and time-ordered)"
                                              : "time (or group_time when an entity has several rows)");
}

/* The label horizon: the upper bound of t(label_known) - t(moment), where
 * label_known defaults to the target's known event (SPEC §3.2: the target's
 * delay, latency and refresh are recording delays, not information). */
static bool label_horizon(const cx *x, kn_interval *out, const kn_event **event, const kn_node **node,
                          const char **words)
{
    const kn_prediction *p = &x->s->prediction;
    if (KN_REF_EVENT(p->label_known)) {
        *event = KN_REF_EVENT(p->label_known);
        *node = p->label_known.node;
        *words = kn_printf(x->ctx->arena, "labels are settled at '%s' (prediction.label_known)", (*event)->name);
        return kn_timeline_event_range(x->t, *event, out);
    }
    const kn_column *target = KN_REF_COLUMN(p->target);
    if (target && !target->broken && target->n_one_of) {
        /* known: {one_of: [...]}: the latest of its members decides */
        const kn_column_timing *T = kn_timeline_column_timing(x->t, target);
        if (!T || !T->computed || !T->has[KN_PART_KNOWN] || !T->known_hi_by) {
            return false;
        }
        *event = T->known_hi_by;
        *node = target->one_of_node;
        *words = kn_printf(x->ctx->arena, "labels are settled at one of the events of columns.%s.known.one_of, at "
                                          "the latest at '%s'", target->name, (*event)->name);
        *out = T->event[KN_PART_KNOWN];
        return true;
    }
    if (!target || target->broken || !KN_REF_EVENT(target->known)) {
        return false;
    }
    *event = KN_REF_EVENT(target->known);
    *node = target->known.node;
    *words = kn_printf(x->ctx->arena, "labels are settled at '%s', where the target '%s' becomes known "
                                      "(columns.%s.known; no prediction.label_known)",
                       (*event)->name, target->name, target->name);
    return kn_timeline_event_range(x->t, *event, out);
}

static void check_gap(const cx *x)
{
    const kn_split *sp = &x->s->split;
    if ((sp->method != KN_SPLIT_TIME && sp->method != KN_SPLIT_GROUP_TIME) || !x->t) {
        return;
    }
    kn_interval h;
    const kn_event *event = NULL;
    const kn_node *node = NULL;
    const char *words = "";
    if (!label_horizon(x, &h, &event, &node, &words) || h.hi <= 0) {
        return;
    }
    kn_interval gap = sp->has_gap ? sp->gap : kn_interval_point(0);
    if (gap.lo >= h.hi || sp->purge) {
        /* purge: true drops the training rows whose labels settle inside
         * the test period, which is what the gap stands in for. */
        return;
    }
    kn_arena *a = x->ctx->arena;
    kn_sink *sink = x->ctx->sink;
    char b1[48], b2[48], b3[48];
    const char *gap_words;
    if (!sp->has_gap) {
        gap_words = "has no gap";
    } else if (gap.lo == gap.hi) {
        gap_words = kn_printf(a, "has a gap of %s", dur(gap.lo, b1));
    } else {
        gap_words = kn_printf(a, "has a gap of '%s' (as short as %s in some calendars)",
                              kn_strndup(a, sp->gap_node->u.scalar.text, sp->gap_node->u.scalar.len),
                              dur(gap.lo, b1));
    }
    const kn_pos *pos = sp->gap_node ? &sp->gap_node->pos : split_pos(sp);
    kn_diag *d;
    if (h.hi >= KN_TIME_INF) {
        d = kn_diag_push(sink, KN_R_SPLIT_GAP_SHORT, pos, "split",
                         "the %s split %s, but the label horizon is unbounded: labels can be settled any time "
                         "after the moment, so no gap keeps training labels out of the test period",
                         kn_split_method_name(sp->method), gap_words);
    } else {
        d = kn_diag_push(sink, KN_R_SPLIT_GAP_SHORT, pos, "split",
                         "the %s split %s, less than the label horizon of %s: the labels of the last training "
                         "rows can be settled up to %s into the test period",
                         kn_split_method_name(sp->method), gap_words, dur(h.hi, b2),
                         dur(kn_time_add(h.hi, kn_time_neg(gap.lo)), b3));
    }
    kn_diag_key(sink, d, "gap %s", gap_words);
    if (sp->purge_node) {
        kn_diag_note(sink, d, &sp->purge_node->pos,
                     "purge is false: the training rows whose labels overlap the test period are kept");
    }
    if (sp->has_embargo) {
        kn_diag_note(sink, d, &sp->embargo_node->pos,
                     "the embargo keeps rows just after each test period out of training; it does not remove "
                     "the training rows before it whose labels settle inside the test period");
    }
    kn_diag_note(sink, d, node ? &node->pos : split_pos(sp), "%s, which comes %s", words,
                 kn_timeline_range_words(a, h, x->s->prediction.moment.name ? x->s->prediction.moment.name : ""));
    if (event) {
        kn_timeline_note_chain(x->t, sink, d, event, true);
    }
    if (h.hi < KN_TIME_INF) {
        kn_diag_note(sink, d, pos,
                     "set gap to at least %s, or drop the training rows whose labels settle after the test "
                     "period starts and declare purge: true (purging and embargo, López de Prado, 2018)",
                     dur(h.hi, b2));
    } else {
        kn_diag_note(sink, d, pos,
                     "bound the label: give label_known a latest time relative to the moment (a follow-up "
                     "window), then set the gap to it, or purge the overlapping training rows and declare "
                     "purge: true (purging and embargo, López de Prado, 2018)");
    }
}

static void check_entity(const cx *x)
{
    const kn_split *sp = &x->s->split;
    const kn_column *entity = KN_REF_COLUMN(x->s->prediction.entity);
    if (!entity || sp->method == KN_SPLIT_UNSET || sp->method == KN_SPLIT_PREDEFINED) {
        return;
    }
    kn_sink *sink = x->ctx->sink;
    const kn_column *group = KN_REF_COLUMN(sp->group_column);
    const char *method = kn_split_method_name(sp->method);
    kn_diag *d = NULL;
    if (sp->method == KN_SPLIT_RANDOM || sp->method == KN_SPLIT_TIME) {
        d = kn_diag_push(sink, KN_R_ENTITY_STRADDLES_SPLIT, split_pos(sp), "split",
                         "the split (method '%s') is not grouped by the entity '%s': rows of one %s land in "
                         "training and in test, so the model is scored on entities it has already seen",
                         method, entity->name, entity->name);
        kn_diag_note(sink, d, split_pos(sp), "use method: %s, which keeps each entity's rows on one side",
                     sp->method == KN_SPLIT_TIME ? "group_time" : "group");
    } else if (group && group != entity) {
        d = kn_diag_push(sink, KN_R_ENTITY_STRADDLES_SPLIT, &sp->group_column.node->pos, "split",
                         "the split groups by '%s', not by the entity '%s': rows of one %s can still land in "
                         "training and in test",
                         group->name, entity->name, entity->name);
    }
    if (d) {
        const kn_node *en = x->s->prediction.entity.node;
        kn_diag_note(sink, d, kn_column_pos(entity, en), "'%s' is the entity (prediction.entity)", entity->name);
    }
}

void kn_check_preparation(kn_ctx *ctx, const kn_schema *s, const kn_timeline *t)
{
    cx x = {ctx, s, t};
    check_steps(&x);
    if (s->split.present) {
        check_random_split(&x);
        check_gap(&x);
        check_entity(&x);
    }
}

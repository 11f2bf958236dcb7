/* data_stats.c - the statistical data rules (SPEC §4.7), on the sample:
 * lone-feature-separates, missingness-predicts, identifier-segment-predicts.
 *
 * The target decides the statistic:
 *   - two classes (a binary target): ROC AUC (Mann-Whitney) for numeric
 *     features and for each missing indicator; U for categorical features
 *     and identifier segments;
 *   - three or more classes: the uncertainty coefficient U(target | X)
 *     throughout, numeric features cut into quantile bins;
 *   - a numeric target (type number) with more than TARGET_MAX_CLASSES
 *     distinct values: cut into TARGET_BINS quantile bins, then as above,
 *     never thousands of classes.
 * Each statistic is computed only where the data supports it, and skipped
 * on its own otherwise, with the reason recorded in the sink (the JSON
 * summary lists them):
 *   - an AUC needs MIN_CLASS_ROWS rows with a value in each class;
 *   - a U needs ROWS_PER_CELL rows per cell of its table on average
 *     (distinct values of X times classes of the target: the rule of thumb
 *     for expected counts in contingency tables, common practice); a
 *     numeric feature gets as many quantile bins, at most FEATURE_BINS, as
 *     that allows, and none when fewer than two;
 *   - a categorical feature with more than 10,000 distinct values (the
 *     dictionary's cap) is high-cardinality and gets no U.
 * Missing cells (the rulebook's missing_values) are left out of a
 * feature's U and AUC: whether a value is missing is missingness-predicts'
 * question, not lone-feature-separates'. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "data_rules.h"

enum {
    MIN_CLASS_ROWS = 10,
    ROWS_PER_CELL = 5,
    FEATURE_BINS = 10,
    TARGET_BINS = 5,
    TARGET_MAX_CLASSES = 10,
};

typedef struct labels {
    size_t n;          /* sampled rows (a database: groups) with a target value */
    uint64_t rows;     /* the rows they stand for */
    uint64_t *w;       /* a database: rows per entry; NULL: one row each */
    size_t *slot;      /* their slots */
    uint32_t *y;       /* their target codes, 1..ny-1 */
    size_t ny;         /* codes are below ny */
    size_t classes;    /* distinct codes present */
    bool binary, binned;
    bool *pos;         /* binary: the positive class */
    size_t n_pos, n_neg; /* rows */
    const char *positive;
    /* scratch, one per labelled row */
    double *score;
    uint32_t *x;
} labels;

/* The rows entry i stands for. */
static uint64_t wt(const labels *L, size_t i)
{
    return L->w ? L->w[i] : 1;
}

/* With KNOWABLE_TRACE_STATS set, every statistic computed goes to
 * standard error at full precision, whether or not it fires: the CSV and
 * the database paths are compared with it (tests/sql/agree.sh). */
static void trace(const char *rule, const char *subject, const char *statistic, double value, uint64_t rows)
{
    if (getenv("KNOWABLE_TRACE_STATS")) {
        fprintf(stderr, "knowable-stat\t%s\t%s\t%s\t%.17g\t%llu\n", rule, subject, statistic, value,
                (unsigned long long)rows);
    }
}

static void skip(kn_dx *x, kn_rule r, const char *subject, const char *statistic, const char *reason)
{
    kn_sink_data_skip(x->sink, r, subject, statistic, reason);
}

static const char *target_name(const kn_dx *x)
{
    return x->t.target->name;
}

/* The labelled rows of the sample and what kind of target they make.
 * Returns false, with the reason recorded, when no statistic can run. */
static bool prepare(kn_dx *x, labels *L)
{
    kn_table *t = &x->t;
    const char *why = NULL;
    if (!t->target) {
        return false;
    }
    if (kn_dict_full(t->tdict) && !t->target_numeric) {
        why = kn_printf(x->a, "the target '%s' has more than %d distinct values", target_name(x), KN_TABLE_MAX_LEVELS);
    }
    size_t levels = kn_dict_levels(t->tdict);
    size_t *count = kn_alloc_array(x->a, levels + 2, sizeof *count);
    L->slot = kn_alloc_array(x->a, t->kept + 1, sizeof *L->slot);
    L->y = kn_alloc_array(x->a, t->kept + 1, sizeof *L->y);
    L->pos = kn_alloc_array(x->a, t->kept + 1, sizeof *L->pos);
    L->score = kn_alloc_array(x->a, t->kept + 1, sizeof *L->score);
    L->x = kn_alloc_array(x->a, t->kept + 1, sizeof *L->x);
    if (t->weight) {
        L->w = kn_alloc_array(x->a, t->kept + 1, sizeof *L->w);
    }
    for (size_t s = 0; s < t->kept; s++) {
        uint32_t y = kn_table_target(t, s);
        uint64_t w = t->weight ? t->weight[s] : 1;
        if (y == 0 || (y == KN_DICT_OTHER && !t->target_numeric) || w == 0) {
            continue;
        }
        if (y != KN_DICT_OTHER) {
            if (count[y] == 0) {
                L->classes++;
            }
            count[y] += w;
        }
        L->slot[L->n] = s;
        L->y[L->n] = y;
        if (L->w) {
            L->w[L->n] = w;
        }
        L->rows += w;
        L->n++;
    }
    L->ny = levels + 1;
    if (!why && t->target_numeric && (kn_dict_full(t->tdict) || L->classes > TARGET_MAX_CLASSES)) {
        /* Many values: quantile bins of the number. */
        size_t m = 0;
        for (size_t i = 0; i < L->n; i++) {
            L->score[i] = kn_table_target_num(t, L->slot[i]);
        }
        L->classes = kn_quantile_bins_weighted(x->a, L->score, L->w, L->n, TARGET_BINS, L->y);
        L->rows = 0;
        for (size_t i = 0; i < L->n; i++) {
            if (L->y[i]) {
                L->slot[m] = L->slot[i];
                if (L->w) {
                    L->w[m] = L->w[i];
                }
                L->rows += wt(L, i);
                L->y[m++] = L->y[i];
            }
        }
        L->n = m;
        L->ny = TARGET_BINS + 1;
        L->binned = true;
    }
    if (!why && L->classes < 2) {
        why = t->weight ? kn_printf(x->a, "the target '%s' has %s in the %llu rows", target_name(x),
                                    L->classes ? "one value" : "no value", (unsigned long long)t->rows)
                        : kn_printf(x->a, "the target '%s' has %s in the %zu sampled rows", target_name(x),
                                    L->classes ? "one value" : "no value", t->kept);
    }
    if (why && x->sampled_of) {
        /* a database's sample for one identifier: only its segments */
        skip(x, KN_R_IDENTIFIER_SEGMENT_PREDICTS, t->cols[0].name, "uncertainty", why);
        return false;
    }
    if (why) {
        if (x->target_said) {
            return false; /* a database's later column: said once already */
        }
        x->target_said = true;
        skip(x, KN_R_LONE_FEATURE_SEPARATES, "", "all", why);
        skip(x, KN_R_MISSINGNESS_PREDICTS, "", "all", why);
        skip(x, KN_R_IDENTIFIER_SEGMENT_PREDICTS, "", "all", why);
        return false;
    }
    if (L->classes == 2 && !L->binned) {
        L->binary = true;
        uint32_t a = 0, b = 0;
        for (uint32_t y = 1; y < L->ny; y++) {
            if (count[y]) {
                if (!a) {
                    a = y;
                } else {
                    b = y;
                }
            }
        }
        size_t la, lb;
        const char *ta = kn_dict_text(t->tdict, a, &la), *tb = kn_dict_text(t->tdict, b, &lb);
        /* The positive class: "true" for a boolean target, else the value
         * that sorts last ("1" over "0", "yes" over "no"). */
        uint32_t positive = strcmp(ta, tb) > 0 ? a : b;
        if (t->target->type == KN_TYPE_BOOLEAN && (strcmp(ta, "true") == 0 || strcmp(tb, "true") == 0)) {
            positive = strcmp(ta, "true") == 0 ? a : b;
        }
        size_t lp;
        L->positive = kn_dict_text(t->tdict, positive, &lp);
        for (size_t i = 0; i < L->n; i++) {
            L->pos[i] = L->y[i] == positive;
            L->n_pos += L->pos[i] ? wt(L, i) : 0;
        }
        L->n_neg = L->rows - L->n_pos;
    }
    return true;
}

/* The rows a U over a table of x_levels values needs. */
static size_t rows_needed(size_t x_levels, size_t classes)
{
    return (size_t)ROWS_PER_CELL * x_levels * classes;
}

static void fire_u(kn_dx *x, const labels *L, size_t col, kn_rule r, const kn_uncertainty *u, const char *what)
{
    const kn_tcol *c = &x->t.cols[col];
    const kn_thresholds *th = &x->ctx->rulebook->thresholds;
    kn_pos p = kn_dx_header_pos(x, col);
    kn_diag *d = kn_diag_push(x->sink, r, &p, c->name,
                              "'%s' alone predicts %s: uncertainty coefficient U(%s | %s) %.3f (threshold %g) over "
                              "%zu rows %s",
                              c->name, target_name(x), target_name(x), c->name, u->u, th->uncertainty, u->n, what);
    kn_diag_key(x->sink, d, "separates %s", c->name);
    kn_dx_note_decl(x, d, x->decl[col], NULL, ": check when its value is really known");
    if (L->binned) {
        kn_diag_note(x->sink, d, NULL, "the numeric target '%s' was cut into %d quantile bins", target_name(x),
                     TARGET_BINS);
    }
    kn_dx_note_sample(x, d);
}

static void numeric_feature(kn_dx *x, labels *L, size_t col)
{
    kn_table *t = &x->t;
    const kn_tcol *c = &t->cols[col];
    const kn_thresholds *th = &x->ctx->rulebook->thresholds;
    size_t have = 0, have_pos = 0;
    if (c->has_auc) {
        /* the engine's rank sum over every row (a database column with
         * more distinct values than the client reads) */
        have_pos = c->auc.n_pos;
        have = c->auc.n_pos + c->auc.n_neg;
    } else if (c->wide) {
        skip(x, KN_R_LONE_FEATURE_SEPARATES, c->name, L->binary ? "roc_auc" : "uncertainty",
             kn_printf(x->a,
                       "more distinct values than the client reads from the database (--max-rows %lld)%s",
                       x->max_rows,
                       L->binary ? "; the engine's rank sum needs a numeric, date or timestamp SQL type that holds "
                                   "nothing else (SQLite's declared types do not keep values to them)"
                                 : "; quantile bins of such a column are not computed in the database"));
        return;
    } else {
        for (size_t i = 0; i < L->n; i++) {
            L->score[i] = kn_table_num(t, c->num_cell, L->slot[i]);
            if (!isnan(L->score[i])) {
                have += wt(L, i);
                have_pos += L->binary && L->pos[i] ? wt(L, i) : 0;
            }
        }
    }
    if (L->binary) {
        size_t have_neg = have - have_pos;
        if (have_pos < MIN_CLASS_ROWS || have_neg < MIN_CLASS_ROWS) {
            skip(x, KN_R_LONE_FEATURE_SEPARATES, c->name, "roc_auc",
                 kn_printf(x->a,
                           "an AUC needs at least %d rows with a value in each class of '%s'; the sample has %zu "
                           "with %s = %s and %zu others",
                           MIN_CLASS_ROWS, target_name(x), have_pos, target_name(x), L->positive, have_neg));
            return;
        }
        kn_auc auc;
        bool ok;
        if (c->has_auc) {
            auc = c->auc;
            ok = true;
        } else if (L->w) {
            uint64_t *pos = kn_alloc_array(x->a, L->n + 1, sizeof *pos);
            uint64_t *neg = kn_alloc_array(x->a, L->n + 1, sizeof *neg);
            for (size_t i = 0; i < L->n; i++) {
                pos[i] = L->pos[i] ? L->w[i] : 0;
                neg[i] = L->pos[i] ? 0 : L->w[i];
            }
            ok = kn_stats_auc_levels(x->a, L->score, pos, neg, L->n, &auc);
        } else {
            ok = kn_stats_auc(x->a, L->score, L->pos, L->n, &auc);
        }
        if (ok) {
            trace("lone-feature-separates", c->name, "roc_auc", auc.auc, auc.n_pos + auc.n_neg);
        }
        if (!ok || auc.separation < th->separation_auc) {
            return;
        }
        kn_pos p = kn_dx_header_pos(x, col);
        kn_diag *d = kn_diag_push(x->sink, KN_R_LONE_FEATURE_SEPARATES, &p, c->name,
                                  "'%s' alone separates %s: ROC AUC %.3f (threshold %g) over %zu rows with a value "
                                  "(%zu with %s = %s); %s values go with %s = %s",
                                  c->name, target_name(x), auc.separation, th->separation_auc, auc.n_pos + auc.n_neg,
                                  auc.n_pos, target_name(x), L->positive, auc.auc >= 0.5 ? "higher" : "lower",
                                  target_name(x), L->positive);
        kn_diag_key(x->sink, d, "separates %s", c->name);
        kn_dx_note_decl(x, d, x->decl[col], NULL, ": check when its value is really known");
        kn_dx_note_sample(x, d);
        return;
    }
    /* A categorical (or binned) target: as many quantile bins as the rows
     * support, then U. */
    size_t bins = have / rows_needed(1, L->classes);
    if (bins > FEATURE_BINS) {
        bins = FEATURE_BINS;
    }
    if (bins < 2) {
        skip(x, KN_R_LONE_FEATURE_SEPARATES, c->name, "uncertainty",
             kn_printf(x->a,
                       "U over quantile bins needs at least %zu rows with a value (%d per cell, 2 bins, %zu classes "
                       "of '%s'); the sample has %zu",
                       rows_needed(2, L->classes), ROWS_PER_CELL, L->classes, target_name(x), have));
        return;
    }
    kn_quantile_bins_weighted(x->a, L->score, L->w, L->n, bins, L->x);
    kn_uncertainty u;
    if (!kn_uncertainty_weighted(x->a, L->x, L->y, L->w, L->n, bins + 1, L->ny, &u)) {
        return;
    }
    trace("lone-feature-separates", c->name, "uncertainty", u.u, u.n);
    if (u.u < th->uncertainty) {
        return;
    }
    fire_u(x, L, col, KN_R_LONE_FEATURE_SEPARATES, &u,
           kn_printf(x->a, "with a value, the feature cut into %zu quantile bins", bins));
}

static void categorical_feature(kn_dx *x, labels *L, size_t col)
{
    kn_table *t = &x->t;
    const kn_tcol *c = &t->cols[col];
    const kn_thresholds *th = &x->ctx->rulebook->thresholds;
    if (kn_dict_full(c->d) || c->wide) {
        skip(x, KN_R_LONE_FEATURE_SEPARATES, c->name, "uncertainty",
             c->wide ? kn_printf(x->a, "more distinct values than the client reads from the database (--max-rows "
                                       "%lld): too many for a contingency table",
                                 x->max_rows)
                     : kn_printf(x->a,
                                 "more than %d distinct values (or 1 MiB of them): too many for a contingency table",
                                 KN_TABLE_MAX_LEVELS));
        return;
    }
    for (size_t i = 0; i < L->n; i++) {
        L->x[i] = kn_table_code(t, c->cat_cell, L->slot[i]);
    }
    kn_uncertainty u;
    if (!kn_uncertainty_weighted(x->a, L->x, L->y, L->w, L->n, kn_dict_levels(c->d) + 1, L->ny, &u) ||
        u.x_levels < 2) {
        return; /* no value, or one: nothing to predict with */
    }
    trace("lone-feature-separates", c->name, "uncertainty", u.u, u.n);
    if (u.n < rows_needed(u.x_levels, u.y_levels)) {
        skip(x, KN_R_LONE_FEATURE_SEPARATES, c->name, "uncertainty",
             kn_printf(x->a,
                       "U needs at least %d rows per cell of its table, %zu rows for %zu values and %zu classes of "
                       "'%s'; the sample has %zu rows with a value",
                       ROWS_PER_CELL, rows_needed(u.x_levels, u.y_levels), u.x_levels, u.y_levels, target_name(x),
                       u.n));
        return;
    }
    if (u.u < th->uncertainty) {
        return;
    }
    fire_u(x, L, col, KN_R_LONE_FEATURE_SEPARATES, &u, kn_printf(x->a, "and %zu values", u.x_levels));
}

static void missingness(kn_dx *x, labels *L, size_t col)
{
    kn_table *t = &x->t;
    const kn_tcol *c = &t->cols[col];
    const kn_thresholds *th = &x->ctx->rulebook->thresholds;
    size_t miss = 0, miss_pos = 0;
    for (size_t i = 0; i < L->n; i++) {
        bool m = kn_table_is_missing(t, c->mbit, L->slot[i]);
        miss += m ? wt(L, i) : 0;
        miss_pos += m && L->binary && L->pos[i] ? wt(L, i) : 0;
        L->x[i] = m ? 2 : 1;
    }
    if (miss == 0 || miss == L->rows) {
        return; /* a constant indicator predicts nothing */
    }
    kn_pos p = kn_dx_header_pos(x, col);
    kn_diag *d;
    if (L->binary) {
        if (L->n_pos < MIN_CLASS_ROWS || L->n_neg < MIN_CLASS_ROWS) {
            skip(x, KN_R_MISSINGNESS_PREDICTS, c->name, "roc_auc",
                 kn_printf(x->a,
                           "an AUC needs at least %d rows in each class of '%s'; the sample has %zu with %s = %s and "
                           "%zu others",
                           MIN_CLASS_ROWS, target_name(x), L->n_pos, target_name(x), L->positive, L->n_neg));
            return;
        }
        /* The Mann-Whitney AUC of a 0/1 score in closed form: with p and q
         * the shares of positives and of negatives that miss the value,
         * P(pos > neg) + P(tie) / 2 = p (1 - q) + (p q + (1 - p)(1 - q)) / 2
         * = (1 + p - q) / 2. */
        double share_pos = (double)miss_pos / (double)L->n_pos;
        double share_neg = (double)(miss - miss_pos) / (double)L->n_neg;
        double auc = (1.0 + share_pos - share_neg) / 2.0;
        double separation = auc > 0.5 ? auc : 1.0 - auc;
        trace("missingness-predicts", c->name, "roc_auc", auc, L->rows);
        if (separation < th->missingness_auc) {
            return;
        }
        d = kn_diag_push(x->sink, KN_R_MISSINGNESS_PREDICTS, &p, c->name,
                         "whether '%s' is missing predicts %s: AUC of the missing indicator %.3f (threshold %g); "
                         "%zu of %zu rows miss it, %zu of them with %s = %s",
                         c->name, target_name(x), separation, th->missingness_auc, miss, (size_t)L->rows, miss_pos,
                         target_name(x), L->positive);
    } else {
        kn_uncertainty u;
        if (!kn_uncertainty_weighted(x->a, L->x, L->y, L->w, L->n, 3, L->ny, &u)) {
            return;
        }
        trace("missingness-predicts", c->name, "uncertainty", u.u, u.n);
        if (u.n < rows_needed(2, u.y_levels)) {
            skip(x, KN_R_MISSINGNESS_PREDICTS, c->name, "uncertainty",
                 kn_printf(x->a, "U needs at least %zu rows (%d per cell, 2 x %zu classes of '%s'); the sample has %zu",
                           rows_needed(2, u.y_levels), ROWS_PER_CELL, u.y_levels, target_name(x), u.n));
            return;
        }
        if (u.u < th->uncertainty) {
            return;
        }
        d = kn_diag_push(x->sink, KN_R_MISSINGNESS_PREDICTS, &p, c->name,
                         "whether '%s' is missing predicts %s: U(%s | missing) %.3f (threshold %g); %zu of %zu rows "
                         "miss it",
                         c->name, target_name(x), target_name(x), u.u, th->uncertainty, miss, (size_t)L->rows);
    }
    kn_diag_key(x->sink, d, "missingness %s", c->name);
    kn_dx_note_decl(x, d, x->decl[col], NULL, ": a value filled in only when the outcome is known leaks it");
    if (L->binned) {
        kn_diag_note(x->sink, d, NULL, "the numeric target '%s' was cut into %d quantile bins", target_name(x),
                     TARGET_BINS);
    }
    kn_dx_note_sample(x, d);
}

static const char *ordinal(kn_arena *a, size_t i)
{
    static const char *const words[] = {"first", "second", "third", "fourth", "fifth", "sixth"};
    return i < sizeof words / sizeof *words ? words[i] : kn_printf(a, "#%zu", i + 1);
}

static void segments(kn_dx *x, labels *L, size_t col)
{
    kn_table *t = &x->t;
    const kn_tcol *c = &t->cols[col];
    const kn_column *k = x->decl[col];
    const kn_thresholds *th = &x->ctx->rulebook->thresholds;
    for (size_t gi = 0; gi < c->n_segs; gi++) {
        const kn_segment *g = &c->segs[gi];
        size_t levels = kn_dict_levels(g->d);
        if (kn_dict_full(g->d) || levels < 2) {
            continue; /* a serial number, or a constant: not a segment */
        }
        for (size_t i = 0; i < L->n; i++) {
            uint32_t id = kn_table_code(t, g->cell, L->slot[i]);
            L->x[i] = id == KN_DICT_OTHER ? 0 : id;
        }
        const char *what;
        if (g->name) {
            what = kn_printf(x->a, "the segment '%s' of '%s'", g->name, c->name);
        } else {
            what = kn_printf(x->a, "the %s run of %s in '%s'", ordinal(x->a, gi),
                             g->kinds == 1 ? "letters" : g->kinds == 2 ? "digits" : "letters or digits", c->name);
        }
        kn_uncertainty u;
        if (!kn_uncertainty_weighted(x->a, L->x, L->y, L->w, L->n, levels + 1, L->ny, &u) || u.x_levels < 2) {
            continue;
        }
        trace("identifier-segment-predicts", c->name, g->name ? g->name : ordinal(x->a, gi), u.u, u.n);
        if (u.n < rows_needed(u.x_levels, u.y_levels)) {
            skip(x, KN_R_IDENTIFIER_SEGMENT_PREDICTS, c->name, "uncertainty",
                 kn_printf(x->a,
                           "U needs at least %d rows per cell of its table, %zu rows for %zu values of %s and %zu "
                           "classes of '%s'; the sample has %zu",
                           ROWS_PER_CELL, rows_needed(u.x_levels, u.y_levels), u.x_levels, what, u.y_levels,
                           target_name(x), u.n));
            continue;
        }
        if (u.u < th->segment_uncertainty) {
            continue;
        }
        size_t len;
        const char *first = kn_dict_text(g->d, 1, &len);
        kn_pos p = kn_dx_header_pos(x, col);
        kn_diag *d = kn_diag_push(x->sink, KN_R_IDENTIFIER_SEGMENT_PREDICTS, &p, c->name,
                                  "%s predicts %s: U(%s | segment) %.3f (threshold %g) over %zu rows and %zu "
                                  "distinct values (e.g. '%s')",
                                  what, target_name(x), target_name(x), u.u, th->segment_uncertainty, u.n, levels,
                                  len > 40 ? kn_printf(x->a, "%.40s...", first) : first);
        kn_diag_key(x->sink, d, "segment %s %zu", c->name, gi);
        if (g->name) {
            kn_dx_note_decl(x, d, k, k->format_node, " with this format; the segment is a named group");
        } else {
            kn_dx_note_decl(x, d, k, NULL,
                            "; without named groups in a format, its values were split into runs of letters and "
                            "digits");
        }
        if (L->binned) {
            kn_diag_note(x->sink, d, NULL, "the numeric target '%s' was cut into %d quantile bins", target_name(x),
                         TARGET_BINS);
        }
        kn_dx_note_sample(x, d);
    }
}

void kn_data_statistics(kn_dx *x)
{
    kn_table *t = &x->t;
    labels L = {0};
    if (!prepare(x, &L)) {
        return;
    }
    for (size_t i = 0; i < t->n_cols; i++) {
        const kn_tcol *c = &t->cols[i];
        if (c == t->target) {
            continue;
        }
        if (c->feature) {
            bool numeric = c->use == KN_USE_NUMBER || (c->use == KN_USE_EITHER && c->not_numbers == 0);
            if (numeric) {
                numeric_feature(x, &L, i);
            } else {
                categorical_feature(x, &L, i);
            }
            missingness(x, &L, i);
        } else if (c->segs) {
            segments(x, &L, i);
        }
    }
}

/* data_split.c - the counting rules over groups of rows (SPEC §4.7), exact
 * over every row of the file whatever --max-rows says:
 * rows-shared-across-split (identical feature rows in training and test),
 * entity-in-both-splits, small-quasi-identifier-groups (k-anonymity,
 * Sweeney, 2002).  Rows and tuples are compared by 64-bit hashes
 * (src/data/hash.h). */
#include <stdio.h>
#include <string.h>

#include "data_rules.h"

enum { NAMES_SHOWN = 20 }; /* quasi-identifiers named in a message and in notes */

static const char privacy_note[] =
    "this is a screening aid, not a privacy review: what protection the data needs is decided by applicable law "
    "and your organisation's privacy practice";

static void shared(kn_dx *x)
{
    const kn_table *t = &x->t;
    const kn_schema *s = x->s;
    const kn_column *sc = t->split ? KN_REF_COLUMN(s->split.column) : NULL;
    kn_overlap_result o;
    if (t->shared_rows) {
        kn_overlap_result_get(t->shared_rows, &o);
        if (o.shared_keys && o.train_rows && o.test_rows) {
            kn_pos p = kn_dx_pos(x, o.first_test_line, 0);
            kn_diag *d = kn_diag_push(x->sink, KN_R_ROWS_SHARED_ACROSS_SPLIT, &p, sc->name,
                                      "%zu of %zu test rows %s the feature values of a training row exactly (%zu "
                                      "distinct row%s over %zu feature%s); the first is here",
                                      o.test_rows_shared, o.test_rows, o.test_rows_shared == 1 ? "repeats" : "repeat",
                                      o.shared_keys, o.shared_keys == 1 ? "" : "s", t->n_features,
                                      t->n_features == 1 ? "" : "s");
            kn_diag_key(x->sink, d, "shared rows %s", sc->name);
            if (o.first_key && x->key_name) {
                kn_diag_note(x->sink, d, NULL, "the repeated test row with the least key: '%s' = '%.60s'", x->key_name,
                             o.first_key);
            }
            bool grouped = s->split.method == KN_SPLIT_GROUP || s->split.method == KN_SPLIT_GROUP_TIME;
            kn_diag_note(x->sink, d, kn_column_pos(sc, s->split.column.node),
                         grouped ? "the split column '%s' is named here; drop duplicates before splitting: the split "
                                   "keeps groups whole, and identical rows in different groups still cross it"
                                 : "the split column '%s' is named here; drop duplicates before splitting, or split "
                                   "by group",
                         sc->name);
            kn_dx_line_note(x, d, o.first_test_line);
        }
    }
    if (t->shared_ents) {
        kn_overlap_result_get(t->shared_ents, &o);
        if (o.shared_keys && o.train_rows && o.test_rows) {
            const kn_column *ec = KN_REF_COLUMN(s->prediction.entity);
            kn_pos p = kn_dx_pos(x, o.first_test_line, 0);
            kn_diag *d = kn_diag_push(x->sink, KN_R_ENTITY_IN_BOTH_SPLITS, &p, ec->name,
                                      "%zu value%s of the entity '%s' %s rows in training and in test (%zu of %zu "
                                      "test rows); the first such test row is here",
                                      o.shared_keys, o.shared_keys == 1 ? "" : "s", ec->name,
                                      o.shared_keys == 1 ? "has" : "have", o.test_rows_shared, o.test_rows);
            kn_diag_key(x->sink, d, "entity both %s", ec->name);
            if (s->split.method == KN_SPLIT_GROUP || s->split.method == KN_SPLIT_GROUP_TIME) {
                /* The schema says the split keeps groups whole: the data says
                 * it did not keep this entity whole, so the groups were
                 * another column, or the split column was filled otherwise. */
                const kn_column *gc = KN_REF_COLUMN(s->split.group_column);
                if (gc == ec) {
                    kn_diag_note(x->sink, d, kn_column_pos(ec, s->prediction.entity.node),
                                 "the entity is named here; the split is declared to keep its groups whole, yet "
                                 "the data puts the same entity on both sides: '%s' was not filled by these groups",
                                 sc->name);
                } else {
                    kn_diag_note(x->sink, d, kn_column_pos(ec, s->prediction.entity.node),
                                 "the entity is named here; the split is declared by group, yet the data puts the "
                                 "same entity on both sides: group the split by this entity (split.group_column)");
                }
                if (gc && s->split.group_column.node) {
                    kn_diag_note(x->sink, d, &s->split.group_column.node->pos, "the split's groups are '%s'",
                                 gc->name);
                } else if (s->split.method_node) {
                    kn_diag_note(x->sink, d, &s->split.method_node->pos, "split.method is declared '%s' here",
                                 kn_split_method_name(s->split.method));
                }
            } else {
                kn_diag_note(x->sink, d, kn_column_pos(ec, s->prediction.entity.node),
                             "the entity is named here; assign the split by entity (split.method: group) so that "
                             "each entity's rows stay on one side");
            }
            kn_dx_line_note(x, d, o.first_test_line);
            if (o.first_key) {
                kn_diag_note(x->sink, d, NULL, "the first such entity: '%s' = '%.60s'", ec->name, o.first_key);
            }
        }
    }
}

static void kanon(kn_dx *x)
{
    const kn_table *t = &x->t;
    if (!t->qi_groups) {
        return;
    }
    long long k = x->ctx->rulebook->thresholds.min_group_size;
    if (k < 2) {
        return;
    }
    kn_kanon ka;
    kn_groups_kanon(t->qi_groups, (size_t)k, &ka);
    if (ka.rows == 0 || ka.smallest >= (size_t)k) {
        return;
    }
    /* The names, built in one pass, at most NAMES_SHOWN of them. */
    size_t bytes = 64, shown = 0;
    for (size_t i = 0; i < t->n_cols && shown < NAMES_SHOWN; i++) {
        if (x->decl[i]->quasi_identifier == 1) {
            bytes += strlen(t->cols[i].name) + 2;
            shown++;
        }
    }
    char *names = kn_alloc(x->a, bytes), *w = names;
    shown = 0;
    for (size_t i = 0; i < t->n_cols && shown < NAMES_SHOWN; i++) {
        if (x->decl[i]->quasi_identifier == 1) {
            size_t len = strlen(t->cols[i].name);
            if (shown++) {
                memcpy(w, ", ", 2);
                w += 2;
            }
            memcpy(w, t->cols[i].name, len);
            w += len;
        }
    }
    if (t->n_qi > shown) {
        snprintf(w, 64, " and %zu more", t->n_qi - shown);
    } else {
        *w = '\0';
    }
    kn_pos p = kn_dx_pos(x, ka.smallest_line, 0);
    kn_diag *d = kn_diag_push(x->sink, KN_R_SMALL_QUASI_IDENTIFIER_GROUPS, &p, "",
                              "the quasi-identifiers (%s) leave groups smaller than k = %lld: the smallest has %zu "
                              "row%s (its first row is here); %zu of %zu rows sit in %zu of %zu groups below k",
                              names, k, ka.smallest, ka.smallest == 1 ? "" : "s", ka.rows_below_k, ka.rows,
                              ka.groups_below_k, ka.groups);
    kn_diag_key(x->sink, d, "k-anonymity %s", names);
    shown = 0;
    for (size_t i = 0; i < t->n_cols && shown < NAMES_SHOWN; i++) {
        const kn_column *q = x->decl[i];
        if (q->quasi_identifier == 1) {
            shown++;
            kn_dx_note_decl(x, d, q, q->qi_node, " as a quasi-identifier");
        }
    }
    kn_diag_note(x->sink, d, NULL, "%s", privacy_note);
    kn_dx_line_note(x, d, ka.smallest_line);
}

void kn_data_split(kn_dx *x)
{
    shared(x);
    kanon(x);
}

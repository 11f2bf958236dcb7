/* Unit tests of the data engine (src/data/table.c): one pass over a CSV
 * buffer, exact counts over every row whatever the sample's size, the
 * compact sample, missing_values and strict_moment; and the CSV positions
 * of src/checks/data.c beyond 2^32 - 1 lines.  Files are invented (a
 * bakery's batches). */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <math.h>
#include <string.h>

#include <cmocka.h>

#include "../../src/checks/data_rules.h"

static int setup(void **state)
{
    kn_arena *a = kn_arena_new();
    if (!a) {
        return -1;
    }
    *state = a;
    return 0;
}

static int teardown(void **state)
{
    kn_arena_free(*state);
    return 0;
}

static const char *const default_missing[] = {"", "NA", "N/A", "NaN", "null"};

/* A table over text: columns in header order, each given its type; the
 * caller sets roles before kn_table_layout. */
static kn_csv_reader *open_table(kn_arena *a, kn_table *t, const char *text, const kn_value_type *types,
                                 size_t max_rows)
{
    memset(t, 0, sizeof *t);
    t->a = a;
    t->max_rows = max_rows;
    t->seed = 7;
    kn_missing_init(&t->missing, default_missing, 5);
    kn_csv_reader *rd = kn_csv_open_buffer(a, text, strlen(text), NULL);
    kn_csv_row h;
    kn_csv_error e;
    assert_int_equal(kn_csv_read_header(rd, &h, &e), KN_CSV_ROW);
    t->cols = kn_alloc_array(a, h.n_fields, sizeof *t->cols);
    for (size_t i = 0; i < h.n_fields; i++) {
        t->cols[i].name = h.fields[i].ptr;
        t->cols[i].field = i;
        t->cols[i].type = types[i];
        t->cols[i].feature = true;
    }
    t->n_cols = h.n_fields;
    return rd;
}

static void test_counts_and_sample(void **state)
{
    kn_table t;
    const kn_value_type types[] = {KN_TYPE_BOOLEAN, KN_TYPE_NUMBER, KN_TYPE_CATEGORY};
    kn_csv_reader *rd = open_table(*state, &t,
                                   "sold_out,oven_temp,loaf\n"
                                   "yes,180,rye\n"
                                   "no,N/A,spelt\n"
                                   "no,hot,rye\n"
                                   "yes,200.5,\n",
                                   types, 10);
    t.target = &t.cols[0];
    t.cols[0].feature = false;
    kn_table_layout(&t);
    assert_true(kn_table_read(&t, rd));
    assert_int_equal(t.rows, 4);
    assert_int_equal(t.kept, 4);
    const kn_tcol *temp = &t.cols[1], *loaf = &t.cols[2];
    assert_int_equal(temp->missing, 1);
    assert_int_equal(temp->bad_type.count, 1);
    assert_int_equal(temp->bad_type.line, 4);
    assert_string_equal(temp->bad_type.value, "hot");
    assert_int_equal(temp->bad_type.col, 4);
    assert_int_equal(loaf->missing, 1);
    /* the sample: 4-byte floats, dictionary codes, missing bits */
    assert_true(kn_table_num(&t, temp->num_cell, 0) == 180.0f);
    assert_true(isnan(kn_table_num(&t, temp->num_cell, 1)));
    assert_true(isnan(kn_table_num(&t, temp->num_cell, 2)));
    assert_true(kn_table_num(&t, temp->num_cell, 3) == 200.5f);
    assert_true(kn_table_is_missing(&t, temp->mbit, 1));
    assert_false(kn_table_is_missing(&t, temp->mbit, 2)); /* invalid, not missing */
    assert_int_equal(kn_table_code(&t, loaf->cat_cell, 0), kn_table_code(&t, loaf->cat_cell, 2));
    assert_int_equal(kn_table_code(&t, loaf->cat_cell, 3), 0);
    /* a boolean target is normalised: yes -> true */
    size_t len;
    assert_string_equal(kn_dict_text(t.tdict, kn_table_target(&t, 0), &len), "true");
    assert_int_equal(kn_table_target(&t, 0), kn_table_target(&t, 3));
}

/* The counting rules' tallies hold every row, the sample only max_rows. */
static void test_exact_beyond_the_sample(void **state)
{
    kn_table t;
    const kn_value_type types[] = {KN_TYPE_CATEGORY, KN_TYPE_CATEGORY, KN_TYPE_NUMBER};
    char text[8192] = "split,shop,flour\n";
    for (int i = 0; i < 300; i++) {
        char row[64];
        snprintf(row, sizeof row, "%s,shop%d,%d\n", i % 3 ? "train" : "test", i % 7, i);
        strcat(text, row);
    }
    strcat(text, "test,shop4,4\n"); /* repeats the features of training row 4 */
    strcat(text, "train,alone,9999\n");
    kn_csv_reader *rd = open_table(*state, &t, text, types, 5);
    t.split = &t.cols[0];
    t.cols[0].feature = false;
    t.qi_fields = kn_alloc_array(*state, 1, sizeof *t.qi_fields);
    t.qi_fields[0] = 1;
    t.n_qi = 1;
    kn_table_layout(&t);
    assert_true(kn_table_read(&t, rd));
    assert_int_equal(t.rows, 302);
    assert_int_equal(t.kept, 5);
    kn_overlap_result o;
    kn_overlap_result_get(t.shared_rows, &o);
    assert_int_equal(o.shared_keys, 1);
    assert_int_equal(o.test_rows_shared, 1);
    assert_int_equal(o.first_test_line, 302);
    assert_int_equal(o.test_rows, 101);
    kn_kanon k;
    kn_groups_kanon(t.qi_groups, 5, &k);
    assert_int_equal(k.rows, 302);
    assert_int_equal(k.groups, 8);
    assert_int_equal(k.smallest, 1);
    assert_int_equal(k.smallest_line, 303);
}

static void test_strict_moment(void **state)
{
    const kn_value_type types[] = {KN_TYPE_TIMESTAMP, KN_TYPE_TIMESTAMP};
    const char *text = "baked_at,sold_at\n"
                       "2026-03-01T06:00:00Z,2026-03-01T06:00:00Z\n"
                       "2026-03-01T06:00:00Z,2026-03-01T06:00:01Z\n"
                       "2026-03-01T06:00:00Z,2026-03-01T05:59:59Z\n";
    for (int strict = 0; strict < 2; strict++) {
        kn_table t;
        kn_csv_reader *rd = open_table(*state, &t, text, types, 10);
        t.moment = &t.cols[0];
        t.cols[0].feature = false;
        t.cols[1].timed = true;
        t.strict_moment = strict;
        kn_table_layout(&t);
        assert_true(kn_table_read(&t, rd));
        assert_int_equal(t.cols[1].late.count, strict ? 2 : 1);
        assert_int_equal(t.cols[1].late.line, strict ? 2 : 3);
    }
}

static void test_missing_values_setting(void **state)
{
    /* a rulebook that lists only '-': NA is a bad number, '-' is missing */
    static const char *const dash[] = {"-"};
    kn_table t;
    const kn_value_type types[] = {KN_TYPE_NUMBER};
    kn_csv_reader *rd = open_table(*state, &t, "oven_temp\n-\nNA\n190\n\"\"\n", types, 10);
    kn_missing_init(&t.missing, dash, 1);
    kn_table_layout(&t);
    assert_true(kn_table_read(&t, rd));
    assert_int_equal(t.cols[0].missing, 1);
    assert_int_equal(t.cols[0].bad_type.count, 2);
    assert_string_equal(t.cols[0].bad_type.value, "NA");
}

/* Positions keep 32-bit lines: beyond, line 0 (the whole file) and a note
 * with the line (kn_dx_line_note). */
static void test_position_beyond_32_bits(void **state)
{
    kn_dx x;
    memset(&x, 0, sizeof x);
    x.path = "batches.csv";
    x.a = *state;
    kn_pos p = kn_dx_pos(&x, 4294967295ull, 3);
    assert_int_equal(p.line, 4294967295u);
    assert_int_equal(p.col, 3);
    p = kn_dx_pos(&x, 4294967296ull + 12, 3);
    assert_int_equal(p.line, 0);
    assert_int_equal(p.col, 0);
}

/* A database's groups: each counts its rows in every tally and keeps its
 * weight; SQL NULL is missing even when the rulebook's markers leave the
 * empty text out. */
static void test_groups_weighted(void **state)
{
    kn_arena *a = *state;
    kn_table t;
    memset(&t, 0, sizeof t);
    t.a = a;
    t.max_rows = 1;
    static const char *const only_na[] = {"NA"};
    kn_missing_init(&t.missing, only_na, 1);
    t.cols = kn_alloc_array(a, 2, sizeof *t.cols);
    t.cols[0] = (kn_tcol){.name = "loaves", .field = 0, .type = KN_TYPE_NUMBER, .feature = true};
    t.cols[1] = (kn_tcol){.name = "sold_out", .field = 1, .type = KN_TYPE_BOOLEAN};
    t.n_cols = 2;
    t.target = &t.cols[1];
    kn_table_layout(&t);
    kn_csv_field f[2] = {{"12", 2, false}, {"yes", 3, false}};
    kn_table_add_group(&t, f, 2, 7, true);
    f[0] = (kn_csv_field){NULL, 0, false}; /* NULL */
    f[1] = (kn_csv_field){"no", 2, false};
    kn_table_add_group(&t, f, 2, 5, true);
    f[0] = (kn_csv_field){"twelve", 6, false};
    kn_table_add_group(&t, f, 2, 3, true);
    f[0] = (kn_csv_field){"", 0, false}; /* the empty text: not missing under these markers */
    kn_table_add_group(&t, f, 2, 2, false);
    assert_int_equal(t.rows, 17);
    assert_int_equal(t.kept, 3);
    assert_int_equal(t.weight[0], 7);
    assert_int_equal(t.weight[2], 3);
    assert_int_equal(t.cols[0].missing, 5);
    assert_int_equal(t.cols[0].bad_type.count, 5); /* "twelve" x 3 and "" x 2 */
    assert_string_equal(t.cols[0].bad_type.value, "twelve");
    assert_int_equal(t.cols[0].bad_type.line, 0);
    assert_true(kn_table_is_missing(&t, t.cols[0].mbit, 1));
    assert_false(kn_table_is_missing(&t, t.cols[0].mbit, 0));
    assert_true(kn_table_num(&t, t.cols[0].num_cell, 0) == 12.0);
    size_t len;
    assert_string_equal(kn_dict_text(t.tdict, kn_table_target(&t, 0), &len), "true");
    assert_string_equal(kn_dict_text(t.tdict, kn_table_target(&t, 1), &len), "false");
}

int main(void)
{
#define T(f) cmocka_unit_test_setup_teardown(f, setup, teardown)
    const struct CMUnitTest tests[] = {
        T(test_counts_and_sample),
        T(test_exact_beyond_the_sample),
        T(test_strict_moment),
        T(test_missing_values_setting),
        T(test_position_beyond_32_bits),
        T(test_groups_weighted),
    };
#undef T
    return cmocka_run_group_tests(tests, NULL, NULL);
}

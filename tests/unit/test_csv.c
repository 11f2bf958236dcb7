/* test_csv.c - unit tests of the streaming CSV reader (src/data/csv.c):
 * RFC 4180 records, line numbers, and every reported problem. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>

#include "../../src/data/csv.h"

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

static kn_csv_reader *open_str(kn_arena *a, const char *s, const kn_csv_options *o)
{
    return kn_csv_open_buffer(a, s, strlen(s), o);
}

static void assert_field(const kn_csv_row *row, size_t i, const char *want)
{
    assert_true(i < row->n_fields);
    assert_int_equal(row->fields[i].len, strlen(want));
    assert_memory_equal(row->fields[i].ptr, want, strlen(want));
    assert_int_equal(row->fields[i].ptr[row->fields[i].len], '\0');
}

static void test_header_and_rows(void **state)
{
    kn_csv_reader *r = open_str(*state, "parcel,weight\r\nP1,2.5\r\nP2,0.75\r\n", NULL);
    kn_csv_row row;
    kn_csv_error e;
    assert_int_equal(kn_csv_read_header(r, &row, &e), KN_CSV_ROW);
    assert_int_equal(row.n_fields, 2);
    assert_field(&row, 0, "parcel");
    assert_field(&row, 1, "weight");
    assert_int_equal(kn_csv_n_columns(r), 2);
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_ROW);
    assert_field(&row, 0, "P1");
    assert_field(&row, 1, "2.5");
    assert_int_equal(row.line, 2);
    assert_int_equal(row.number, 1);
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_ROW);
    assert_field(&row, 1, "0.75");
    assert_int_equal(row.line, 3);
    assert_int_equal(row.number, 2);
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_END);
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_END);
}

static void test_header_read_implicitly(void **state)
{
    kn_csv_reader *r = open_str(*state, "a\n1\n", NULL);
    kn_csv_row row;
    assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_ROW);
    assert_field(&row, 0, "1");
    assert_int_equal(kn_csv_read_header(r, &row, NULL), KN_CSV_ROW);
    assert_field(&row, 0, "a");
}

static void test_header_outlives_rows(void **state)
{
    kn_csv_reader *r = open_str(*state, "loan,branch\nL1,north\n", NULL);
    kn_csv_row h, row;
    assert_int_equal(kn_csv_read_header(r, &h, NULL), KN_CSV_ROW);
    assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_ROW);
    kn_csv_close(r);
    assert_string_equal(h.fields[0].ptr, "loan");
    assert_string_equal(h.fields[1].ptr, "branch");
}

static void test_quoted_fields(void **state)
{
    kn_csv_reader *r =
        open_str(*state, "a,b,c\n\"x,y\",\"say \"\"hi\"\"\",\"\"\n", NULL);
    kn_csv_row row;
    assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_ROW);
    assert_field(&row, 0, "x,y");
    assert_field(&row, 1, "say \"hi\"");
    assert_field(&row, 2, "");
    assert_true(row.fields[2].quoted);
    assert_true(row.fields[0].quoted);
}

static void test_quoted_newline_shifts_lines(void **state)
{
    kn_csv_reader *r = open_str(*state, "a,b\n1,\"two\nlines\"\n3,\"x\r\ny\r\nz\"\n5,6\n", NULL);
    kn_csv_row row;
    assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_ROW);
    assert_int_equal(row.line, 2);
    assert_int_equal(row.end_line, 3);
    assert_field(&row, 1, "two\nlines");
    assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_ROW);
    assert_int_equal(row.line, 4);
    assert_int_equal(row.end_line, 6);
    assert_field(&row, 1, "x\r\ny\r\nz");
    assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_ROW);
    assert_int_equal(row.line, 7);
    assert_int_equal(row.number, 3);
}

static void test_crlf_lf_and_lone_cr(void **state)
{
    kn_csv_reader *r = open_str(*state, "a,b\r\n1,2\n3,4\r5,6\r\n", NULL);
    kn_csv_row row;
    for (int i = 0; i < 3; i++) {
        assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_ROW);
        assert_int_equal(row.line, (uint64_t)i + 2);
        assert_int_equal(row.fields[1].len, 1);
    }
    assert_field(&row, 0, "5");
    assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_END);
}

static void test_missing_final_newline(void **state)
{
    kn_csv_reader *r = open_str(*state, "a,b\n1,2\n3,", NULL);
    kn_csv_row row;
    assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_ROW);
    assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_ROW);
    assert_int_equal(row.n_fields, 2);
    assert_field(&row, 0, "3");
    assert_field(&row, 1, "");
    assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_END);
}

static void test_blank_lines_skipped(void **state)
{
    kn_csv_reader *r = open_str(*state, "\r\na,b\r\n\r\n\n1,2\n\n", NULL);
    kn_csv_row row;
    assert_int_equal(kn_csv_read_header(r, &row, NULL), KN_CSV_ROW);
    assert_int_equal(row.line, 2);
    assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_ROW);
    assert_int_equal(row.line, 5);
    assert_int_equal(row.number, 1);
    assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_END);
}

static void test_ragged_rows_reported_and_skipped_over(void **state)
{
    kn_csv_reader *r = open_str(*state, "a,b,c\n1,2\n1,2,3,4,5\n7,8,9\n", NULL);
    kn_csv_row row;
    kn_csv_error e;
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_BAD_ROW);
    assert_int_equal(e.problem, KN_CSV_RAGGED);
    assert_int_equal(e.line, 2);
    assert_int_equal(e.count, 2);
    assert_int_equal(e.expected, 3);
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_BAD_ROW);
    assert_int_equal(e.problem, KN_CSV_RAGGED);
    assert_int_equal(e.count, 5);
    assert_int_equal(row.n_found, 5);
    assert_int_equal(row.n_fields, 4); /* header + 1 kept */
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_ROW);
    assert_field(&row, 2, "9");
    char *msg = kn_csv_error_message(*state, &(kn_csv_error){.problem = KN_CSV_RAGGED, .count = 2, .expected = 3});
    assert_string_equal(msg, "record has 2 fields, the header has 3");
}

static void test_nul_byte(void **state)
{
    static const char data[] = "a,b\n1,x\0y\n2,3\n";
    kn_csv_reader *r = kn_csv_open_buffer(*state, data, sizeof data - 1, NULL);
    kn_csv_row row;
    kn_csv_error e;
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_BAD_ROW);
    assert_int_equal(e.problem, KN_CSV_NUL_BYTE);
    assert_int_equal(e.line, 2);
    assert_int_equal(e.column, 4);
    assert_int_equal(e.field, 2);
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_ROW);
    assert_field(&row, 1, "3");
}

static void test_nul_byte_in_quoted_field(void **state)
{
    static const char data[] = "a\n\"\n\0\"\n";
    kn_csv_reader *r = kn_csv_open_buffer(*state, data, sizeof data - 1, NULL);
    kn_csv_row row;
    kn_csv_error e;
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_BAD_ROW);
    assert_int_equal(e.problem, KN_CSV_NUL_BYTE);
    assert_int_equal(e.line, 3);
    assert_int_equal(e.column, 1);
}

static void test_ten_megabyte_field(void **state)
{
    kn_arena *a = *state;
    size_t big = 10u << 20;
    const char *head = "a,b\n1,";
    const char *tail = "\n2,3\n";
    size_t n = strlen(head) + big + strlen(tail);
    char *data = kn_alloc(a, n);
    memcpy(data, head, strlen(head));
    memset(data + strlen(head), 'x', big);
    memcpy(data + strlen(head) + big, tail, strlen(tail));
    kn_csv_reader *r = kn_csv_open_buffer(a, data, n, NULL);
    kn_csv_row row;
    kn_csv_error e;
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_BAD_ROW);
    assert_int_equal(e.problem, KN_CSV_FIELD_TOO_LONG);
    assert_int_equal(e.line, 2);
    assert_int_equal(e.column, 3);
    assert_int_equal(e.field, 2);
    assert_int_equal(e.count, 1u << 20);
    assert_true(row.fields[1].len <= (1u << 20));
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_ROW);
    assert_field(&row, 0, "2");
    assert_int_equal(row.line, 3);
}

static void test_long_field_under_cap_kept(void **state)
{
    kn_arena *a = *state;
    size_t big = 300000;
    char *data = kn_alloc(a, big + 8);
    memcpy(data, "a\n\"", 3);
    memset(data + 3, ',', big);
    memcpy(data + 3 + big, "\"\n", 2);
    kn_csv_options o = {.block_size = 4096};
    FILE *f = fmemopen(data, big + 5, "rb");
    assert_non_null(f);
    kn_csv_reader *r = kn_csv_open_file(a, f, &o);
    kn_csv_row row;
    assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_ROW);
    assert_int_equal(row.fields[0].len, big);
    assert_int_equal(row.fields[0].ptr[big - 1], ',');
    assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_END);
    fclose(f);
}

static void test_record_too_long(void **state)
{
    kn_csv_options o = {.max_record = 8};
    kn_csv_reader *r = open_str(*state, "a,b,c\n1234,5678,9\n1,2,3\n", &o);
    kn_csv_row row;
    kn_csv_error e;
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_BAD_ROW);
    assert_int_equal(e.problem, KN_CSV_RECORD_TOO_LONG);
    assert_int_equal(e.line, 2);
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_ROW);
}

static void test_stray_quote(void **state)
{
    kn_csv_reader *r = open_str(*state, "a,b\n1,5 1/2\" tall\n2,3\n", NULL);
    kn_csv_row row;
    kn_csv_error e;
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_BAD_ROW);
    assert_int_equal(e.problem, KN_CSV_STRAY_QUOTE);
    assert_int_equal(e.line, 2);
    assert_int_equal(e.column, 8);
    assert_int_equal(e.field, 2);
    assert_field(&row, 1, "5 1/2\" tall");
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_ROW);
}

static void test_text_after_closing_quote(void **state)
{
    kn_csv_reader *r = open_str(*state, "a,b\n\"ab\"c,2\n", NULL);
    kn_csv_row row;
    kn_csv_error e;
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_BAD_ROW);
    assert_int_equal(e.problem, KN_CSV_TEXT_AFTER_QUOTE);
    assert_int_equal(e.column, 5);
    assert_field(&row, 0, "abc");
    assert_field(&row, 1, "2");
}

static void test_unterminated_quote_is_fatal(void **state)
{
    kn_csv_reader *r = open_str(*state, "a,b\n1,2\n3,\"open\nstill\n", NULL);
    kn_csv_row row;
    kn_csv_error e;
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_ROW);
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_FAILED);
    assert_int_equal(e.problem, KN_CSV_UNTERMINATED);
    assert_int_equal(e.line, 3);
    assert_int_equal(e.column, 3);
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_END);
}

static void test_empty_input(void **state)
{
    kn_csv_reader *r = open_str(*state, "", NULL);
    kn_csv_row row;
    kn_csv_error e;
    assert_int_equal(kn_csv_read_header(r, &row, &e), KN_CSV_FAILED);
    assert_int_equal(e.problem, KN_CSV_NO_HEADER);
    assert_int_equal(kn_csv_next_row(r, &row, &e), KN_CSV_END);
    kn_csv_reader *r2 = kn_csv_open_buffer(*state, NULL, 0, NULL);
    assert_int_equal(kn_csv_next_row(r2, &row, &e), KN_CSV_FAILED);
    assert_int_equal(e.problem, KN_CSV_NO_HEADER);
}

static void test_bad_header_is_fatal(void **state)
{
    kn_csv_reader *r = open_str(*state, "a,b\"c\n1,2\n", NULL);
    kn_csv_row row;
    kn_csv_error e;
    assert_int_equal(kn_csv_read_header(r, &row, &e), KN_CSV_FAILED);
    assert_int_equal(e.problem, KN_CSV_STRAY_QUOTE);
    assert_int_equal(e.column, 4);
}

static void test_too_many_columns(void **state)
{
    kn_csv_options o = {.max_columns = 3};
    kn_csv_reader *r = open_str(*state, "a,b,c,d,e\n", &o);
    kn_csv_error e;
    assert_int_equal(kn_csv_read_header(r, NULL, &e), KN_CSV_FAILED);
    assert_int_equal(e.problem, KN_CSV_TOO_MANY_COLUMNS);
    kn_csv_reader *r2 = open_str(*state, "a,b,c\n", &o);
    assert_int_equal(kn_csv_read_header(r2, NULL, &e), KN_CSV_ROW);
}

/* A refused header stops the reader at once: an endless first line (a
 * device that never ends) must not be read to its end. */
static void test_header_refused_at_first_problem(void **state)
{
    size_t n = 8u << 20;
    char *zeros = kn_alloc(*state, n); /* NUL bytes and no line break */
    kn_csv_reader *r = kn_csv_open_buffer(*state, zeros, n, NULL);
    kn_csv_error e;
    assert_int_equal(kn_csv_read_header(r, NULL, &e), KN_CSV_FAILED);
    assert_int_equal(e.problem, KN_CSV_NUL_BYTE);
    assert_true(kn_csv_bytes_read(r) < 4096);
    kn_csv_options o = {.max_columns = 3};
    kn_csv_reader *r2 = open_str(*state, "a,b,c,d,e,f,g,h,i,j,k", &o);
    assert_int_equal(kn_csv_read_header(r2, NULL, &e), KN_CSV_FAILED);
    assert_int_equal(e.problem, KN_CSV_TOO_MANY_COLUMNS);
    assert_true(kn_csv_bytes_read(r2) < 12);
}

static void test_bom_dropped(void **state)
{
    kn_csv_row row;
    kn_csv_reader *r = open_str(*state, "\xEF\xBB\xBFstore,loaves\nS1,40\n", NULL);
    assert_int_equal(kn_csv_read_header(r, &row, NULL), KN_CSV_ROW);
    assert_field(&row, 0, "store");
    kn_csv_reader *r2 = open_str(*state, "\xEF\xBB\xBF\"store\",loaves\nS1,40\n", NULL);
    assert_int_equal(kn_csv_read_header(r2, &row, NULL), KN_CSV_ROW);
    assert_field(&row, 0, "store");
    assert_int_equal(kn_csv_next_row(r2, &row, NULL), KN_CSV_ROW);
}

static void test_bom_only_at_start(void **state)
{
    kn_csv_row row;
    kn_csv_reader *r = open_str(*state, "a\n\xEF\xBB\xBFx\n", NULL);
    assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_ROW);
    assert_int_equal(row.fields[0].len, 4);
}

/* Every block size must give the same records: the boundaries fall inside
 * CRLF pairs, doubled quotes and quoted line breaks. */
static void test_block_sizes_agree(void **state)
{
    kn_arena *a = *state;
    static char data[] = "id,note\r\n1,\"a\r\nb\"\r\n2,\"\"\"q\"\"\"\r3,x\n4,\r\n\r\n5,\"\"";
    size_t n = sizeof data - 1;
    const char *want[][2] = {{"1", "a\r\nb"}, {"2", "\"q\""}, {"3", "x"}, {"4", ""}, {"5", ""}};
    const uint64_t lines[] = {2, 4, 5, 6, 8};
    for (size_t bs = 1; bs <= 12; bs++) {
        FILE *f = fmemopen(data, n, "rb");
        assert_non_null(f);
        kn_csv_options o = {.block_size = bs};
        kn_csv_reader *r = kn_csv_open_file(a, f, &o);
        kn_csv_row row;
        for (size_t i = 0; i < 5; i++) {
            assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_ROW);
            assert_field(&row, 0, want[i][0]);
            assert_field(&row, 1, want[i][1]);
            assert_int_equal(row.line, lines[i]);
        }
        assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_END);
        assert_int_equal(kn_csv_bytes_read(r), n);
        kn_csv_close(r);
        fclose(f);
    }
}

static void test_cr_alone_in_quoted_field(void **state)
{
    kn_csv_reader *r = open_str(*state, "a,b\r\"x\ry\",2\r3,4", NULL);
    kn_csv_row row;
    assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_ROW);
    assert_field(&row, 0, "x\ry");
    assert_int_equal(row.line, 2);
    assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_ROW);
    assert_int_equal(row.line, 4);
}

static void test_close_then_end(void **state)
{
    kn_csv_reader *r = open_str(*state, "a\n1\n2\n", NULL);
    kn_csv_row row;
    assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_ROW);
    kn_csv_close(r);
    assert_int_equal(kn_csv_next_row(r, &row, NULL), KN_CSV_END);
}

static void test_error_messages(void **state)
{
    kn_csv_error e = {.problem = KN_CSV_FIELD_TOO_LONG, .field = 2, .count = 1048576};
    assert_string_equal(kn_csv_error_message(*state, &e), "field 2 is longer than 1048576 bytes");
    e = (kn_csv_error){.problem = KN_CSV_UNTERMINATED, .field = 3};
    assert_string_equal(kn_csv_error_message(*state, &e),
                        "quoted field 3 is not closed before the end of the file");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(test_header_and_rows, setup, teardown),
        cmocka_unit_test_setup_teardown(test_header_read_implicitly, setup, teardown),
        cmocka_unit_test_setup_teardown(test_header_outlives_rows, setup, teardown),
        cmocka_unit_test_setup_teardown(test_quoted_fields, setup, teardown),
        cmocka_unit_test_setup_teardown(test_quoted_newline_shifts_lines, setup, teardown),
        cmocka_unit_test_setup_teardown(test_crlf_lf_and_lone_cr, setup, teardown),
        cmocka_unit_test_setup_teardown(test_missing_final_newline, setup, teardown),
        cmocka_unit_test_setup_teardown(test_blank_lines_skipped, setup, teardown),
        cmocka_unit_test_setup_teardown(test_ragged_rows_reported_and_skipped_over, setup, teardown),
        cmocka_unit_test_setup_teardown(test_nul_byte, setup, teardown),
        cmocka_unit_test_setup_teardown(test_nul_byte_in_quoted_field, setup, teardown),
        cmocka_unit_test_setup_teardown(test_ten_megabyte_field, setup, teardown),
        cmocka_unit_test_setup_teardown(test_long_field_under_cap_kept, setup, teardown),
        cmocka_unit_test_setup_teardown(test_record_too_long, setup, teardown),
        cmocka_unit_test_setup_teardown(test_stray_quote, setup, teardown),
        cmocka_unit_test_setup_teardown(test_text_after_closing_quote, setup, teardown),
        cmocka_unit_test_setup_teardown(test_unterminated_quote_is_fatal, setup, teardown),
        cmocka_unit_test_setup_teardown(test_empty_input, setup, teardown),
        cmocka_unit_test_setup_teardown(test_bad_header_is_fatal, setup, teardown),
        cmocka_unit_test_setup_teardown(test_too_many_columns, setup, teardown),
        cmocka_unit_test_setup_teardown(test_header_refused_at_first_problem, setup, teardown),
        cmocka_unit_test_setup_teardown(test_bom_dropped, setup, teardown),
        cmocka_unit_test_setup_teardown(test_bom_only_at_start, setup, teardown),
        cmocka_unit_test_setup_teardown(test_block_sizes_agree, setup, teardown),
        cmocka_unit_test_setup_teardown(test_cr_alone_in_quoted_field, setup, teardown),
        cmocka_unit_test_setup_teardown(test_close_then_end, setup, teardown),
        cmocka_unit_test_setup_teardown(test_error_messages, setup, teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

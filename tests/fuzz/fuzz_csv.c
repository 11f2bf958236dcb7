/* fuzz_csv.c - libFuzzer harness for the CSV reader and the typed field
 * readers.  The input is read twice with the same small caps: once from the
 * buffer and once through a FILE * in tiny blocks (1 to 16 bytes, from the
 * input's first byte), and both readings must give the same records,
 * statuses, problems and field bytes; every field of a good record is then
 * read as a number, a boolean, a timestamp and a date. */
#define _GNU_SOURCE /* fmemopen */
#include <setjmp.h>
#include <stdbool.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../../src/data/csv.h"
#include "../../src/data/values.h"
#include "../../src/util/arena.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

#define MAX_RECORDS 4096

static void check_row(const kn_csv_row *row, size_t n_columns)
{
    if (n_columns && row->n_fields > n_columns + 1) {
        abort();
    }
    if (row->end_line < row->line) {
        abort();
    }
    for (size_t i = 0; i < row->n_fields; i++) {
        const kn_csv_field *f = &row->fields[i];
        if (f->ptr[f->len] != '\0') {
            abort();
        }
    }
}

static void read_values(const kn_csv_row *row)
{
    for (size_t i = 0; i < row->n_fields; i++) {
        const kn_csv_field *f = &row->fields[i];
        double d;
        bool b;
        int64_t us;
        unsigned flags;
        (void)kn_value_is_missing(f->ptr, f->len);
        (void)kn_value_number(f->ptr, f->len, &d);
        (void)kn_value_boolean(f->ptr, f->len, &b);
        (void)kn_value_timestamp(f->ptr, f->len, &us, &flags);
        (void)kn_value_date(f->ptr, f->len, &us);
    }
}

static bool same_error(const kn_csv_error *x, const kn_csv_error *y)
{
    return x->problem == y->problem && x->line == y->line && x->column == y->column && x->field == y->field &&
           x->count == y->count && x->expected == y->expected;
}

static bool same_row(const kn_csv_row *x, const kn_csv_row *y)
{
    if (x->n_fields != y->n_fields || x->n_found != y->n_found || x->line != y->line ||
        x->end_line != y->end_line || x->number != y->number || x->offset != y->offset) {
        return false;
    }
    for (size_t i = 0; i < x->n_fields; i++) {
        if (x->fields[i].len != y->fields[i].len || x->fields[i].quoted != y->fields[i].quoted ||
            memcmp(x->fields[i].ptr, y->fields[i].ptr, x->fields[i].len) != 0) {
            return false;
        }
    }
    return true;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    kn_arena *a = kn_arena_new();
    if (!a) {
        return 0;
    }
    FILE *volatile mem = NULL;
    jmp_buf oom;
    if (setjmp(oom)) {
        if (mem) {
            fclose(mem);
        }
        kn_arena_free(a);
        return 0;
    }
    kn_arena_set_oom(a, &oom);

    kn_csv_options o;
    kn_csv_options_default(&o);
    o.max_field = 64;
    o.max_record = 256;
    o.max_columns = 16;
    o.block_size = size ? 1 + data[0] % 16 : 1;
    kn_csv_reader *rb = kn_csv_open_buffer(a, (const char *)data, size, &o);
    kn_csv_reader *rf = NULL;
    if (size) {
        mem = fmemopen((void *)(uintptr_t)data, size, "rb");
        if (!mem) {
            abort();
        }
        rf = kn_csv_open_file(a, mem, &o);
    }

    kn_csv_row hb, hf;
    kn_csv_error eb, ef;
    memset(&eb, 0, sizeof eb);
    memset(&ef, 0, sizeof ef);
    kn_csv_status sb = kn_csv_read_header(rb, &hb, &eb);
    if (sb == KN_CSV_FAILED) {
        (void)kn_csv_error_message(a, &eb);
    }
    if (rf) {
        kn_csv_status sf = kn_csv_read_header(rf, &hf, &ef);
        if (sf != sb || (sb == KN_CSV_ROW && !same_row(&hb, &hf)) || (sb == KN_CSV_FAILED && !same_error(&eb, &ef))) {
            abort();
        }
    }
    for (size_t n = 0; sb == KN_CSV_ROW && n < MAX_RECORDS; n++) {
        kn_csv_row xb, xf;
        sb = kn_csv_next_row(rb, &xb, &eb);
        if (rf) {
            kn_csv_status sf = kn_csv_next_row(rf, &xf, &ef);
            if (sf != sb) {
                abort();
            }
            if ((sb == KN_CSV_ROW || sb == KN_CSV_BAD_ROW) && !same_row(&xb, &xf)) {
                abort();
            }
            if ((sb == KN_CSV_BAD_ROW || sb == KN_CSV_FAILED) && !same_error(&eb, &ef)) {
                abort();
            }
        }
        if (sb == KN_CSV_ROW || sb == KN_CSV_BAD_ROW) {
            check_row(&xb, kn_csv_n_columns(rb));
            if (sb == KN_CSV_ROW) {
                read_values(&xb);
            } else {
                (void)kn_csv_error_message(a, &eb);
            }
            sb = KN_CSV_ROW;
        } else if (sb == KN_CSV_FAILED) {
            (void)kn_csv_error_message(a, &eb);
        }
    }
    if (rf && kn_csv_bytes_read(rf) > size) {
        abort();
    }
    kn_csv_close(rb);
    if (rf) {
        kn_csv_close(rf);
    }
    if (mem) {
        fclose(mem);
    }
    kn_arena_free(a);
    return 0;
}

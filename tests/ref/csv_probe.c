/* csv_probe.c - prints what the CSV reader makes of a file, one JSON object
 * per line, for tests/ref/csv_ref.py to compare with Python's csv module.
 *
 *   csv_probe FILE [BLOCK_SIZE]
 *
 * Each record: {"kind":"header"|"row"|"bad","line":N,"end_line":N,
 * "fields":[...],"problem":"...","pline":N,"pcol":N}; then one last object
 * {"kind":"end"} or {"kind":"failed","problem":...,"pline":N,"pcol":N}.
 * Strings are written byte for byte (bytes >= 0x80 as \u00XX, so the
 * reader's side decodes them as Latin-1). */
#include <stdio.h>
#include <stdlib.h>

#include "../../src/data/csv.h"

static const char *problem_name(kn_csv_problem p)
{
    switch (p) {
    case KN_CSV_OK: return "ok";
    case KN_CSV_RAGGED: return "ragged";
    case KN_CSV_NUL_BYTE: return "nul";
    case KN_CSV_FIELD_TOO_LONG: return "field-too-long";
    case KN_CSV_RECORD_TOO_LONG: return "record-too-long";
    case KN_CSV_STRAY_QUOTE: return "stray-quote";
    case KN_CSV_TEXT_AFTER_QUOTE: return "text-after-quote";
    case KN_CSV_UNTERMINATED: return "unterminated";
    case KN_CSV_READ_FAILED: return "read-failed";
    case KN_CSV_NO_HEADER: return "no-header";
    case KN_CSV_TOO_MANY_COLUMNS: return "too-many-columns";
    }
    return "?";
}

static void put_string(const char *s, size_t len)
{
    putchar('"');
    for (size_t i = 0; i < len; i++) {
        unsigned char c = (unsigned char)s[i];
        if (c == '"' || c == '\\') {
            printf("\\%c", c);
        } else if (c < 0x20 || c >= 0x7f) {
            printf("\\u%04x", c);
        } else {
            putchar(c);
        }
    }
    putchar('"');
}

static void put_row(const char *kind, const kn_csv_row *row, const kn_csv_error *e)
{
    printf("{\"kind\":\"%s\",\"line\":%llu,\"end_line\":%llu,\"fields\":[", kind,
           (unsigned long long)row->line, (unsigned long long)row->end_line);
    for (size_t i = 0; i < row->n_fields; i++) {
        if (i) {
            putchar(',');
        }
        put_string(row->fields[i].ptr, row->fields[i].len);
    }
    printf("],\"n_found\":%zu", row->n_found);
    if (e) {
        printf(",\"problem\":\"%s\",\"pline\":%llu,\"pcol\":%llu", problem_name(e->problem),
               (unsigned long long)e->line, (unsigned long long)e->column);
    }
    printf("}\n");
}

static void put_failure(const kn_csv_error *e)
{
    printf("{\"kind\":\"failed\",\"problem\":\"%s\",\"pline\":%llu,\"pcol\":%llu}\n",
           problem_name(e->problem), (unsigned long long)e->line, (unsigned long long)e->column);
}

int main(int argc, char **argv)
{
    if (argc < 2) {
        fprintf(stderr, "usage: csv_probe FILE [BLOCK_SIZE]\n");
        return 2;
    }
    FILE *f = fopen(argv[1], "rb");
    if (!f) {
        perror(argv[1]);
        return 2;
    }
    kn_arena *a = kn_arena_new();
    if (!a) {
        fclose(f);
        return 2;
    }
    jmp_buf oom;
    if (setjmp(oom)) {
        kn_arena_free(a);
        fclose(f);
        fputs("csv_probe: out of memory\n", stderr);
        return 2;
    }
    kn_arena_set_oom(a, &oom);
    kn_csv_options o;
    kn_csv_options_default(&o);
    if (argc > 2) {
        o.block_size = (size_t)strtoul(argv[2], NULL, 10);
    }
    kn_csv_reader *r = kn_csv_open_file(a, f, &o);
    kn_csv_row row;
    kn_csv_error e;
    kn_csv_status s = kn_csv_read_header(r, &row, &e);
    if (s == KN_CSV_FAILED) {
        put_failure(&e);
    } else {
        put_row("header", &row, NULL);
        for (;;) {
            s = kn_csv_next_row(r, &row, &e);
            if (s == KN_CSV_ROW) {
                put_row("row", &row, NULL);
            } else if (s == KN_CSV_BAD_ROW) {
                put_row("bad", &row, &e);
            } else if (s == KN_CSV_FAILED) {
                put_failure(&e);
                break;
            } else {
                printf("{\"kind\":\"end\"}\n");
                break;
            }
        }
    }
    kn_arena_free(a);
    fclose(f);
    return ferror(stdout) ? 1 : 0;
}

/* csv.h - a streaming RFC 4180 reader for `check --data` (SPEC §4.7, §9).
 *
 * The reader makes one pass over a FILE * (read in large blocks) or over a
 * caller's buffer and hands on one record at a time: an array of field views
 * (pointer + length) into a row buffer that is reused from row to row, so
 * there is no allocation per field.  Each record knows the 1-based line on
 * which it starts; a quoted line break makes records and lines differ.
 *
 * Grammar (RFC 4180, with the usual relaxations, documented here):
 *   - fields are separated by ',' and records end at CRLF, LF or a lone CR
 *     (a lone CR also counts as a line break for line numbers);
 *   - a field that starts with '"' is quoted: it ends at the next single '"',
 *     "" inside it stands for one '"', and it may hold ',', CR and LF;
 *   - the last record needs no line break;
 *   - an empty line (no byte before its line break) is not a record and is
 *     skipped; a one-column file writes an empty value as "" instead;
 *   - a UTF-8 byte order mark at the very start of the input is dropped.
 *
 * Problems are reported as kn_csv_error values (with line and byte column)
 * that the caller turns into diagnostics:
 *   - per record, the record is returned as KN_CSV_BAD_ROW and reading goes
 *     on with the next record: a field count different from the header's,
 *     a NUL byte, a field longer than max_field (the rest of it is not
 *     kept), a record longer than max_record, a '"' inside an unquoted
 *     field or text after a closing quote;
 *   - fatal, KN_CSV_FAILED and every later call returns KN_CSV_END: a quoted
 *     field still open at the end of input, a read error, no header, a bad
 *     header record, more header fields than max_columns.
 *
 * Memory: the reader lives in the caller's arena; its growable buffers are
 * heap memory obtained with kn_xrealloc and released by a deferred cleanup
 * (kn_arena_defer), or earlier by kn_csv_close.  Peak memory is at most
 * about block_size (FILE * mode only) + 2 * (bytes + 49 per field) of the
 * largest record kept (buffers double as they grow), so it is bounded by
 * max_record and max_columns whatever the input; the header's text is
 * copied into the arena.
 */
#ifndef KN_DATA_CSV_H
#define KN_DATA_CSV_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

#include "../util/arena.h"

/* One field: a view into the reader's row buffer, NUL-terminated (a field
 * of a good record never holds a NUL byte).  Valid until the next call to
 * kn_csv_next_row or kn_csv_close. */
typedef struct kn_csv_field {
    const char *ptr;
    size_t len;
    bool quoted; /* the field was written in quotes */
} kn_csv_field;

/* One record. */
typedef struct kn_csv_row {
    const kn_csv_field *fields;
    size_t n_fields;    /* fields kept; see n_found for ragged records */
    size_t n_found;     /* fields found in the input */
    uint64_t line;      /* 1-based line where the record starts */
    uint64_t end_line;  /* 1-based line where the record ends */
    uint64_t number;    /* 1-based record number after the header */
    uint64_t offset;    /* byte offset of the record's first byte */
} kn_csv_row;

typedef enum kn_csv_problem {
    KN_CSV_OK = 0,
    KN_CSV_RAGGED,          /* count = fields found, expected = header's */
    KN_CSV_NUL_BYTE,        /* a NUL byte in a field */
    KN_CSV_FIELD_TOO_LONG,  /* count = the cap (max_field) */
    KN_CSV_RECORD_TOO_LONG, /* count = the cap (max_record) */
    KN_CSV_STRAY_QUOTE,     /* '"' inside an unquoted field */
    KN_CSV_TEXT_AFTER_QUOTE, /* a byte other than ',' or a line break after a closing '"' */
    KN_CSV_UNTERMINATED,    /* fatal: quoted field open at end of input (line/column of its '"') */
    KN_CSV_READ_FAILED,     /* fatal: the FILE * reported an error */
    KN_CSV_NO_HEADER,       /* fatal: the input holds no record */
    KN_CSV_TOO_MANY_COLUMNS, /* fatal: header has more than max_columns fields */
} kn_csv_problem;

/* A problem and where it is.  For a record's problem only the first one
 * found is kept. */
typedef struct kn_csv_error {
    kn_csv_problem problem;
    uint64_t line;      /* 1-based line of the problem */
    uint64_t column;    /* 1-based byte column on that line */
    size_t field;       /* 1-based field index within the record, 0 if none */
    size_t count;       /* see kn_csv_problem */
    size_t expected;    /* header field count, for KN_CSV_RAGGED */
} kn_csv_error;

typedef enum kn_csv_status {
    KN_CSV_ROW,     /* a good record */
    KN_CSV_BAD_ROW, /* a record with a problem (in *err); its fields are still given */
    KN_CSV_END,     /* no more records */
    KN_CSV_FAILED,  /* fatal problem (in *err); later calls return KN_CSV_END */
} kn_csv_status;

typedef struct kn_csv_options {
    size_t block_size;  /* bytes per read from a FILE *; default 1 MiB */
    size_t max_field;   /* longest field kept; default 1 MiB */
    size_t max_record;  /* longest record kept (sum of fields); default 64 MiB */
    size_t max_columns; /* most header fields; default 100,000 */
} kn_csv_options;

typedef struct kn_csv_reader kn_csv_reader;

/* Fills *o with the defaults above. */
void kn_csv_options_default(kn_csv_options *o);

/* Opens a reader over f (read from its current position; never closed by
 * the reader).  o may be NULL for the defaults; zero members take their
 * default.  The reader is arena memory; never returns NULL. */
kn_csv_reader *kn_csv_open_file(kn_arena *a, FILE *f, const kn_csv_options *o);

/* Opens a reader over data[0..len), which must outlive the reader.  No copy
 * of the input is made beyond the current record. */
kn_csv_reader *kn_csv_open_buffer(kn_arena *a, const char *data, size_t len,
                                  const kn_csv_options *o);

/* Reads the header record (the first record of the input).  On KN_CSV_ROW,
 * *header holds its fields, copied into the arena (valid for the arena's
 * life).  Any problem in the header is fatal (KN_CSV_FAILED, *err). */
kn_csv_status kn_csv_read_header(kn_csv_reader *r, kn_csv_row *header, kn_csv_error *err);

/* Reads the next data record into *row (reading the header first when the
 * caller has not).  Returns KN_CSV_ROW, KN_CSV_BAD_ROW (with *err), KN_CSV_END
 * or KN_CSV_FAILED (with *err).  A ragged record keeps at most one field
 * more than the header. */
kn_csv_status kn_csv_next_row(kn_csv_reader *r, kn_csv_row *row, kn_csv_error *err);

/* The header's field count (0 before kn_csv_read_header succeeded). */
size_t kn_csv_n_columns(const kn_csv_reader *r);

/* Bytes consumed so far. */
uint64_t kn_csv_bytes_read(const kn_csv_reader *r);

/* Releases the reader's heap buffers now (otherwise at kn_arena_free).
 * Row views become invalid; the header stays valid. */
void kn_csv_close(kn_csv_reader *r);

/* A one-line English message for e ("record has 3 fields, the header has
 * 5"), arena memory. */
char *kn_csv_error_message(kn_arena *a, const kn_csv_error *e);

#endif

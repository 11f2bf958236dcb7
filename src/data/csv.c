/* csv.c - the streaming RFC 4180 reader (see csv.h for the grammar and the
 * problems it reports).  One state machine over input blocks; runs of
 * ordinary bytes are found with a table and copied into the row buffer in
 * one memcpy, so the cost per byte is one table look-up.  Hands on records
 * as field views into the row buffer. */
#include "csv.h"

#include <stdlib.h>
#include <string.h>

#define DEFAULT_BLOCK (1u << 20)
#define DEFAULT_MAX_FIELD (1u << 20)
#define DEFAULT_MAX_RECORD (64u << 20)
#define DEFAULT_MAX_COLUMNS 100000u

enum state { S_FIELD_START, S_UNQUOTED, S_QUOTED, S_QUOTE_SEEN };

/* Bytes that end a run inside an unquoted and inside a quoted field. */
static const unsigned char special_unquoted[256] = {
    [','] = 1, ['"'] = 1, ['\r'] = 1, ['\n'] = 1, ['\0'] = 1,
};
static const unsigned char special_quoted[256] = {
    ['"'] = 1, ['\r'] = 1, ['\n'] = 1, ['\0'] = 1,
};

typedef struct slot {
    size_t off, len;
    bool quoted;
} slot;

struct kn_csv_reader {
    kn_arena *arena;
    kn_defer *defer;
    kn_csv_options opt;

    /* input */
    FILE *file;
    const unsigned char *in;
    size_t in_len, pos;
    unsigned char *block; /* heap, FILE * mode only */
    uint64_t block_base;  /* absolute offset of in[0] */
    bool eof, read_error, pending_cr, done;

    /* position of the next byte */
    uint64_t line, line_start;

    /* the record being built */
    char *buf;
    size_t buf_len, buf_cap;
    slot *slots;
    size_t n_slots, slots_cap;
    kn_csv_field *views;
    size_t views_cap;
    size_t n_found, keep_limit;
    bool in_record, record_overflow;
    uint64_t rec_line, rec_end_line, rec_offset;
    kn_csv_error err;

    /* the field being built */
    size_t field_off, field_len;
    bool field_quoted, field_keep, field_overflow;
    uint64_t field_line, field_col;

    /* header */
    bool have_header;
    kn_csv_field *header;
    size_t n_columns;
    uint64_t number;
};

void kn_csv_options_default(kn_csv_options *o)
{
    o->block_size = DEFAULT_BLOCK;
    o->max_field = DEFAULT_MAX_FIELD;
    o->max_record = DEFAULT_MAX_RECORD;
    o->max_columns = DEFAULT_MAX_COLUMNS;
}

static void reader_release(void *p)
{
    kn_csv_reader *r = p;
    free(r->block);
    free(r->buf);
    free(r->slots);
    free(r->views);
    r->block = NULL;
    r->buf = NULL;
    r->slots = NULL;
    r->views = NULL;
    r->buf_cap = r->slots_cap = r->views_cap = 0;
}

static kn_csv_reader *reader_new(kn_arena *a, const kn_csv_options *o)
{
    kn_csv_reader *r = kn_alloc(a, sizeof *r);
    r->arena = a;
    kn_csv_options_default(&r->opt);
    if (o) {
        if (o->block_size) {
            r->opt.block_size = o->block_size;
        }
        if (o->max_field) {
            r->opt.max_field = o->max_field;
        }
        if (o->max_record) {
            r->opt.max_record = o->max_record;
        }
        if (o->max_columns) {
            r->opt.max_columns = o->max_columns;
        }
    }
    /* The buffers are all NULL now, so the cleanup may hold r at once. */
    r->defer = kn_arena_defer(a, reader_release, r);
    r->line = 1;
    return r;
}

kn_csv_reader *kn_csv_open_file(kn_arena *a, FILE *f, const kn_csv_options *o)
{
    kn_csv_reader *r = reader_new(a, o);
    r->file = f;
    r->block = kn_xrealloc(a, NULL, r->opt.block_size);
    r->in = r->block;
    return r;
}

kn_csv_reader *kn_csv_open_buffer(kn_arena *a, const char *data, size_t len,
                                  const kn_csv_options *o)
{
    kn_csv_reader *r = reader_new(a, o);
    /* Never a NULL base: pointer arithmetic on NULL is undefined. */
    r->in = data ? (const unsigned char *)data : (const unsigned char *)"";
    r->in_len = data ? len : 0;
    r->eof = true;
    return r;
}

size_t kn_csv_n_columns(const kn_csv_reader *r)
{
    return r->have_header ? r->n_columns : 0;
}

uint64_t kn_csv_bytes_read(const kn_csv_reader *r)
{
    return r->block_base + r->pos;
}

void kn_csv_close(kn_csv_reader *r)
{
    kn_defer_run(r->arena, r->defer);
    r->done = true;
    r->in_len = r->pos = 0;
}

/* Moves to the next input block; false at the end of input or on error. */
static bool refill(kn_csv_reader *r)
{
    r->block_base += r->in_len;
    r->in_len = 0;
    r->pos = 0;
    if (!r->file || r->eof) {
        return false;
    }
    size_t n = fread(r->block, 1, r->opt.block_size, r->file);
    if (n == 0) {
        r->eof = true;
        r->read_error = ferror(r->file) != 0;
        return false;
    }
    r->in = r->block;
    r->in_len = n;
    return true;
}

static void problem(kn_csv_reader *r, kn_csv_problem p, uint64_t line, uint64_t col, size_t field)
{
    if (r->err.problem != KN_CSV_OK) {
        return;
    }
    r->err.problem = p;
    r->err.line = line;
    r->err.column = col;
    r->err.field = field;
    r->err.count = 0;
    r->err.expected = 0;
}

static void buf_reserve(kn_csv_reader *r, size_t need)
{
    if (need <= r->buf_cap) {
        return;
    }
    size_t cap = r->buf_cap ? r->buf_cap : 4096;
    while (cap < need) {
        if (cap > SIZE_MAX / 2) {
            kn_arena_oom(r->arena);
        }
        cap *= 2;
    }
    r->buf = kn_xrealloc(r->arena, r->buf, cap);
    r->buf_cap = cap;
}

static void append(kn_csv_reader *r, const unsigned char *s, size_t n)
{
    if (!r->field_keep || r->field_overflow || r->record_overflow) {
        return;
    }
    /* Keep the bytes that fit, so that what is kept of an overlong field
     * does not depend on how the input was cut into blocks. */
    size_t room_field = r->opt.max_field - r->field_len;
    size_t room_record = r->opt.max_record - r->buf_len;
    size_t take = n < room_field ? n : room_field;
    take = take < room_record ? take : room_record;
    buf_reserve(r, r->buf_len + take + 1);
    memcpy(r->buf + r->buf_len, s, take);
    r->buf_len += take;
    r->field_len += take;
    if (take == n) {
        return;
    }
    if (room_field <= room_record) {
        problem(r, KN_CSV_FIELD_TOO_LONG, r->field_line, r->field_col, r->n_found + 1);
        if (r->err.problem == KN_CSV_FIELD_TOO_LONG) {
            r->err.count = r->opt.max_field;
        }
        r->field_overflow = true;
    } else {
        problem(r, KN_CSV_RECORD_TOO_LONG, r->rec_line, 1, r->n_found + 1);
        if (r->err.problem == KN_CSV_RECORD_TOO_LONG) {
            r->err.count = r->opt.max_record;
        }
        r->record_overflow = true;
    }
}

static void field_begin(kn_csv_reader *r, uint64_t abs)
{
    r->field_off = r->buf_len;
    r->field_len = 0;
    r->field_quoted = false;
    r->field_overflow = false;
    r->field_keep = r->n_found < r->keep_limit;
    r->field_line = r->line;
    r->field_col = abs - r->line_start + 1;
}

static void field_end(kn_csv_reader *r)
{
    if (r->field_keep) {
        if (r->n_slots == r->slots_cap) {
            size_t cap = r->slots_cap ? r->slots_cap * 2 : 64;
            if (cap > SIZE_MAX / sizeof(slot)) {
                kn_arena_oom(r->arena);
            }
            r->slots = kn_xrealloc(r->arena, r->slots, cap * sizeof(slot));
            r->slots_cap = cap;
        }
        slot *s = &r->slots[r->n_slots++];
        s->off = r->field_off;
        s->len = r->field_len;
        s->quoted = r->field_quoted;
        buf_reserve(r, r->buf_len + 1);
        r->buf[r->buf_len++] = '\0';
    }
    r->n_found++;
}

static void record_reset(kn_csv_reader *r)
{
    r->buf_len = 0;
    r->n_slots = 0;
    r->n_found = 0;
    r->in_record = false;
    r->record_overflow = false;
    memset(&r->err, 0, sizeof r->err);
}

static bool record_is_blank(const kn_csv_reader *r)
{
    return r->n_found == 1 && r->n_slots == 1 && r->slots[0].len == 0 && !r->slots[0].quoted &&
           r->err.problem == KN_CSV_OK;
}

static bool is_bom_field(const kn_csv_reader *r)
{
    return r->rec_offset == 0 && r->n_found == 0 && !r->field_quoted && r->field_len == 3 &&
           r->field_off == 0 && memcmp(r->buf, "\xEF\xBB\xBF", 3) == 0;
}

/* Parses one record.  Returns 1 when a record is ready, 0 at the end of
 * input, -1 on a fatal problem (in r->err). */
static int parse_record(kn_csv_reader *r)
{
    record_reset(r);
    enum state st = S_FIELD_START;
    const unsigned char *base = r->in;
    const unsigned char *p = base + r->pos;
    const unsigned char *end = base + r->in_len;
#define ABS(q) (r->block_base + (uint64_t)((q) - base))

    for (;;) {
        if (p == end) {
            r->pos = (size_t)(p - base);
            if (!refill(r)) {
                if (r->read_error) {
                    memset(&r->err, 0, sizeof r->err);
                    r->err.problem = KN_CSV_READ_FAILED;
                    r->err.line = r->line;
                    r->err.column = r->block_base - r->line_start + 1;
                    return -1;
                }
                if (!r->in_record) {
                    return 0;
                }
                if (st == S_QUOTED) {
                    memset(&r->err, 0, sizeof r->err);
                    r->err.problem = KN_CSV_UNTERMINATED;
                    r->err.line = r->field_line;
                    r->err.column = r->field_col;
                    r->err.field = r->n_found + 1;
                    return -1;
                }
                if (st == S_FIELD_START) {
                    /* The record ended with a ',': one more, empty field. */
                    field_begin(r, r->block_base);
                }
                field_end(r);
                r->rec_end_line = r->line;
                return 1;
            }
            base = r->in;
            p = base;
            end = base + r->in_len;
            if (r->pending_cr) {
                /* A CR ended the last block: an LF now is the same line break. */
                r->pending_cr = false;
                if (*p == '\n') {
                    if (st == S_QUOTED) {
                        append(r, p, 1);
                    }
                    p++;
                    r->line_start = ABS(p);
                    continue;
                }
            }
        }

        if (!r->have_header && (r->err.problem != KN_CSV_OK || r->n_found > r->opt.max_columns)) {
            /* The header is refused whole at its first problem: reading on
             * to its end could take for ever (an endless first line). */
            r->pos = (size_t)(p - base);
            if (r->err.problem == KN_CSV_OK) {
                r->err.problem = KN_CSV_TOO_MANY_COLUMNS;
                r->err.line = r->rec_line;
                r->err.column = 1;
                r->err.count = r->opt.max_columns;
            }
            return -1;
        }
        switch (st) {
        case S_FIELD_START:
            if (!r->in_record) {
                r->in_record = true;
                r->rec_line = r->line;
                r->rec_offset = ABS(p);
            }
            field_begin(r, ABS(p));
            if (*p == '"') {
                r->field_quoted = true;
                p++;
                st = S_QUOTED;
                break;
            }
            st = S_UNQUOTED;
            __attribute__((fallthrough));
        case S_UNQUOTED: {
            const unsigned char *q = p;
            while (q < end && !special_unquoted[*q]) {
                q++;
            }
            if (q > p) {
                append(r, p, (size_t)(q - p));
                p = q;
            }
            if (p == end) {
                break;
            }
            unsigned char c = *p++;
            if (c == ',') {
                field_end(r);
                st = S_FIELD_START;
            } else if (c == '\n' || c == '\r') {
                field_end(r);
                r->rec_end_line = r->line;
                r->line++;
                if (c == '\r') {
                    if (p == end) {
                        r->pending_cr = true;
                    } else if (*p == '\n') {
                        p++;
                    }
                }
                r->line_start = ABS(p);
                if (record_is_blank(r)) {
                    record_reset(r);
                    st = S_FIELD_START;
                    break;
                }
                r->pos = (size_t)(p - base);
                return 1;
            } else if (c == '"') {
                if (is_bom_field(r)) {
                    /* BOM then a quoted first header field. */
                    r->buf_len = 0;
                    r->field_len = 0;
                    r->field_quoted = true;
                    st = S_QUOTED;
                } else {
                    problem(r, KN_CSV_STRAY_QUOTE, r->line, ABS(p - 1) - r->line_start + 1,
                            r->n_found + 1);
                    append(r, p - 1, 1);
                }
            } else {
                problem(r, KN_CSV_NUL_BYTE, r->line, ABS(p - 1) - r->line_start + 1, r->n_found + 1);
            }
            break;
        }
        case S_QUOTED: {
            const unsigned char *q = p;
            while (q < end && !special_quoted[*q]) {
                q++;
            }
            if (q > p) {
                append(r, p, (size_t)(q - p));
                p = q;
            }
            if (p == end) {
                break;
            }
            unsigned char c = *p++;
            if (c == '"') {
                st = S_QUOTE_SEEN;
            } else if (c == '\n' || c == '\r') {
                append(r, p - 1, 1);
                r->line++;
                if (c == '\r') {
                    if (p == end) {
                        r->pending_cr = true;
                    } else if (*p == '\n') {
                        append(r, p, 1);
                        p++;
                    }
                }
                r->line_start = ABS(p);
            } else {
                problem(r, KN_CSV_NUL_BYTE, r->line, ABS(p - 1) - r->line_start + 1, r->n_found + 1);
            }
            break;
        }
        case S_QUOTE_SEEN:
            if (*p == '"') {
                append(r, p, 1);
                p++;
                st = S_QUOTED;
                break;
            }
            if (*p != ',' && *p != '\n' && *p != '\r') {
                problem(r, KN_CSV_TEXT_AFTER_QUOTE, r->line, ABS(p) - r->line_start + 1,
                        r->n_found + 1);
            }
            /* The unquoted state ends the field, or keeps the text as
             * written, as most readers do. */
            st = S_UNQUOTED;
            break;
        }
    }
#undef ABS
}

static void fill_row(kn_csv_reader *r, kn_csv_row *row)
{
    if (r->n_slots > r->views_cap) {
        size_t cap = r->views_cap ? r->views_cap : 64;
        while (cap < r->n_slots) {
            cap *= 2;
        }
        if (cap > SIZE_MAX / sizeof(kn_csv_field)) {
            kn_arena_oom(r->arena);
        }
        r->views = kn_xrealloc(r->arena, r->views, cap * sizeof(kn_csv_field));
        r->views_cap = cap;
    }
    for (size_t i = 0; i < r->n_slots; i++) {
        r->views[i].ptr = r->buf + r->slots[i].off;
        r->views[i].len = r->slots[i].len;
        r->views[i].quoted = r->slots[i].quoted;
    }
    row->fields = r->views;
    row->n_fields = r->n_slots;
    row->n_found = r->n_found;
    row->line = r->rec_line;
    row->end_line = r->rec_end_line;
    row->offset = r->rec_offset;
    row->number = r->number;
}

static kn_csv_status fail(kn_csv_reader *r, kn_csv_error *err)
{
    r->done = true;
    if (err) {
        *err = r->err;
    }
    return KN_CSV_FAILED;
}

kn_csv_status kn_csv_read_header(kn_csv_reader *r, kn_csv_row *header, kn_csv_error *err)
{
    if (r->done) {
        return KN_CSV_END;
    }
    if (r->have_header) {
        if (header) {
            memset(header, 0, sizeof *header);
            header->fields = r->header;
            header->n_fields = header->n_found = r->n_columns;
            header->line = header->end_line = 1;
        }
        return KN_CSV_ROW;
    }
    r->keep_limit = r->opt.max_columns + 1;
    int got = parse_record(r);
    if (got < 0) {
        return fail(r, err);
    }
    if (got == 0) {
        memset(&r->err, 0, sizeof r->err);
        r->err.problem = KN_CSV_NO_HEADER;
        r->err.line = r->line;
        r->err.column = 1;
        return fail(r, err);
    }
    if (r->n_found > r->opt.max_columns) {
        memset(&r->err, 0, sizeof r->err);
        r->err.problem = KN_CSV_TOO_MANY_COLUMNS;
        r->err.line = r->rec_line;
        r->err.column = 1;
        r->err.count = r->opt.max_columns;
        return fail(r, err);
    }
    if (r->err.problem != KN_CSV_OK) {
        return fail(r, err);
    }
    r->header = kn_alloc_array(r->arena, r->n_slots, sizeof *r->header);
    for (size_t i = 0; i < r->n_slots; i++) {
        const char *s = r->buf + r->slots[i].off;
        size_t len = r->slots[i].len;
        if (i == 0 && !r->slots[i].quoted && len >= 3 && memcmp(s, "\xEF\xBB\xBF", 3) == 0) {
            s += 3;
            len -= 3;
        }
        r->header[i].ptr = kn_strndup(r->arena, s, len);
        r->header[i].len = len;
        r->header[i].quoted = r->slots[i].quoted;
    }
    r->n_columns = r->n_slots;
    r->have_header = true;
    if (header) {
        fill_row(r, header);
        header->fields = r->header;
    }
    return KN_CSV_ROW;
}

kn_csv_status kn_csv_next_row(kn_csv_reader *r, kn_csv_row *row, kn_csv_error *err)
{
    if (!r->have_header) {
        kn_csv_status s = kn_csv_read_header(r, NULL, err);
        if (s != KN_CSV_ROW) {
            return s;
        }
    }
    if (r->done) {
        return KN_CSV_END;
    }
    r->keep_limit = r->n_columns + 1;
    int got = parse_record(r);
    if (got < 0) {
        return fail(r, err);
    }
    if (got == 0) {
        r->done = true;
        return KN_CSV_END;
    }
    r->number++;
    if (r->n_found != r->n_columns) {
        problem(r, KN_CSV_RAGGED, r->rec_line, 1, 0);
        if (r->err.problem == KN_CSV_RAGGED) {
            r->err.count = r->n_found;
            r->err.expected = r->n_columns;
        }
    }
    fill_row(r, row);
    if (r->err.problem != KN_CSV_OK) {
        if (err) {
            *err = r->err;
        }
        return KN_CSV_BAD_ROW;
    }
    return KN_CSV_ROW;
}

char *kn_csv_error_message(kn_arena *a, const kn_csv_error *e)
{
    switch (e->problem) {
    case KN_CSV_OK:
        return kn_strdup(a, "no problem");
    case KN_CSV_RAGGED:
        return kn_printf(a, "record has %zu field%s, the header has %zu", e->count,
                         e->count == 1 ? "" : "s", e->expected);
    case KN_CSV_NUL_BYTE:
        return kn_printf(a, "NUL byte in field %zu", e->field);
    case KN_CSV_FIELD_TOO_LONG:
        return kn_printf(a, "field %zu is longer than %zu bytes", e->field, e->count);
    case KN_CSV_RECORD_TOO_LONG:
        return kn_printf(a, "record is longer than %zu bytes", e->count);
    case KN_CSV_STRAY_QUOTE:
        return kn_printf(a, "'\"' inside unquoted field %zu (quote the field and double the '\"')",
                         e->field);
    case KN_CSV_TEXT_AFTER_QUOTE:
        return kn_printf(a, "text after the closing '\"' of field %zu", e->field);
    case KN_CSV_UNTERMINATED:
        return kn_printf(a, "quoted field %zu is not closed before the end of the file", e->field);
    case KN_CSV_READ_FAILED:
        return kn_strdup(a, "read error");
    case KN_CSV_NO_HEADER:
        return kn_strdup(a, "no header record (the file is empty)");
    case KN_CSV_TOO_MANY_COLUMNS:
        return kn_printf(a, "header has more than %zu fields", e->count);
    }
    return kn_strdup(a, "unknown problem");
}

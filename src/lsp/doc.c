/* doc.c - the documents the editor has open, and positions: the model
 * counts lines from 1 and columns in bytes (offset), LSP counts both from
 * 0 and characters in UTF-16 units. */
#include "lsp.h"

#include <limits.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <sys/stat.h>
#include <unistd.h>

#include "xalloc.h"

/* The most kn_doc_text reads of a file that is not open: more than any
 * schema or register may hold. */
#define KN_DOC_MAX_READ ((uintmax_t)64 << 20)

void *kn_lsp_xmalloc(size_t n)
{
    void *p = malloc(n ? n : 1);
    if (!p) {
        fputs("knowable lsp: out of memory\n", stderr);
        exit(KN_EXIT_FAILED);
    }
    return p;
}

char *kn_lsp_xstrndup(const char *s, size_t n)
{
    char *p = kn_lsp_xmalloc(n + 1);
    memcpy(p, s, n);
    p[n] = '\0';
    return p;
}

static int hex(int c)
{
    if (c >= '0' && c <= '9') {
        return c - '0';
    }
    if (c >= 'a' && c <= 'f') {
        return c - 'a' + 10;
    }
    if (c >= 'A' && c <= 'F') {
        return c - 'A' + 10;
    }
    return -1;
}

char *kn_uri_to_path(const char *uri)
{
    /* file:///path, file://localhost/path and file:/path (RFC 8089); the
     * scheme and the host in any case. */
    if (strncasecmp(uri, "file:", 5) != 0) {
        return NULL;
    }
    const char *p = uri + 5;
    if (strncmp(p, "//", 2) == 0) {
        p += 2;
        if (strncasecmp(p, "localhost/", 10) == 0) {
            p += 9;
        }
        if (*p != '/') {
            return NULL; /* a host other than this one */
        }
    } else if (*p != '/') {
        return NULL;
    }
    size_t n = strlen(p);
    char *out = kn_lsp_xmalloc(n + 1), *o = out;
    for (; *p && *p != '?' && *p != '#'; p++) {
        if (*p == '%' && hex(p[1]) >= 0 && hex(p[2]) >= 0) {
            int c = hex(p[1]) * 16 + hex(p[2]);
            if (c == 0) {
                free(out);
                return NULL;
            }
            *o++ = (char)c;
            p += 2;
        } else {
            *o++ = *p;
        }
    }
    *o = '\0';
    return out;
}

char *kn_path_to_uri(const char *path)
{
    size_t n = strlen(path);
    char *out = kn_lsp_xmalloc(7 + 3 * n + 1), *o = out;
    memcpy(o, "file://", 7);
    o += 7;
    for (const unsigned char *p = (const unsigned char *)path; *p; p++) {
        if ((*p >= 'a' && *p <= 'z') || (*p >= 'A' && *p <= 'Z') || (*p >= '0' && *p <= '9') ||
            strchr("/-._~", *p)) {
            *o++ = (char)*p;
        } else {
            static const char digits[] = "0123456789ABCDEF";
            *o++ = '%';
            *o++ = digits[*p >> 4];
            *o++ = digits[*p & 15];
        }
    }
    *o = '\0';
    return out;
}

/* The real path of path; when the file does not exist (a new buffer), its
 * folder's real path and its name, as the loader computes it. */
static char *real_of(const char *path)
{
    char *r = realpath(path, NULL);
    if (r) {
        return r;
    }
    const char *slash = strrchr(path, '/');
    if (!slash) {
        return kn_lsp_xstrndup(path, strlen(path));
    }
    char *dir = kn_lsp_xstrndup(path, slash == path ? 1 : (size_t)(slash - path));
    char *rd = realpath(dir, NULL);
    free(dir);
    if (!rd) {
        return kn_lsp_xstrndup(path, strlen(path));
    }
    size_t a = strlen(rd), b = strlen(slash + 1);
    char *out = kn_lsp_xmalloc(a + 1 + b + 1);
    memcpy(out, rd, a);
    size_t k = a;
    if (!(a == 1 && rd[0] == '/')) {
        out[k++] = '/';
    }
    memcpy(out + k, slash + 1, b + 1);
    free(rd);
    return out;
}

kn_doc *kn_doc_find(kn_server *s, const char *uri)
{
    for (kn_doc *d = s->docs; d; d = d->next) {
        if (strcmp(d->uri, uri) == 0) {
            return d;
        }
    }
    return NULL;
}

kn_doc *kn_doc_named(kn_server *s, const char *uri)
{
    kn_doc *d = kn_doc_find(s, uri);
    char *path = d ? NULL : kn_uri_to_path(uri);
    if (path) {
        for (d = s->docs; d && !(d->path && strcmp(d->path, path) == 0); d = d->next) {
        }
        free(path);
    }
    return d;
}

kn_doc *kn_doc_by_real(kn_server *s, const char *real)
{
    for (kn_doc *d = s->docs; d; d = d->next) {
        if (d->real && strcmp(d->real, real) == 0) {
            return d;
        }
    }
    return NULL;
}

kn_doc *kn_doc_by_file(kn_server *s, const char *file)
{
    if (!file) {
        return NULL;
    }
    for (kn_doc *d = s->docs; d; d = d->next) {
        if (d->path && strcmp(d->path, file) == 0) {
            return d;
        }
    }
    char *real = realpath(file, NULL);
    kn_doc *d = real ? kn_doc_by_real(s, real) : NULL;
    free(real);
    return d;
}

char *kn_file_uri(kn_server *s, const char *file)
{
    kn_doc *d = kn_doc_by_file(s, file);
    if (d) {
        return kn_lsp_xstrndup(d->uri, strlen(d->uri));
    }
    char *real = realpath(file, NULL);
    if (!real) {
        char cwd[PATH_MAX];
        if (file[0] != '/' && getcwd(cwd, sizeof cwd)) {
            size_t a = strlen(cwd), b = strlen(file);
            real = kn_lsp_xmalloc(a + 1 + b + 1);
            memcpy(real, cwd, a);
            real[a] = '/';
            memcpy(real + a + 1, file, b + 1);
        } else {
            real = kn_lsp_xstrndup(file, strlen(file));
        }
    }
    char *uri = kn_path_to_uri(real);
    free(real);
    return uri;
}

/* Whether a line ends at text[i]: LSP's line ends are "\n", "\r\n" and
 * "\r" (a carriage return followed by a line feed ends its line there). */
static bool line_end(const char *text, size_t len, size_t i)
{
    return text[i] == '\n' || (text[i] == '\r' && (i + 1 == len || text[i + 1] != '\n'));
}

void kn_doc_set_text(kn_doc *d, const char *text, size_t len)
{
    free(d->text);
    free(d->lines);
    d->text = kn_lsp_xstrndup(text, len);
    d->len = len;
    size_t n = 1;
    for (size_t i = 0; i < len; i++) {
        n += line_end(text, len, i);
    }
    d->lines = kn_lsp_xmalloc(n * sizeof *d->lines);
    d->lines[0] = 0;
    d->n_lines = 1;
    for (size_t i = 0; i < len; i++) {
        if (line_end(text, len, i)) {
            d->lines[d->n_lines++] = i + 1;
        }
    }
}

kn_doc *kn_doc_open(kn_server *s, const char *uri, const char *text, size_t len)
{
    kn_doc *d = kn_doc_find(s, uri);
    if (!d) {
        d = kn_lsp_xmalloc(sizeof *d);
        memset(d, 0, sizeof *d);
        d->uri = kn_lsp_xstrndup(uri, strlen(uri));
        d->path = kn_uri_to_path(uri);
        d->real = d->path ? real_of(d->path) : NULL;
        d->next = s->docs;
        s->docs = d;
    }
    kn_doc_set_text(d, text, len);
    return d;
}

void kn_lsp_drop_analysis(kn_doc *d)
{
    if (d->arena) {
        kn_arena_free(d->arena);
    }
    d->arena = NULL;
    d->run = NULL;
    d->unit = NULL;
    d->view = NULL;
    d->n_view = 0;
    d->deps = NULL;
}

void kn_lsp_drop_kept(kn_doc *d)
{
    free(d->kept);
    d->kept = NULL;
    memset(d->n_kept, 0, sizeof d->n_kept);
}

void kn_lsp_keep_names(kn_doc *d, const kn_schema *sc)
{
    kn_lsp_drop_kept(d);
    size_t n = sc->n_events + sc->n_sources + sc->n_columns, bytes = 0;
    for (size_t i = 0; i < sc->n_events; i++) {
        bytes += strlen(sc->events[i]->name) + 1;
    }
    for (size_t i = 0; i < sc->n_sources; i++) {
        bytes += strlen(sc->sources[i]->name) + 1;
    }
    for (size_t i = 0; i < sc->n_columns; i++) {
        bytes += strlen(sc->columns[i]->name) + 1;
    }
    char **p = kn_lsp_xmalloc(n * sizeof *p + bytes + 1);
    char *b = (char *)(p + n);
    size_t k = 0;
    for (int kind = 0; kind < 3; kind++) {
        size_t count = kind == 0 ? sc->n_events : kind == 1 ? sc->n_sources : sc->n_columns;
        for (size_t i = 0; i < count; i++) {
            const char *name = kind == 0   ? sc->events[i]->name
                               : kind == 1 ? sc->sources[i]->name
                                           : sc->columns[i]->name;
            size_t len = strlen(name) + 1;
            memcpy(b, name, len);
            p[k++] = b;
            b += len;
        }
        d->n_kept[kind] = count;
    }
    d->kept = p;
}

void kn_lsp_drop_rulebook(kn_doc *d)
{
    if (d->rb_arena) {
        kn_arena_free(d->rb_arena);
    }
    d->rb_arena = NULL;
    d->rulebook = NULL;
    d->rb_key = NULL;
    d->rb_stamps = NULL;
}

static void free_doc(kn_doc *d)
{
    kn_lsp_drop_analysis(d);
    kn_lsp_drop_kept(d);
    kn_lsp_drop_rulebook(d);
    free(d->uri);
    free(d->path);
    free(d->real);
    free(d->text);
    free(d->lines);
    free(d);
}

void kn_doc_close(kn_server *s, kn_doc *d)
{
    for (kn_doc **p = &s->docs; *p; p = &(*p)->next) {
        if (*p == d) {
            *p = d->next;
            break;
        }
    }
    free_doc(d);
}

bool kn_lsp_read_file(const char *path, char **text, size_t *len)
{
    *text = NULL;
    *len = 0;
    FILE *f = fopen(path, "rb");
    if (!f) {
        return false;
    }
    char *buf = NULL;
    size_t n = 0;
    FILE *m = open_memstream(&buf, &n);
    char chunk[4096];
    size_t got;
    while (m && (got = fread(chunk, 1, sizeof chunk, f)) > 0) {
        fwrite(chunk, 1, got, m);
    }
    bool ok = m && !ferror(f) && fclose(m) == 0 && buf;
    fclose(f);
    if (!ok) {
        free(buf);
        return false;
    }
    *text = buf;
    *len = n;
    return true;
}

const kn_doc *kn_doc_text(kn_server *s, const char *file)
{
    kn_doc *d = kn_doc_by_file(s, file);
    if (d || !file) {
        return d;
    }
    for (d = s->disk; d; d = d->next) {
        if (strcmp(d->path, file) == 0) {
            return d->text ? d : NULL;
        }
    }
    d = kn_lsp_xmalloc(sizeof *d);
    memset(d, 0, sizeof *d);
    d->path = kn_lsp_xstrndup(file, strlen(file));
    /* Only a regular file of a schema's size at most is read (never a
     * FIFO or a device, which could block or never end). */
    struct stat st;
    char *text;
    size_t len;
    if (stat(file, &st) == 0 && S_ISREG(st.st_mode) && (uintmax_t)st.st_size <= KN_DOC_MAX_READ &&
        kn_lsp_read_file(file, &text, &len)) {
        kn_doc_set_text(d, text, len);
        free(text);
    }
    d->next = s->disk;
    s->disk = d;
    return d->text ? d : NULL;
}

void kn_lsp_forget_files(kn_server *s)
{
    while (s->disk) {
        kn_doc *d = s->disk;
        s->disk = d->next;
        free_doc(d);
    }
}

/* UTF-16 units of the UTF-8 bytes [from, to) of text. */
static long utf16_units(const char *text, size_t from, size_t to)
{
    long n = 0;
    for (size_t i = from; i < to; i++) {
        unsigned char b = (unsigned char)text[i];
        if ((b & 0xC0) != 0x80) {
            n += b >= 0xF0 ? 2 : 1;
        }
    }
    return n;
}

size_t kn_doc_offset(const kn_doc *d, long line, long character)
{
    if (line < 0) {
        return 0;
    }
    if ((size_t)line >= d->n_lines) {
        return d->len;
    }
    size_t i = d->lines[line];
    long units = 0;
    while (i < d->len && d->text[i] != '\n' && d->text[i] != '\r' && units < character) {
        unsigned char b = (unsigned char)d->text[i];
        units += b >= 0xF0 ? 2 : 1;
        i++;
        while (i < d->len && ((unsigned char)d->text[i] & 0xC0) == 0x80) {
            i++;
        }
    }
    return i;
}

void kn_doc_position(const kn_doc *d, size_t offset, long *line, long *character)
{
    if (offset > d->len) {
        offset = d->len;
    }
    /* The last line start at or before offset. */
    size_t lo = 0, hi = d->n_lines;
    while (hi - lo > 1) {
        size_t mid = lo + (hi - lo) / 2;
        if (d->lines[mid] <= offset) {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    *line = (long)lo;
    *character = utf16_units(d->text, d->lines[lo], offset);
}

size_t kn_token_len(const char *text, size_t len, size_t offset)
{
    if (offset >= len) {
        return 0;
    }
    char c = text[offset];
    if (c == '"' || c == '\'') {
        for (size_t i = offset + 1; i < len && text[i] != '\n'; i++) {
            if (c == '"' && text[i] == '\\') {
                i++;
            } else if (text[i] == c) {
                return i + 1 - offset;
            }
        }
        return 1;
    }
    if (c == '[' || c == '{' || c == '\n' || c == '-') {
        return c == '\n' ? 0 : 1;
    }
    size_t i = offset;
    while (i < len && text[i] != '\n' && text[i] != ',' && text[i] != ']' && text[i] != '}' &&
           !(text[i] == ':' &&
             (i + 1 == len || text[i + 1] == ' ' || text[i + 1] == '\n' || text[i + 1] == '\r')) &&
           !(text[i] == '#' && i > offset && text[i - 1] == ' ')) {
        i++;
    }
    while (i > offset && (text[i - 1] == ' ' || text[i - 1] == '\r' || text[i - 1] == '\t')) {
        i--;
    }
    return i > offset ? i - offset : 1;
}

static json_t *position(long line, long character)
{
    return json_pack("{s:i,s:i}", "line", (json_int_t)line, "character", (json_int_t)character);
}

void kn_range_of(kn_server *s, const kn_pos *p, long r[4])
{
    r[0] = r[1] = r[2] = r[3] = 0;
    const kn_doc *d = p->line ? kn_doc_text(s, p->file) : NULL;
    if (d && p->offset <= d->len) {
        size_t n = kn_token_len(d->text, d->len, p->offset);
        kn_doc_position(d, p->offset, &r[0], &r[1]);
        kn_doc_position(d, p->offset + n, &r[2], &r[3]);
    } else if (p->line) {
        r[0] = r[2] = (long)p->line - 1;
        r[1] = r[3] = (long)p->col - 1;
    }
}

json_t *kn_range_at(kn_server *s, const kn_pos *p)
{
    long r[4];
    kn_range_of(s, p, r);
    return json_pack("{s:o,s:o}", "start", position(r[0], r[1]), "end", position(r[2], r[3]));
}

json_t *kn_location_at(kn_server *s, const kn_pos *p)
{
    char *uri = kn_file_uri(s, p->file);
    json_t *loc = json_pack("{s:s,s:o}", "uri", uri, "range", kn_range_at(s, p));
    free(uri);
    return loc;
}

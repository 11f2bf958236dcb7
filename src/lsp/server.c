/* server.c - `knowable lsp` (SPEC §5.2): the protocol loop, the documents'
 * life cycle and the diagnostics.  A change re-runs the pipeline of `check`
 * (kn_run_load, kn_run_analyse, kn_run_finish) on the schema changed and on
 * each open schema that read the file changed (opening, saving or closing
 * a document, on every open schema), with the editor's buffers standing
 * for the files they show, and publishes
 * the findings per file: a finding in an included register goes to that
 * register's URI, notes become relatedInformation. */
#include "lsp.h"

#include <setjmp.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "../util/arena.h"
#include "../util/path.h"
#include "../util/text.h"
#include "rpc.h"
#include "xalloc.h"

/* JSON-RPC and LSP error codes. */
enum {
    PARSE_ERROR = -32700,
    INVALID_REQUEST = -32600,
    METHOD_NOT_FOUND = -32601,
    INVALID_PARAMS = -32602,
    SERVER_NOT_INITIALIZED = -32002,
};

static void send(kn_server *s, json_t *msg)
{
    if (!msg) {
        return;
    }
    json_object_set_new(msg, "jsonrpc", json_string("2.0"));
    char *body = json_dumps(msg, JSON_COMPACT);
    if (body) {
        kn_rpc_write(s->out, body, strlen(body));
        free(body);
    }
    json_decref(msg);
}

static void reply(kn_server *s, json_t *id, json_t *result)
{
    send(s, json_pack("{s:O,s:o}", "id", id ? id : json_null(), "result", result ? result : json_null()));
}

static void reply_error(kn_server *s, json_t *id, int code, const char *message)
{
    send(s, json_pack("{s:O,s:{s:i,s:s}}", "id", id ? id : json_null(), "error", "code", code, "message",
                      message));
}

/* --- Analysis ------------------------------------------------------------ */

/* The loader's overlay: an open document's buffer stands for its file.
 * The schema being loaded is asked for first, under the path the loader
 * derives from its name (which need not be the file's real path when the
 * file is a symbolic link or does not exist yet): that first call is
 * always answered with its buffer, so the loader never falls back to
 * reading standard input, which carries the protocol. */
typedef struct kn_dep {
    const char *real;
    struct kn_dep *next;
} kn_dep;

static const char *overlay(void *ctx, const char *real, size_t *len)
{
    kn_server *s = ctx;
    if (s->loading) {
        kn_doc *main = s->loading;
        s->loading = NULL;
        *len = main->len;
        return main->text;
    }
    kn_doc *c = s->checking;
    if (c && c->arena) {
        kn_dep *dep = kn_alloc(c->arena, sizeof *dep);
        dep->real = kn_strdup(c->arena, real);
        dep->next = c->deps;
        c->deps = dep;
    }
    kn_doc *d = kn_doc_by_real(s, real);
    if (!d) {
        return NULL;
    }
    *len = d->len;
    return d->text;
}

/* A schema, as opposed to a register (SPEC §3.1): it bears the schema's
 * conventional name (NAME.knowable.yaml: then also when it is empty, only
 * comments or not YAML at all, which `check` reports), or it has a
 * top-level key that only a schema may have. */
static bool is_schema(const kn_doc *d)
{
    static const char *const names[] = {".knowable.yaml", ".knowable.yml"};
    size_t pl = strlen(d->path);
    for (size_t k = 0; k < sizeof names / sizeof *names; k++) {
        size_t n = strlen(names[k]);
        if (pl > n && strcmp(d->path + pl - n, names[k]) == 0 && d->path[pl - n - 1] != '/') {
            return true;
        }
    }
    static const char *const keys[] = {"dataset:", "prediction:", "columns:", "pipeline:", "split:"};
    for (size_t i = 0; i < d->n_lines; i++) {
        const char *line = d->text + d->lines[i];
        size_t left = d->len - d->lines[i];
        for (size_t k = 0; k < sizeof keys / sizeof *keys; k++) {
            size_t n = strlen(keys[k]);
            if (left >= n && memcmp(line, keys[k], n) == 0) {
                return true;
            }
        }
    }
    return false;
}

/* --- The rulebook, kept across changes -------------------------------------
 * Reading the rulebook (the built-in default's YAML, its patterns compiled,
 * then any house file) is the same work on every change; each schema keeps
 * the one it was judged under until the discovery finds another file or a
 * file it was read from changes on disk. */

/* What a rulebook file held when it was read: compared byte for byte on
 * each change (a rulebook is a few KiB; a time stamp can miss a rewrite
 * within its granularity). */
typedef struct kn_rb_stamp {
    char *text; /* malloc */
    size_t len;
} kn_rb_stamp;

/* The bytes of path (malloc, in *out); false when it cannot be read. */
static bool slurp(const char *path, kn_rb_stamp *out)
{
    return kn_lsp_read_file(path, &out->text, &out->len);
}

static void free_stamp(void *p)
{
    free(((kn_rb_stamp *)p)->text);
}

static bool unchanged(const kn_doc *d)
{
    bool same = true;
    for (size_t i = 0; same && i < d->rulebook->n_files; i++) {
        kn_rb_stamp now;
        const kn_rb_stamp *then = &d->rb_stamps[i];
        same = slurp(d->rulebook->files[i], &now) && now.len == then->len &&
               memcmp(now.text, then->text, now.len) == 0;
        free(now.text);
    }
    return same;
}

/* Reads d's rulebook into an arena of its own as kn_run_rulebook does: the
 * built-in default, then every --rulebook, or else the discovered file
 * found.  False when it cannot be read (broken, out of memory): nothing is
 * kept, and the run reads it itself and reports why. */
static bool keep_rulebook(kn_server *s, kn_doc *d, const char *found, const char *key)
{
    kn_arena *a = kn_arena_new();
    if (!a) {
        return false;
    }
    jmp_buf oom;
    if (setjmp(oom)) {
        kn_arena_free(a);
        return false;
    }
    kn_arena_set_oom(a, &oom);
    kn_sink *sink = kn_sink_new(a);
    kn_rulebook *rb = kn_rulebook_new(a);
    bool ok = kn_rulebook_load_default(rb, a, sink);
    for (size_t i = 0; ok && i < s->opt->n_rulebooks; i++) {
        ok = kn_rulebook_load(rb, a, sink, s->opt->rulebooks[i]);
    }
    if (ok && !s->opt->n_rulebooks && found) {
        ok = kn_rulebook_load(rb, a, sink, kn_strdup(a, found));
    }
    kn_rb_stamp *stamps = kn_alloc_array(a, rb->n_files + 1, sizeof *stamps);
    for (size_t i = 0; ok && i < rb->n_files; i++) {
        kn_arena_defer(a, free_stamp, &stamps[i]);
        ok = slurp(rb->files[i], &stamps[i]);
    }
    const char *k = kn_strdup(a, key);
    kn_arena_set_oom(a, NULL);
    if (!ok) {
        kn_arena_free(a);
        return false;
    }
    d->rb_arena = a;
    d->rulebook = rb;
    d->rb_key = k;
    d->rb_stamps = stamps;
    return true;
}

/* The rulebook d is judged under, resolved as `check` resolves it, from
 * the last change when it still holds; NULL when the run must read it
 * (and report what is wrong with it).  ra is the run's arena. */
static kn_rulebook *rulebook_for(kn_server *s, kn_doc *d, kn_arena *ra)
{
    const char *found = NULL, *key = "";
    if (!s->opt->n_rulebooks) {
        found = kn_rulebook_discover(ra, d->path, s->opt->root);
        if (found) {
            const char *real = kn_path_real(ra, found);
            key = real ? real : found;
        }
    }
    if (d->rulebook && strcmp(d->rb_key, key) == 0 && unchanged(d)) {
        return d->rulebook;
    }
    kn_lsp_drop_rulebook(d);
    return keep_rulebook(s, d, found, key) ? d->rulebook : NULL;
}

/* Runs the pipeline of `check` on d with the buffers of every open
 * document; keeps the run (model, timeline, findings) until the next one. */
static void analyse(kn_server *s, kn_doc *d)
{
    if (d->arena && d->unit && d->unit->schema) {
        kn_lsp_keep_names(d, d->unit->schema);
    }
    kn_lsp_drop_analysis(d);
    if (!d->path || !is_schema(d)) {
        kn_lsp_drop_kept(d);
        kn_lsp_drop_rulebook(d);
        return;
    }
    kn_arena *a = kn_arena_new();
    if (!a) {
        return;
    }
    jmp_buf oom;
    if (setjmp(oom)) {
        s->loading = NULL;
        s->checking = NULL;
        kn_lsp_drop_analysis(d); /* d->arena is a: set before anything can fail */
        fputs("knowable lsp: out of memory while checking a schema\n", s->err);
        return;
    }
    kn_arena_set_oom(a, &oom);
    d->arena = a;
    d->opt = *s->opt;
    d->opt.stdin_name = d->path; /* the buffer stands for the file */
    kn_run *r = kn_alloc(a, sizeof *r);
    kn_run_init(r, a, "lsp", &d->opt, NULL, s->err);
    r->overlay = overlay;
    r->overlay_ctx = s;
    r->given = rulebook_for(s, d, a);
    s->loading = d;
    s->checking = d;
    d->unit = kn_run_load(r, "-");
    s->loading = NULL;
    s->checking = NULL;
    kn_run_analyse(r, d->unit);
    kn_run_finish(r);
    d->view = kn_sink_view(r->sink, a, &d->n_view);
    d->run = r;
    kn_arena_set_oom(a, NULL);
    if (d->unit && d->unit->schema) {
        kn_lsp_drop_kept(d);
    }
}

kn_doc *kn_model_for(kn_server *s, kn_doc *doc)
{
    if (doc->unit && doc->unit->schema) {
        return doc;
    }
    for (kn_doc *d = s->docs; d; d = d->next) {
        const kn_schema *sc = d->unit ? d->unit->schema : NULL;
        for (size_t i = 0; sc && doc->real && i < sc->n_files; i++) {
            if (strcmp(sc->files[i].path, doc->real) == 0) {
                return d;
            }
        }
    }
    return NULL;
}

static const int lsp_severity[] = {4, 3, 2, 1}; /* off, note, warning, error */

/* The diagnostics are written as JSON text directly (kn_fput_json, the
 * escaping of the JSON report): a schema with a hundred late columns has
 * thousands of notes, and building them as jansson objects first cost more
 * than the whole analysis. */
/* A JSON string: runs of plain ASCII are written at once, the rest by
 * kn_fput_json (a run of other bytes holds whole UTF-8 sequences). */
static void put_str(FILE *f, const char *str)
{
    const unsigned char *p = (const unsigned char *)str;
    fputc('"', f);
    while (*p) {
        const unsigned char *q = p;
        while (*q >= 0x20 && *q < 0x7f && *q != '"' && *q != '\\') {
            q++;
        }
        fwrite(p, 1, (size_t)(q - p), f);
        p = q;
        while (*q && !(*q >= 0x20 && *q < 0x7f && *q != '"' && *q != '\\')) {
            q++;
        }
        if (q > p) {
            kn_fput_json(f, (const char *)p, (size_t)(q - p));
        }
        p = q;
    }
    fputc('"', f);
}

static void put_range(FILE *f, kn_server *s, const kn_pos *p)
{
    long r[4];
    kn_range_of(s, p, r);
    fprintf(f, "{\"start\":{\"line\":%ld,\"character\":%ld},\"end\":{\"line\":%ld,\"character\":%ld}}", r[0],
            r[1], r[2], r[3]);
}

static void put_diagnostic(FILE *f, kn_server *s, const kn_view *v)
{
    fputs("{\"range\":", f);
    put_range(f, s, &v->pos);
    fprintf(f, ",\"severity\":%d,\"code\":", lsp_severity[v->severity]);
    put_str(f, kn_rule_get(v->rule)->id);
    fputs(",\"source\":\"knowable\",\"message\":", f);
    put_str(f, v->message);
    if (v->n_notes) {
        fputs(",\"relatedInformation\":[", f);
        for (size_t i = 0; i < v->n_notes; i++) {
            const kn_view_note *n = &v->notes[i];
            kn_pos p = n->pos;
            if (!p.file) {
                p = v->pos;
                p.line = 0;
            }
            char *uri = kn_file_uri(s, p.file);
            fputs(i ? ",{\"location\":{\"uri\":" : "{\"location\":{\"uri\":", f);
            put_str(f, uri);
            free(uri);
            fputs(",\"range\":", f);
            put_range(f, s, &p);
            fputs("},\"message\":", f);
            put_str(f, n->message);
            fputc('}', f);
        }
        fputc(']', f);
    }
    fputc('}', f);
}

static bool same_view(const kn_view *a, const kn_view *b)
{
    return a->rule == b->rule && a->pos.line == b->pos.line && a->pos.col == b->pos.col &&
           strcmp(a->message, b->message) == 0 && strcmp(a->pos.file, b->pos.file) == 0;
}

/* The diagnostics of one URI being written. */
typedef struct out_list {
    char *uri;
    char *buf;
    size_t len, n;
    FILE *f;
} out_list;

/* Each list is allocated on its own: its memory stream keeps the
 * addresses of buf and len. */
static out_list *list_for(out_list ***lists, size_t *n, const char *uri)
{
    for (size_t i = 0; i < *n; i++) {
        if (strcmp((*lists)[i]->uri, uri) == 0) {
            return (*lists)[i];
        }
    }
    out_list **grown = realloc(*lists, (*n + 1) * sizeof **lists);
    if (!grown) {
        fputs("knowable lsp: out of memory\n", stderr);
        exit(KN_EXIT_FAILED);
    }
    *lists = grown;
    out_list *l = kn_lsp_xmalloc(sizeof *l);
    memset(l, 0, sizeof *l);
    grown[(*n)++] = l;
    l->uri = kn_lsp_xstrndup(uri, strlen(uri));
    l->f = open_memstream(&l->buf, &l->len);
    if (!l->f) {
        fputs("knowable lsp: out of memory\n", stderr);
        exit(KN_EXIT_FAILED);
    }
    return l;
}

/* A URI's last list of diagnostics, as sent. */
typedef struct kn_sent {
    char *uri;
    char *buf;
    size_t len;
} kn_sent;

static const kn_sent *sent_for(const kn_server *s, const char *uri)
{
    for (size_t i = 0; i < s->n_sent; i++) {
        if (strcmp(s->sent[i].uri, uri) == 0) {
            return &s->sent[i];
        }
    }
    return NULL;
}

/* Publishes the findings of every open schema, grouped by the file they
 * point into; a URI that had findings and has none now gets an empty list.
 * A list the client has already, byte for byte, is not sent again (a
 * change to one schema leaves the others' findings as they were), except
 * for the document whose change is being answered. */
static void publish(kn_server *s)
{
    out_list **lists = NULL;
    size_t n_lists = 0;
    for (kn_doc *d = s->docs; d; d = d->next) {
        if (d->path && !d->unit) {
            list_for(&lists, &n_lists, d->uri); /* a register: cleared unless a schema speaks */
        }
    }
    for (kn_doc *d = s->docs; d; d = d->next) {
        if (d->unit) {
            list_for(&lists, &n_lists, d->uri);
        }
    }
    for (kn_doc *d = s->docs; d; d = d->next) {
        for (size_t i = 0; i < d->n_view; i++) {
            const kn_view *v = &d->view[i];
            if (!v->pos.file) {
                continue;
            }
            /* Two open schemas including one register say the same thing
             * once (a schema's findings in its own file cannot repeat
             * another's, so only those elsewhere are compared). */
            bool dup = false;
            bool elsewhere = strcmp(v->pos.file, d->path) != 0;
            for (kn_doc *e = s->docs; elsewhere && e != d && !dup; e = e->next) {
                for (size_t j = 0; j < e->n_view && !dup; j++) {
                    dup = same_view(v, &e->view[j]);
                }
            }
            if (dup) {
                continue;
            }
            char *uri = kn_file_uri(s, v->pos.file);
            out_list *l = list_for(&lists, &n_lists, uri);
            free(uri);
            if (l->n++) {
                fputc(',', l->f);
            }
            put_diagnostic(l->f, s, v);
        }
    }
    /* Clear what was published before and is not covered now. */
    for (size_t i = 0; i < s->n_sent; i++) {
        list_for(&lists, &n_lists, s->sent[i].uri);
    }
    kn_sent *sent = kn_lsp_xmalloc((n_lists + 1) * sizeof *sent);
    size_t n_sent = 0;
    for (size_t i = 0; i < n_lists; i++) {
        out_list *l = lists[i];
        if (fclose(l->f) != 0 || !l->buf) {
            fputs("knowable lsp: out of memory while writing diagnostics\n", s->err);
            free(l->uri);
            free(l->buf);
            free(l);
            continue;
        }
        const kn_sent *before = sent_for(s, l->uri);
        bool same = l->n && before && before->len == l->len && memcmp(before->buf, l->buf, l->len) == 0;
        if (same && !(s->trigger && strcmp(s->trigger, l->uri) == 0)) {
            sent[n_sent++] = (kn_sent){l->uri, l->buf, l->len};
            free(l);
            continue;
        }
        /* The envelope around the list, which is written as it is. */
        char *head = NULL;
        size_t len = 0;
        FILE *m = open_memstream(&head, &len);
        bool ok = m != NULL;
        if (ok) {
            fputs("{\"jsonrpc\":\"2.0\",\"method\":\"textDocument/publishDiagnostics\",\"params\":{\"uri\":",
                  m);
            put_str(m, l->uri);
            fputs(",\"diagnostics\":[", m);
        }
        bool written = m && fclose(m) == 0 && ok && head;
        if (written) {
            const char *parts[] = {head, l->buf, "]}}"};
            const size_t lens[] = {len, l->len, 3};
            kn_rpc_write_parts(s->out, parts, lens, 3);
        } else {
            fputs("knowable lsp: out of memory while writing diagnostics\n", s->err);
        }
        if (l->n && written) {
            sent[n_sent++] = (kn_sent){l->uri, l->buf, l->len};
        } else {
            free(l->uri);
            free(l->buf);
        }
        free(head);
        free(l);
    }
    free(lists);
    for (size_t i = 0; i < s->n_sent; i++) {
        free(s->sent[i].uri);
        free(s->sent[i].buf);
    }
    free(s->sent);
    s->sent = sent;
    s->n_sent = n_sent;
}

static void analyse_all(kn_server *s)
{
    for (kn_doc *d = s->docs; d; d = d->next) {
        analyse(s, d);
    }
    publish(s);
}

/* Whether the last analysis of d read the file whose real path is real. */
static bool reads(const kn_doc *d, const char *real)
{
    for (const kn_dep *dep = d->deps; dep && real; dep = dep->next) {
        if (strcmp(dep->real, real) == 0) {
            return true;
        }
    }
    return false;
}

/* After a change of one document: it is analysed again, and so is every
 * schema that read it and every document without an analysis (a register
 * returns at once); the other schemas' findings still hold.  Then every
 * URI is published as usual. */
static void analyse_changed(kn_server *s, kn_doc *changed)
{
    for (kn_doc *d = s->docs; d; d = d->next) {
        if (d == changed || !d->run || reads(d, changed->real)) {
            analyse(s, d);
        }
    }
    publish(s);
}

/* --- Requests and notifications ------------------------------------------ */

static json_t *capabilities(void)
{
    json_t *caps = json_pack("{s:s,s:{s:b,s:i,s:{s:b}},s:b,s:b,s:{s:[s,s,s,s,s],s:b},s:{s:[s]}}",
                             "positionEncoding", "utf-16", "textDocumentSync", "openClose", 1, "change", 1,
                             "save", "includeText", 0, "hoverProvider", 1, "definitionProvider", 1,
                             "completionProvider", "triggerCharacters", " ", ":", "[", ",", "{",
                             "resolveProvider", 0, "codeActionProvider", "codeActionKinds", "quickfix");
    return json_pack("{s:o,s:{s:s,s:s}}", "capabilities", caps, "serverInfo", "name", "knowable", "version",
                     KN_VERSION_STRING);
}

/* A JSON string used as a name (a method, a URI, the version): NULL when
 * v is not a string or holds a NUL (\u0000), which a C string would cut. */
static const char *name_of(json_t *v)
{
    const char *str = json_string_value(v);
    return str && strlen(str) == json_string_length(v) ? str : NULL;
}

/* The text document's URI of params. */
static const char *uri_of(json_t *params)
{
    return name_of(json_object_get(json_object_get(params, "textDocument"), "uri"));
}

/* The open document params name. */
static kn_doc *doc_of(kn_server *s, json_t *params)
{
    const char *uri = uri_of(params);
    return uri ? kn_doc_named(s, uri) : NULL;
}

/* A Position: line and character are LSP uintegers (0 to 2^31 - 1); one
 * past the end of its line or of the text is valid and stands for that end
 * (clients send 2^31 - 1 for "the end of the line"). */
static bool position_of(json_t *pos, long *line, long *character)
{
    json_t *l = json_object_get(pos, "line"), *c = json_object_get(pos, "character");
    if (!json_is_integer(l) || !json_is_integer(c) || json_integer_value(l) < 0 ||
        json_integer_value(c) < 0 || json_integer_value(l) > INT32_MAX || json_integer_value(c) > INT32_MAX) {
        return false;
    }
    *line = (long)json_integer_value(l);
    *character = (long)json_integer_value(c);
    return true;
}

/* The bytes a list of range changes may copy in all: each change rebuilds
 * the text, so a list of many small changes to a large text costs their
 * number times its length (a 32 MiB text and a 32 MiB list of 300,000
 * one-character changes would take hours).  Editors send the full text,
 * the sync we ask for; a list over the budget (64 MiB: some 30 ms) is
 * refused whole. */
#define KN_LSP_EDIT_BUDGET ((size_t)64 << 20)

/* didChange: full text (the sync we ask for), or ranges applied in order.
 * A list with a malformed change is refused whole, before any change of it
 * is applied: the text stays the one the last analysis saw. */
static bool apply_changes(kn_doc *d, json_t *changes)
{
    if (!json_is_array(changes)) {
        return false;
    }
    size_t i;
    json_t *ch;
    json_array_foreach(changes, i, ch)
    {
        json_t *range = json_object_get(ch, "range");
        long l, c;
        if (!json_is_string(json_object_get(ch, "text")) ||
            (range && (!position_of(json_object_get(range, "start"), &l, &c) ||
                       !position_of(json_object_get(range, "end"), &l, &c)))) {
            return false;
        }
    }
    /* A change can still fail below (the text would outgrow the bound):
     * then the document goes back to its text before the list, so that it
     * never holds part of an edit the client made whole. */
    char *before = kn_lsp_xstrndup(d->text, d->len);
    size_t before_len = d->len, work = 0;
    bool ok = true;
    json_array_foreach(changes, i, ch)
    {
        json_t *text = json_object_get(ch, "text");
        json_t *range = json_object_get(ch, "range");
        if (!range) {
            kn_doc_set_text(d, json_string_value(text), json_string_length(text));
            continue;
        }
        long l0, c0, l1, c1;
        position_of(json_object_get(range, "start"), &l0, &c0);
        position_of(json_object_get(range, "end"), &l1, &c1);
        size_t a = kn_doc_offset(d, l0, c0), b = kn_doc_offset(d, l1, c1);
        if (b < a) {
            size_t t = a;
            a = b;
            b = t;
        }
        size_t tl = json_string_length(text), n = d->len - (b - a) + tl;
        work += n;
        if (n > KN_RPC_MAX_BODY || work > KN_LSP_EDIT_BUDGET) {
            ok = false;
            break;
        }
        char *buf = kn_lsp_xmalloc(n + 1);
        memcpy(buf, d->text, a);
        memcpy(buf + a, json_string_value(text), tl);
        memcpy(buf + a + tl, d->text + b, d->len - b);
        kn_doc_set_text(d, buf, n);
        free(buf);
    }
    if (!ok) {
        kn_doc_set_text(d, before, before_len);
    }
    free(before);
    return ok;
}

/* A request about a position in an open document. */
typedef json_t *(*at_fn)(kn_server *, kn_doc *, long, long);

static void at_position(kn_server *s, json_t *id, json_t *params, at_fn fn)
{
    kn_doc *d = doc_of(s, params);
    long line, character;
    if (!uri_of(params) || !position_of(json_object_get(params, "position"), &line, &character)) {
        reply_error(s, id, INVALID_PARAMS,
                    "a textDocument {uri} and a position {line, character} of uintegers are needed");
        return;
    }
    reply(s, id, d ? fn(s, d, line, character) : NULL);
}

/* One message.  Returns -1 to go on, else the exit status. */
static int handle(kn_server *s, json_t *msg)
{
    if (!json_is_object(msg)) {
        reply_error(s, NULL, INVALID_REQUEST, "a message must be a JSON object");
        return -1;
    }
    json_t *id = json_object_get(msg, "id");
    json_t *m = json_object_get(msg, "method");
    json_t *params = json_object_get(msg, "params");
    if (id && !json_is_integer(id) && !json_is_string(id)) {
        reply_error(s, NULL, INVALID_REQUEST, "an id must be an integer or a string");
        return -1;
    }
    bool response = !m && id && (json_object_get(msg, "result") || json_object_get(msg, "error"));
    const char *version = name_of(json_object_get(msg, "jsonrpc"));
    if (!response && !(version && strcmp(version, "2.0") == 0)) {
        /* JSON-RPC 2.0: "jsonrpc" MUST be exactly "2.0"; a message without
         * it is not a valid request or notification, and is not acted on. */
        reply_error(s, id, INVALID_REQUEST, "a message needs \"jsonrpc\": \"2.0\"");
        return -1;
    }
    if (!json_is_string(m)) {
        if (!response) {
            reply_error(s, id, INVALID_REQUEST, "a request needs a method");
        }
        return -1; /* a response to a request of ours: none is sent */
    }
    const char *method = name_of(m);
    if (!method) {
        if (id) {
            reply_error(s, id, METHOD_NOT_FOUND, "method not found");
        }
        return -1;
    }
    if (strcmp(method, "exit") == 0) {
        return s->shut_down ? 0 : 1;
    }
    if (!s->initialized) {
        if (strcmp(method, "initialize") == 0 && id) {
            s->initialized = true;
            reply(s, id, capabilities());
        } else if (id) {
            reply_error(s, id, SERVER_NOT_INITIALIZED,
                        "the server is not initialized: send initialize first");
        }
        return -1;
    }
    if (s->shut_down) {
        if (id) {
            reply_error(s, id, INVALID_REQUEST, "the server is shut down: only exit is accepted");
        }
        return -1;
    }
    if (id) {
        if (strcmp(method, "initialize") == 0) {
            reply_error(s, id, INVALID_REQUEST, "the server is already initialized");
        } else if (strcmp(method, "shutdown") == 0) {
            s->shut_down = true;
            reply(s, id, NULL);
        } else if (strcmp(method, "textDocument/hover") == 0) {
            at_position(s, id, params, kn_lsp_hover);
        } else if (strcmp(method, "textDocument/definition") == 0) {
            at_position(s, id, params, kn_lsp_definition);
        } else if (strcmp(method, "textDocument/completion") == 0) {
            at_position(s, id, params, kn_lsp_completion);
        } else if (strcmp(method, "textDocument/codeAction") == 0) {
            kn_doc *d = doc_of(s, params);
            json_t *range = json_object_get(params, "range");
            long l0, c0, l1, c1;
            if (!uri_of(params) || !position_of(json_object_get(range, "start"), &l0, &c0) ||
                !position_of(json_object_get(range, "end"), &l1, &c1)) {
                reply_error(s, id, INVALID_PARAMS,
                            "a textDocument {uri} and a range {start, end} of positions are needed");
            } else {
                reply(s, id, d ? kn_lsp_code_actions(s, d, l0, c0, l1, c1) : json_array());
            }
        } else {
            reply_error(s, id, METHOD_NOT_FOUND, "method not found");
        }
        return -1;
    }
    /* Notifications: unknown ones (and "$/" ones) are ignored, as LSP asks. */
    if (strcmp(method, "textDocument/didOpen") == 0) {
        json_t *td = json_object_get(params, "textDocument");
        const char *uri = name_of(json_object_get(td, "uri"));
        json_t *text = json_object_get(td, "text");
        if (uri && json_is_string(text)) {
            s->trigger = kn_doc_open(s, uri, json_string_value(text), json_string_length(text))->uri;
            analyse_all(s);
        }
    } else if (strcmp(method, "textDocument/didChange") == 0) {
        kn_doc *d = doc_of(s, params);
        if (d && apply_changes(d, json_object_get(params, "contentChanges"))) {
            s->trigger = d->uri;
            analyse_changed(s, d);
        }
    } else if (strcmp(method, "textDocument/didSave") == 0) {
        kn_doc *d = doc_of(s, params);
        json_t *text = json_object_get(params, "text");
        if (d && json_is_string(text)) {
            kn_doc_set_text(d, json_string_value(text), json_string_length(text));
        }
        s->trigger = d ? d->uri : NULL;
        analyse_all(s);
    } else if (strcmp(method, "workspace/didChangeWatchedFiles") == 0) {
        /* A file changed on disk (a register, a rulebook an open schema
         * reads): every open schema is judged again; only the lists that
         * changed are sent. */
        if (json_array_size(json_object_get(params, "changes"))) {
            analyse_all(s);
        }
    } else if (strcmp(method, "textDocument/didClose") == 0) {
        kn_doc *d = doc_of(s, params);
        if (d) {
            kn_doc_close(s, d);
            analyse_all(s);
        }
    }
    s->trigger = NULL;
    return -1;
}

kn_status kn_lsp(const kn_options *o, FILE *in, FILE *out, FILE *err)
{
    kn_server s = {0};
    s.opt = o;
    s.out = out;
    s.err = err;
    int status = 1; /* the stream ended without exit */
    for (;;) {
        char *body = NULL;
        size_t len = 0;
        kn_rpc_result r = kn_rpc_read(in, KN_RPC_MAX_BODY, &body, &len);
        if (r == KN_RPC_EOF) {
            status = s.shut_down ? 0 : 1;
            break;
        }
        if (r == KN_RPC_BAD_HEADER) {
            reply_error(&s, NULL, PARSE_ERROR,
                        "a message needs one header 'Content-Length: N' and an empty line");
            continue;
        }
        if (r == KN_RPC_TOO_LARGE) {
            reply_error(&s, NULL, INVALID_REQUEST,
                        "the message is larger than 32 MiB, the most the server reads");
            if (!kn_rpc_skip(in, len)) {
                status = s.shut_down ? 0 : 1;
                break;
            }
            continue;
        }
        /* A UTF-8 byte order mark is passed over (RFC 8259 allows it);
         * a string may hold \u0000 (a document's text is taken by length);
         * an integer beyond 64 bits is valid JSON and is read as a real,
         * which no field of ours accepts where it wants an integer. */
        size_t skip = len >= 3 && memcmp(body, "\xEF\xBB\xBF", 3) == 0 ? 3 : 0;
        json_error_t jerr;
        json_t *msg = json_loadb(body + skip, len - skip, JSON_ALLOW_NUL, &jerr);
        if (!msg && json_error_code(&jerr) == json_error_numeric_overflow) {
            msg = json_loadb(body + skip, len - skip, JSON_ALLOW_NUL | JSON_DECODE_INT_AS_REAL, &jerr);
            /* The id read as a real is an integer again when it is one. */
            json_t *id = json_object_get(msg, "id");
            double v = json_real_value(id);
            if (json_is_real(id) && v >= -9.0e15 && v <= 9.0e15 && v == (double)(json_int_t)v) {
                json_object_set_new(msg, "id", json_integer((json_int_t)v));
            }
        }
        free(body);
        if (!msg) {
            reply_error(&s, NULL, PARSE_ERROR, "the message is not valid JSON");
            continue;
        }
        int rc = handle(&s, msg);
        json_decref(msg);
        kn_lsp_forget_files(&s);
        if (rc >= 0) {
            status = rc;
            break;
        }
    }
    while (s.docs) {
        kn_doc_close(&s, s.docs);
    }
    for (size_t i = 0; i < s.n_sent; i++) {
        free(s.sent[i].uri);
        free(s.sent[i].buf);
    }
    free(s.sent);
    return (kn_status)status;
}

/* tree.c - drives libyaml's event parser and builds a tree of positioned
 * nodes (tree.h).  Hands the root on to the schema and rulebook loaders.
 *
 * Limits (SPEC §9) are enforced while parsing: file size before libyaml
 * sees a byte, depth and scalar length at each event, and node count as the
 * size the document would have with every alias expanded, accumulated
 * bottom-up so that an alias bomb is refused at the first level that
 * exceeds the cap, without expanding anything. */
#include "tree.h"

#include <errno.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <yaml.h>

#include "../util/hash.h"
#include "../util/names.h"
#include "../util/text.h"

void kn_yaml_limits_default(kn_yaml_limits *l)
{
    l->max_file_bytes = 8u << 20;
    l->max_depth = 64;
    l->max_nodes = 1000000;
    l->max_scalar_bytes = 64u << 10;
}

/* Byte offsets of line starts, so libyaml's marks (lines and columns in
 * characters) become byte offsets. */
typedef struct lines {
    size_t *start;
    size_t n;
} lines;

typedef struct frame {
    kn_node *node;
    size_t first;       /* index of the first child in the child stack */
    uint64_t weight;    /* expanded size so far */
    const char *anchor; /* the collection's anchor, or NULL */
} frame;

/* An anchored node and its expanded size; a later anchor of the same name
 * replaces the earlier one, as YAML says. */
typedef struct anchor {
    kn_node *node;
    uint64_t weight;
} anchor;

typedef struct loader {
    kn_arena *arena;
    const kn_yaml_reporter *rep;
    const char *display;
    const char *buf;
    size_t len;
    const kn_yaml_limits *lim;
    lines ln;
    /* The lines an editor counts ("\n", "\r\n", a lone "\r"), made only
     * when the file holds NEL, LS or PS, which libyaml (YAML 1.1) counts
     * as breaks and editors do not: positions are then given in these. */
    lines eln;
    kn_vec *frames;   /* frame */
    kn_vec *children; /* kn_node * */
    kn_vec *weights;  /* uint64_t, parallel to children */
    kn_name_map *anchors; /* name -> anchor */
    kn_node *root;
    bool failed;
    size_t documents;
    size_t aliases; /* alias events seen so far */
    /* The last mark turned into an offset: marks arrive in document order,
     * so walking on from it keeps a long line from costing its length for
     * every node on it. */
    size_t last_line, last_col, last_off;
    bool ascii; /* no byte >= 0x80: libyaml's mark index is the byte offset */
} loader;

/* The byte length of a line break at p that libyaml counts as one: "\r\n",
 * "\n", a lone "\r", and (when unicode) NEL, LS and PS (U+0085, U+2028,
 * U+2029); 0 when there is none. */
static size_t break_at(const char *p, const char *end, bool unicode)
{
    if (*p == '\n') {
        return 1;
    }
    if (*p == '\r') {
        return p + 1 < end && p[1] == '\n' ? 2 : 1;
    }
    if (!unicode) {
        return 0;
    }
    if (end - p >= 2 && memcmp(p, "\xC2\x85", 2) == 0) {
        return 2;
    }
    if (end - p >= 3 && (memcmp(p, "\xE2\x80\xA8", 3) == 0 || memcmp(p, "\xE2\x80\xA9", 3) == 0)) {
        return 3;
    }
    return 0;
}

/* Whether the n bytes of seq occur in buf (memchr on the first byte). */
static bool holds(const char *buf, size_t len, const char *seq, size_t n)
{
    const char *end = buf + len;
    for (const char *p = buf; (size_t)(end - p) >= n && (p = memchr(p, seq[0], (size_t)(end - p))) != NULL;
         p++) {
        if ((size_t)(end - p) >= n && memcmp(p, seq, n) == 0) {
            return true;
        }
    }
    return false;
}

/* Indexes the line starts after every break break_at finds. */
static void index_breaks(loader *ld, lines *ix, bool unicode)
{
    const char *end = ld->buf + ld->len;
    size_t n = 1;
    for (const char *p = ld->buf; p < end;) {
        size_t b = break_at(p, end, unicode);
        n += b > 0;
        p += b ? b : 1;
    }
    ix->start = kn_alloc_array(ld->arena, n, sizeof(size_t));
    ix->n = n;
    size_t k = 0;
    ix->start[k++] = 0;
    for (const char *p = ld->buf; p < end;) {
        size_t b = break_at(p, end, unicode);
        p += b ? b : 1;
        if (b) {
            ix->start[k++] = (size_t)(p - ld->buf);
        }
    }
}

static void index_lines(loader *ld)
{
    /* libyaml's line numbers (mark.line) count every break break_at knows;
     * a file with breaks other than "\n" is indexed byte by byte (ld->ascii
     * is known: an ASCII file has no NEL, LS or PS). */
    const char *end = ld->buf + ld->len;
    bool unicode_breaks =
        !ld->ascii && (holds(ld->buf, ld->len, "\xC2\x85", 2) || holds(ld->buf, ld->len, "\xE2\x80\xA8", 3) ||
                       holds(ld->buf, ld->len, "\xE2\x80\xA9", 3));
    if (unicode_breaks) {
        index_breaks(ld, &ld->ln, true);
        index_breaks(ld, &ld->eln, false);
        return;
    }
    if (memchr(ld->buf, '\r', ld->len)) {
        index_breaks(ld, &ld->ln, false);
        return;
    }
    /* memchr rather than a loop over bytes: this reads the whole file twice. */
    size_t n = 1;
    for (const char *p = ld->buf; p < end && (p = memchr(p, '\n', (size_t)(end - p))) != NULL; p++) {
        n++;
    }
    ld->ln.start = kn_alloc_array(ld->arena, n, sizeof(size_t));
    ld->ln.n = n;
    size_t k = 0;
    ld->ln.start[k++] = 0;
    for (const char *p = ld->buf; p < end && (p = memchr(p, '\n', (size_t)(end - p))) != NULL; p++) {
        ld->ln.start[k++] = (size_t)(p - ld->buf) + 1;
    }
}

/* True when no byte of buf has its high bit set (eight bytes at a time). */
static bool all_ascii(const char *buf, size_t len)
{
    size_t i = 0;
    for (; i + 8 <= len; i += 8) {
        uint64_t w;
        memcpy(&w, buf + i, 8);
        if (w & 0x8080808080808080ull) {
            return false;
        }
    }
    for (; i < len; i++) {
        if ((unsigned char)buf[i] >= 0x80) {
            return false;
        }
    }
    return true;
}

/* Position of a byte offset (reader errors carry only an offset). */
static kn_pos offset_pos(const loader *ld, size_t off)
{
    kn_pos p = {ld->display, 1, 1, off};
    if (off > ld->len) {
        off = ld->len;
    }
    const lines *ix = ld->eln.n ? &ld->eln : &ld->ln;
    size_t lo = 0, hi = ix->n;
    while (hi - lo > 1) {
        size_t mid = (lo + hi) / 2;
        if (ix->start[mid] <= off) {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    p.line = (uint32_t)(lo + 1);
    uint32_t col = 1;
    for (size_t i = ix->start[lo]; i < off; i++) {
        if (((unsigned char)ld->buf[i] & 0xc0) != 0x80) {
            col++;
        }
    }
    p.col = col;
    return p;
}

/* The one place where libyaml's 0-based marks become 1-based positions. */
static kn_pos mark_pos(loader *ld, yaml_mark_t m)
{
    kn_pos p;
    p.file = ld->display;
    p.line = (uint32_t)(m.line + 1);
    p.col = (uint32_t)(m.column + 1);
    if (ld->ascii) {
        /* libyaml counts characters in mark.index; in ASCII they are bytes. */
        p.offset = m.index < ld->len ? m.index : ld->len;
        return p;
    }
    size_t off = m.line < ld->ln.n ? ld->ln.start[m.line] : ld->len;
    size_t c = 0;
    if (m.line == ld->last_line && m.column >= ld->last_col && ld->last_off > off) {
        c = ld->last_col;
        off = ld->last_off;
    }
    for (; c < m.column && off < ld->len && ld->buf[off] != '\n'; c++) {
        unsigned char b = (unsigned char)ld->buf[off++];
        if (b >= 0xc0) {
            while (off < ld->len && ((unsigned char)ld->buf[off] & 0xc0) == 0x80) {
                off++;
            }
        }
    }
    ld->last_line = m.line;
    ld->last_col = c;
    ld->last_off = off;
    if (ld->eln.n) {
        return offset_pos(ld, off); /* an editor's line and column */
    }
    p.offset = off;
    return p;
}

__attribute__((format(printf, 3, 4)))
static void fail(loader *ld, const kn_pos *pos, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    char *msg = kn_vprintf(ld->arena, fmt, ap);
    va_end(ap);
    ld->rep->problem(ld->rep->ctx, KN_YAML_SYNTAX, pos, NULL, msg, NULL, NULL);
    ld->failed = true;
}

static kn_node *new_node(loader *ld, kn_node_kind kind, yaml_mark_t m, const yaml_char_t *tag)
{
    kn_node *n = kn_alloc(ld->arena, sizeof *n);
    n->kind = kind;
    n->pos = mark_pos(ld, m);
    n->raw = ld->buf + n->pos.offset;
    n->raw_len = ld->len - n->pos.offset;
    if (tag) {
        n->tag = kn_strdup(ld->arena, (const char *)tag);
    }
    return n;
}

/* Adds a finished node (weight = its expanded size) to the open collection. */
static void add_child(loader *ld, kn_node *n, uint64_t weight, const kn_pos *at)
{
    if (ld->frames->len == 0) {
        if (ld->root) {
            return;
        }
        ld->root = n;
        return;
    }
    frame *f = &KN_VEC_AT(ld->frames, frame, ld->frames->len - 1);
    f->weight += weight;
    if (f->weight > ld->lim->max_nodes) {
        if (ld->aliases) {
            fail(ld, at,
                 "this document would hold more than %zu nodes with its aliases expanded "
                 "(an alias bomb?); it is refused without being expanded", ld->lim->max_nodes);
        } else {
            fail(ld, at, "this document holds more than %zu nodes, the most a schema may have",
                 ld->lim->max_nodes);
        }
        return;
    }
    kn_vec_push(ld->children, &n);
    kn_vec_push(ld->weights, &weight);
}

static void open_collection(loader *ld, kn_node *n, const yaml_char_t *anchor_name)
{
    if (ld->frames->len >= ld->lim->max_depth) {
        fail(ld, &n->pos, "nesting deeper than %zu levels, the most a schema may have",
             ld->lim->max_depth);
        return;
    }
    frame f = {n, ld->children->len, 1, NULL};
    if (anchor_name) {
        f.anchor = kn_strdup(ld->arena, (const char *)anchor_name);
    }
    kn_vec_push(ld->frames, &f);
}

static void set_anchor(loader *ld, const char *name, kn_node *n, uint64_t weight)
{
    anchor *an = kn_names_get(ld->anchors, name);
    if (!an) {
        an = kn_alloc(ld->arena, sizeof *an);
        kn_names_put(ld->anchors, kn_strdup(ld->arena, name), an);
    }
    an->node = n;
    an->weight = weight;
}

static bool same_key(const kn_node *a, const kn_node *b)
{
    return a->u.scalar.len == b->u.scalar.len && memcmp(a->u.scalar.text, b->u.scalar.text, a->u.scalar.len) == 0;
}

static void check_duplicates(loader *ld, kn_node *map)
{
    size_t n = map->u.map.n;
    kn_pair *pairs = map->u.map.pairs;
    /* A large mapping (the columns) gets an open-addressing set, at most
     * half full, of each key's pair number and keyed hash (kn_hash_keyed:
     * keys crafted to share a slot cannot be, so a lookup stays short). */
    typedef struct {
        uint64_t hash;
        size_t pair; /* its number + 1; 0: empty */
    } entry;
    size_t cap = 0;
    entry *set = NULL;
    if (n > 8) {
        cap = 16;
        while (cap < 2 * n) {
            cap *= 2;
        }
        set = kn_alloc_array(ld->arena, cap, sizeof *set);
    }
    for (size_t i = 0; i < n; i++) {
        kn_node *k = pairs[i].key;
        if (k->kind != KN_NODE_SCALAR) {
            continue;
        }
        kn_node *first = NULL;
        if (set) {
            uint64_t hash = kn_hash_keyed(k->u.scalar.text, k->u.scalar.len);
            size_t h = (size_t)hash & (cap - 1);
            while (set[h].pair && !(set[h].hash == hash && same_key(pairs[set[h].pair - 1].key, k))) {
                h = (h + 1) & (cap - 1);
            }
            if (set[h].pair) {
                first = pairs[set[h].pair - 1].key;
            } else {
                set[h].hash = hash;
                set[h].pair = i + 1;
            }
        } else {
            for (size_t j = 0; j < i; j++) {
                kn_node *o = pairs[j].key;
                if (o->kind == KN_NODE_SCALAR && same_key(o, k)) {
                    first = o;
                    break;
                }
            }
        }
        if (first) {
            char *name = kn_escape_term(ld->arena, k->u.scalar.text, k->u.scalar.len);
            ld->rep->problem(ld->rep->ctx, KN_YAML_DUPLICATE_KEY, &k->pos, name,
                             kn_printf(ld->arena, "key '%s' appears twice in this mapping; "
                                                  "YAML keeps only one of the two values", name),
                             &first->pos, kn_printf(ld->arena, "'%s' is first given here", name));
        }
    }
}

static void close_collection(loader *ld)
{
    frame f = KN_VEC_AT(ld->frames, frame, ld->frames->len - 1);
    ld->frames->len--;
    kn_node *n = f.node;
    size_t count = ld->children->len - f.first;
    /* Before any child has been pushed the stack has no storage at all. */
    kn_node **kids = count ? &KN_VEC_AT(ld->children, kn_node *, f.first) : NULL;
    if (n->kind == KN_NODE_SEQ) {
        n->u.seq.items = kn_alloc_array(ld->arena, count, sizeof(kn_node *));
        if (count) {
            memcpy(n->u.seq.items, kids, count * sizeof(kn_node *));
        }
        n->u.seq.n = count;
    } else {
        size_t pairs = count / 2;
        n->u.map.pairs = kn_alloc_array(ld->arena, pairs, sizeof(kn_pair));
        for (size_t i = 0; i < pairs; i++) {
            n->u.map.pairs[i].key = kids[2 * i];
            n->u.map.pairs[i].value = kids[2 * i + 1];
        }
        n->u.map.n = pairs;
        check_duplicates(ld, n);
    }
    ld->children->len = f.first;
    ld->weights->len = f.first;
    /* The node is complete: aliases may now refer to it. */
    if (f.anchor) {
        set_anchor(ld, f.anchor, n, f.weight);
    }
    add_child(ld, n, f.weight, &n->pos);
}

static void on_scalar(loader *ld, const yaml_event_t *e)
{
    kn_node *n = new_node(ld, KN_NODE_SCALAR, e->start_mark, e->data.scalar.tag);
    if (e->data.scalar.length > ld->lim->max_scalar_bytes) {
        fail(ld, &n->pos, "a scalar longer than %zu bytes, the most a schema value may hold",
             ld->lim->max_scalar_bytes);
        return;
    }
    n->u.scalar.text = kn_strndup(ld->arena, (const char *)e->data.scalar.value, e->data.scalar.length);
    n->u.scalar.len = e->data.scalar.length;
    n->plain = e->data.scalar.style == YAML_PLAIN_SCALAR_STYLE;
    /* Only the \0 escape of a double-quoted scalar can put a NUL in a
     * value: libyaml refuses the byte itself in the input. */
    if (e->data.scalar.style == YAML_DOUBLE_QUOTED_SCALAR_STYLE && memchr(n->u.scalar.text, '\0', n->u.scalar.len)) {
        fail(ld, &n->pos, "%s", "a scalar holds a NUL character");
        return;
    }
    if (e->data.scalar.anchor) {
        set_anchor(ld, (const char *)e->data.scalar.anchor, n, 1);
    }
    add_child(ld, n, 1, &n->pos);
}

static void on_alias(loader *ld, const yaml_event_t *e)
{
    const char *name = (const char *)e->data.alias.anchor;
    kn_pos pos = mark_pos(ld, e->start_mark);
    ld->aliases++;
    const char *shown = kn_escape_term(ld->arena, name, strlen(name));
    for (size_t i = 0; i < ld->frames->len; i++) {
        const char *open = KN_VEC_AT(ld->frames, frame, i).anchor;
        if (open && strcmp(open, name) == 0) {
            fail(ld, &pos, "alias '*%s' refers to a collection that contains it", shown);
            return;
        }
    }
    anchor *an = kn_names_get(ld->anchors, name);
    if (!an) {
        fail(ld, &pos, "alias '*%s' has no anchor before it", shown);
        return;
    }
    add_child(ld, an->node, an->weight, &pos);
}

static const char *error_kind(yaml_error_type_t t)
{
    switch (t) {
    case YAML_MEMORY_ERROR:
        return "out of memory";
    case YAML_READER_ERROR:
        return "unreadable input";
    case YAML_SCANNER_ERROR:
    case YAML_PARSER_ERROR:
    default:
        return "invalid YAML";
    }
}

static void parser_error(loader *ld, yaml_parser_t *p)
{
    if (p->error == YAML_MEMORY_ERROR) {
        kn_arena_oom(ld->arena);
    }
    kn_pos pos;
    if (p->error == YAML_READER_ERROR) {
        pos = offset_pos(ld, p->problem_offset);
    } else {
        pos = mark_pos(ld, p->problem_mark);
    }
    const char *problem = p->problem ? p->problem : error_kind(p->error);
    const char *msg;
    if (p->error == YAML_READER_ERROR && p->problem_value != -1) {
        msg = kn_printf(ld->arena, "%s: %s (byte 0x%02x)", error_kind(p->error), problem,
                        (unsigned)(p->problem_value & 0xff));
    } else {
        msg = kn_printf(ld->arena, "%s: %s", error_kind(p->error), problem);
    }
    kn_pos cpos = {0};
    const char *context = p->context;
    if (context) {
        cpos = mark_pos(ld, p->context_mark);
    }
    /* A problem on a line that NEL, LS or PS began (a break to YAML 1.1,
     * none to an editor) is shown that break. */
    const char *which = NULL;
    if (ld->eln.n && p->error != YAML_READER_ERROR && p->problem_mark.line > 0 &&
        p->problem_mark.line < ld->ln.n) {
        size_t at = ld->ln.start[p->problem_mark.line];
        if (at >= 2 && memcmp(ld->buf + at - 2, "\xC2\x85", 2) == 0) {
            which = "a next-line character (U+0085)";
            at -= 2;
        } else if (at >= 3 && memcmp(ld->buf + at - 3, "\xE2\x80\xA8", 3) == 0) {
            which = "a line separator (U+2028)";
            at -= 3;
        } else if (at >= 3 && memcmp(ld->buf + at - 3, "\xE2\x80\xA9", 3) == 0) {
            which = "a paragraph separator (U+2029)";
            at -= 3;
        }
        if (which) {
            cpos = offset_pos(ld, at);
            context = kn_printf(ld->arena, "%s here ends a line for YAML 1.1, which knowable reads, though not "
                                           "in most editors", which);
        }
    }
    /* A tab where a token should start is, nearly always, indentation. */
    if (p->error == YAML_SCANNER_ERROR && pos.offset < ld->len && ld->buf[pos.offset] == '\t') {
        cpos = pos;
        context = "a tab: YAML indents with spaces only";
    }
    ld->rep->problem(ld->rep->ctx, KN_YAML_SYNTAX, &pos, NULL, msg, context ? &cpos : NULL, context);
    ld->failed = true;
}

static void release_parser(void *p)
{
    yaml_parser_delete(p);
    free(p);
}

static void release_event(void *p)
{
    yaml_event_delete(p);
}

kn_node *kn_yaml_parse(kn_arena *a, const kn_yaml_reporter *rep, const char *display,
                       const char *buf, size_t len, const kn_yaml_limits *lim)
{
    loader ld = {0};
    ld.arena = a;
    ld.rep = rep;
    ld.display = display;
    ld.buf = buf;
    ld.len = len;
    ld.lim = lim;
    ld.ascii = all_ascii(buf, len);
    index_lines(&ld);
    ld.frames = kn_vec_new(a, sizeof(frame));
    ld.children = kn_vec_new(a, sizeof(kn_node *));
    ld.weights = kn_vec_new(a, sizeof(uint64_t));
    ld.anchors = kn_names_new(a);

    if (len > lim->max_file_bytes) {
        kn_pos p = {display, 1, 1, 0};
        fail(&ld, &p, "the file is larger than %zu bytes, the most a schema may hold",
             lim->max_file_bytes);
        return NULL;
    }

    kn_defer *pd = kn_arena_defer(a, release_parser, NULL);
    kn_defer *ed = kn_arena_defer(a, release_event, NULL);
    yaml_parser_t *parser = kn_xrealloc(a, NULL, sizeof *parser);
    if (!yaml_parser_initialize(parser)) {
        free(parser);
        kn_arena_oom(a);
    }
    pd->ptr = parser;
    yaml_parser_set_input_string(parser, (const unsigned char *)buf, len);
    yaml_event_t event;
    memset(&event, 0, sizeof event);

    bool done = false;
    while (!done && !ld.failed) {
        if (!yaml_parser_parse(parser, &event)) {
            parser_error(&ld, parser);
            break;
        }
        ed->ptr = &event;
        switch (event.type) {
        case YAML_STREAM_END_EVENT:
            done = true;
            break;
        case YAML_DOCUMENT_START_EVENT:
            if (++ld.documents > 1) {
                kn_pos p = mark_pos(&ld, event.start_mark);
                fail(&ld, &p, "%s", "a second YAML document; a schema file holds exactly one");
            }
            break;
        case YAML_SCALAR_EVENT:
            on_scalar(&ld, &event);
            break;
        case YAML_ALIAS_EVENT:
            on_alias(&ld, &event);
            break;
        case YAML_SEQUENCE_START_EVENT:
            open_collection(&ld, new_node(&ld, KN_NODE_SEQ, event.start_mark, event.data.sequence_start.tag),
                            event.data.sequence_start.anchor);
            break;
        case YAML_MAPPING_START_EVENT:
            open_collection(&ld, new_node(&ld, KN_NODE_MAP, event.start_mark, event.data.mapping_start.tag),
                            event.data.mapping_start.anchor);
            break;
        case YAML_SEQUENCE_END_EVENT:
        case YAML_MAPPING_END_EVENT:
            close_collection(&ld);
            break;
        default:
            break;
        }
        ed->ptr = NULL;
        yaml_event_delete(&event);
    }
    kn_defer_run(a, pd);
    if (ld.failed) {
        return NULL;
    }
    if (!ld.root) {
        /* An empty file is an empty (null) document. */
        kn_node *n = kn_alloc(a, sizeof *n);
        n->kind = KN_NODE_SCALAR;
        n->pos = (kn_pos){display, 1, 1, 0};
        n->plain = true;
        n->u.scalar.text = kn_strdup(a, "");
        ld.root = n;
    }
    return ld.root;
}

static void close_file(void *f)
{
    fclose(f);
}

bool kn_read_file(kn_arena *a, const char *path, size_t max, char **out,
                  size_t *len, const char **err)
{
    FILE *f = fopen(path, "rb");
    if (!f) {
        *err = strerror(errno);
        return false;
    }
    kn_defer *d = kn_arena_defer(a, close_file, f);
    struct stat st;
    if (fstat(fileno(f), &st) == 0 && S_ISDIR(st.st_mode)) {
        *err = "is a folder, not a file";
        kn_defer_run(a, d);
        return false;
    }
    size_t cap = 65536, n = 0;
    if (fstat(fileno(f), &st) == 0 && S_ISREG(st.st_mode) && st.st_size > 0) {
        if ((unsigned long long)st.st_size > max) {
            *err = "file too large";
            kn_defer_run(a, d);
            return false;
        }
        /* One byte for the NUL and one so that reading the whole file does
         * not look like running out of room (which would double the buffer). */
        cap = (size_t)st.st_size + 2;
    }
    char *buf = kn_alloc(a, cap);
    for (;;) {
        if (n + 1 >= cap) {
            if (cap > max + 1) {
                *err = "file too large";
                kn_defer_run(a, d);
                return false;
            }
            char *nb = kn_alloc(a, cap * 2);
            memcpy(nb, buf, n);
            buf = nb;
            cap *= 2;
        }
        size_t got = fread(buf + n, 1, cap - 1 - n, f);
        n += got;
        if (got == 0) {
            break;
        }
    }
    bool bad = ferror(f);
    kn_defer_run(a, d);
    if (bad) {
        *err = "read error";
        return false;
    }
    if (n > max) {
        *err = "file too large";
        return false;
    }
    buf[n] = '\0';
    *out = buf;
    *len = n;
    return true;
}

kn_node *kn_yaml_load_file(kn_arena *a, const kn_yaml_reporter *rep, const char *path,
                           const char *display, const kn_yaml_limits *lim)
{
    char *buf;
    size_t len;
    const char *err;
    if (!kn_read_file(a, path, lim->max_file_bytes, &buf, &len, &err)) {
        kn_pos p = {display, 0, 0, 0};
        const char *msg;
        if (strcmp(err, "file too large") == 0) {
            p.line = p.col = 1;
            msg = kn_printf(a, "the file is larger than %zu bytes, the most a schema may hold",
                            lim->max_file_bytes);
        } else {
            msg = kn_printf(a, "cannot read the file: %s", err);
        }
        rep->problem(rep->ctx, KN_YAML_SYNTAX, &p, NULL, msg, NULL, NULL);
        return NULL;
    }
    return kn_yaml_parse(a, rep, display, buf, len, lim);
}

bool kn_node_is_null(const kn_node *n)
{
    if (!n || n->kind != KN_NODE_SCALAR) {
        return false;
    }
    if (n->tag && strcmp(n->tag, "tag:yaml.org,2002:null") == 0) {
        return true;
    }
    if (!n->plain) {
        return false;
    }
    /* By length first: this runs for every value the loader looks at. */
    const char *s = n->u.scalar.text;
    switch (n->u.scalar.len) {
    case 0:
        return true;
    case 1:
        return s[0] == '~';
    case 4:
        return !strcmp(s, "null") || !strcmp(s, "Null") || !strcmp(s, "NULL");
    default:
        return false;
    }
}

bool kn_node_bool(const kn_node *n, bool *out)
{
    if (!n || n->kind != KN_NODE_SCALAR || !n->plain) {
        return false;
    }
    static const char *const yes[] = {"true", "True", "TRUE", "yes", "Yes", "YES", "on", "On", "ON"};
    static const char *const no[] = {"false", "False", "FALSE", "no", "No", "NO", "off", "Off", "OFF"};
    for (size_t i = 0; i < sizeof yes / sizeof *yes; i++) {
        if (!strcmp(n->u.scalar.text, yes[i])) {
            *out = true;
            return true;
        }
        if (!strcmp(n->u.scalar.text, no[i])) {
            *out = false;
            return true;
        }
    }
    return false;
}

bool kn_node_int(const kn_node *n, long long *out)
{
    if (!n || n->kind != KN_NODE_SCALAR || !n->plain || !n->u.scalar.len) {
        return false;
    }
    const char *s = n->u.scalar.text;
    size_t i = (s[0] == '-' || s[0] == '+') ? 1 : 0;
    if (!s[i] || n->u.scalar.len > 19) {
        return false;
    }
    for (size_t j = i; s[j]; j++) {
        if (s[j] < '0' || s[j] > '9') {
            return false;
        }
    }
    errno = 0;
    long long v = strtoll(s, NULL, 10);
    if (errno) {
        return false;
    }
    *out = v;
    return true;
}

bool kn_node_number(const kn_node *n, double *out)
{
    if (!n || n->kind != KN_NODE_SCALAR || !n->plain || !n->u.scalar.len || n->u.scalar.len > 64) {
        return false;
    }
    char *end;
    errno = 0;
    double v = strtod(n->u.scalar.text, &end);
    if (*end || errno || v != v) {
        return false;
    }
    *out = v;
    return true;
}

const char *kn_node_str(const kn_node *n)
{
    return n && n->kind == KN_NODE_SCALAR ? n->u.scalar.text : NULL;
}

kn_node *kn_map_get(const kn_node *n, const char *key)
{
    if (!n || n->kind != KN_NODE_MAP) {
        return NULL;
    }
    for (size_t i = 0; i < n->u.map.n; i++) {
        const kn_node *k = n->u.map.pairs[i].key;
        if (k->kind == KN_NODE_SCALAR && strcmp(k->u.scalar.text, key) == 0) {
            return n->u.map.pairs[i].value;
        }
    }
    return NULL;
}

const char *kn_node_kind_name(const kn_node *n)
{
    if (!n) {
        return "nothing";
    }
    if (kn_node_is_null(n)) {
        return "null";
    }
    switch (n->kind) {
    case KN_NODE_SCALAR:
        return "a scalar";
    case KN_NODE_SEQ:
        return "a list";
    case KN_NODE_MAP:
        return "a mapping";
    }
    return "a value";
}

kn_pos kn_node_char_pos(const kn_node *n, size_t off)
{
    kn_pos p = n->pos;
    if (n->kind != KN_NODE_SCALAR || !n->raw || off > n->u.scalar.len) {
        return p;
    }
    size_t skip = 0;
    if (!n->plain) {
        if (n->raw_len < 1 || (n->raw[0] != '"' && n->raw[0] != '\'')) {
            return p;
        }
        skip = 1;
    }
    if (n->raw_len < skip + n->u.scalar.len ||
        memcmp(n->raw + skip, n->u.scalar.text, n->u.scalar.len) != 0 ||
        memchr(n->u.scalar.text, '\n', n->u.scalar.len)) {
        return p;
    }
    uint32_t col = p.col + (uint32_t)skip;
    for (size_t i = 0; i < off; i++) {
        if (((unsigned char)n->u.scalar.text[i] & 0xc0) != 0x80) {
            col++;
        }
    }
    p.col = col;
    p.offset = p.offset + skip + off;
    return p;
}

/* waivers.c - declares the waivers of a schema's blocks (SPEC §3.8:
 * columns, events, sources, pipeline steps, the split, the prediction) to
 * the sink, each with the stretch of the file its block occupies: the
 * sink's finishing pass applies them (a waiver covers the findings of its
 * rule pointing inside the block's YAML, and for a column also those about
 * the column) and reports waiver-without-reason, waiver-expired and
 * waiver-unused (§4.6). */
#include <stdlib.h>
#include <string.h>

#include "checks.h"

/* A column's stretch of the schema file: [start, end) in bytes. */
typedef struct span {
    size_t start, end;
    kn_column *col;
} span;

static int by_start(const void *pa, const void *pb)
{
    const span *a = pa, *b = pb;
    return a->start < b->start ? -1 : a->start > b->start;
}

static int by_size(const void *pa, const void *pb)
{
    size_t a = *(const size_t *)pa, b = *(const size_t *)pb;
    return a < b ? -1 : a > b;
}

/* The columns' stretches, sorted.  A column runs from its key to the next
 * key of the columns mapping or of the top level, whichever comes first
 * (YAML nodes carry no end position; the next key bounds them). */
static span *column_spans(kn_arena *a, const kn_schema *s, size_t *n_out)
{
    size_t n_root = s->root && s->root->kind == KN_NODE_MAP ? s->root->u.map.n : 0;
    size_t *bounds = kn_alloc_array(a, s->n_columns + n_root + 1, sizeof *bounds);
    span *sp = kn_alloc_array(a, s->n_columns + 1, sizeof *sp);
    size_t nb = 0, n = 0;
    for (size_t i = 0; i < s->n_columns; i++) {
        kn_column *c = s->columns[i];
        if (!c->key || !c->key->pos.file || strcmp(c->key->pos.file, s->path) != 0) {
            continue;
        }
        bounds[nb++] = c->key->pos.offset;
        sp[n].start = c->key->pos.offset;
        sp[n].col = c;
        n++;
    }
    for (size_t i = 0; i < n_root; i++) {
        bounds[nb++] = s->root->u.map.pairs[i].key->pos.offset;
    }
    qsort(bounds, nb, sizeof *bounds, by_size);
    qsort(sp, n, sizeof *sp, by_start);
    for (size_t i = 0; i < n; i++) {
        /* the first bound after the start */
        size_t lo = 0, hi = nb;
        while (lo < hi) {
            size_t mid = lo + (hi - lo) / 2;
            if (bounds[mid] <= sp[i].start) {
                lo = mid + 1;
            } else {
                hi = mid;
            }
        }
        sp[i].end = lo < nb ? bounds[lo] : SIZE_MAX;
    }
    *n_out = n;
    return sp;
}

/* The places where a block of one file can end: the keys of its top
 * level, of its events, sources and columns, and the items of its
 * pipeline (sorted byte offsets). */
typedef struct file_bounds {
    const char *file;
    size_t *at;
    size_t n;
} file_bounds;

static void add_keys(kn_arena *a, kn_vec *v, const kn_node *map)
{
    if (!map || map->kind != KN_NODE_MAP) {
        return;
    }
    for (size_t i = 0; i < map->u.map.n; i++) {
        size_t off = map->u.map.pairs[i].key->pos.offset;
        kn_vec_push(v, &off);
    }
    (void)a;
}

static file_bounds bounds_of(kn_arena *a, const kn_schema_file *f)
{
    file_bounds b = {f->display, NULL, 0};
    kn_vec *v = kn_vec_new(a, sizeof(size_t));
    const kn_node *root = f->root;
    add_keys(a, v, root);
    if (root && root->kind == KN_NODE_MAP) {
        for (size_t i = 0; i < root->u.map.n; i++) {
            const kn_node *k = root->u.map.pairs[i].key, *val = root->u.map.pairs[i].value;
            if (k->kind != KN_NODE_SCALAR) {
                continue;
            }
            if (strcmp(k->u.scalar.text, "events") == 0 || strcmp(k->u.scalar.text, "sources") == 0 ||
                strcmp(k->u.scalar.text, "columns") == 0) {
                add_keys(a, v, val);
            } else if (strcmp(k->u.scalar.text, "pipeline") == 0 && val->kind == KN_NODE_SEQ) {
                for (size_t j = 0; j < val->u.seq.n; j++) {
                    size_t off = val->u.seq.items[j]->pos.offset;
                    kn_vec_push(v, &off);
                }
            }
        }
    }
    b.n = v->len;
    b.at = kn_alloc_array(a, b.n + 1, sizeof(size_t));
    if (b.n) {
        memcpy(b.at, v->data, b.n * sizeof(size_t));
    }
    kn_defer_run(a, v->defer);
    qsort(b.at, b.n, sizeof(size_t), by_size);
    return b;
}

/* The end of the block starting at start in file: the first bound after it. */
static size_t block_end(const file_bounds *fb, size_t n_files, const char *file, size_t start)
{
    for (size_t i = 0; i < n_files; i++) {
        if (!fb[i].file || strcmp(fb[i].file, file) != 0) {
            continue;
        }
        size_t lo = 0, hi = fb[i].n;
        while (lo < hi) {
            size_t mid = lo + (hi - lo) / 2;
            if (fb[i].at[mid] <= start) {
                lo = mid + 1;
            } else {
                hi = mid;
            }
        }
        return lo < fb[i].n ? fb[i].at[lo] : SIZE_MAX;
    }
    return 0;
}

/* The top-level key whose value is node (the block of the split or the
 * prediction starts at its key). */
static const kn_node *top_key(const kn_schema *s, const kn_node *node)
{
    if (!s->root || s->root->kind != KN_NODE_MAP || !node) {
        return NULL;
    }
    for (size_t i = 0; i < s->root->u.map.n; i++) {
        if (s->root->u.map.pairs[i].value == node) {
            return s->root->u.map.pairs[i].key;
        }
    }
    return NULL;
}

static const kn_pos *pos_or(const kn_node *n, const kn_pos *dflt)
{
    return n ? &n->pos : dflt;
}

/* Declares the waivers of one block other than a column: matched by place
 * only (the block's stretch of its file), named in messages by block. */
static void declare_block(kn_ctx *ctx, const kn_waiver *ws, size_t n, const char *block, const kn_node *start,
                          const file_bounds *fb, size_t n_files)
{
    if (!n || !start || !start->pos.file) {
        return;
    }
    size_t end = block_end(fb, n_files, start->pos.file, start->pos.offset);
    for (size_t j = 0; j < n; j++) {
        const kn_waiver *w = &ws[j];
        kn_waiver_decl d = {0};
        d.rule = w->rule;
        d.rule_id = w->rule_ref.name;
        d.subject = NULL;
        d.block = block;
        d.file = start->pos.file;
        d.start = start->pos.offset;
        d.end = end;
        d.reason = w->reason;
        d.expires = w->expires;
        d.at = pos_or(w->node, &start->pos);
        d.rule_at = pos_or(w->rule_ref.node, d.at);
        d.reason_at = pos_or(w->reason_node ? w->reason_node : w->node, d.at);
        d.expires_at = pos_or(w->expires_node, d.at);
        kn_sink_waiver(ctx->sink, &d);
    }
}

/* Events, sources, pipeline steps, the split and the prediction (SPEC §3.8). */
static void declare_other_blocks(kn_ctx *ctx, const kn_schema *s)
{
    size_t total = s->split.n_waivers + s->prediction.n_waivers;
    for (size_t i = 0; i < s->n_events; i++) {
        total += s->events[i]->n_waivers;
    }
    for (size_t i = 0; i < s->n_sources; i++) {
        total += s->sources[i]->n_waivers;
    }
    for (size_t i = 0; i < s->n_steps; i++) {
        total += s->steps[i].n_waivers;
    }
    if (total == 0) {
        return;
    }
    kn_arena *a = ctx->arena;
    file_bounds *fb = kn_alloc_array(a, s->n_files + 1, sizeof *fb);
    for (size_t i = 0; i < s->n_files; i++) {
        fb[i] = bounds_of(a, &s->files[i]);
    }
    for (size_t i = 0; i < s->n_events; i++) {
        const kn_event *e = s->events[i];
        declare_block(ctx, e->waivers, e->n_waivers, kn_printf(a, "event '%s'", e->name), e->key, fb, s->n_files);
    }
    for (size_t i = 0; i < s->n_sources; i++) {
        const kn_source *so = s->sources[i];
        declare_block(ctx, so->waivers, so->n_waivers, kn_printf(a, "source '%s'", so->name), so->key, fb,
                      s->n_files);
    }
    for (size_t i = 0; i < s->n_steps; i++) {
        const kn_step *st = &s->steps[i];
        declare_block(ctx, st->waivers, st->n_waivers, kn_printf(a, "pipeline step %zu", i + 1), st->node, fb,
                      s->n_files);
    }
    declare_block(ctx, s->split.waivers, s->split.n_waivers, "the split", top_key(s, s->split.node), fb,
                  s->n_files);
    declare_block(ctx, s->prediction.waivers, s->prediction.n_waivers, "the prediction",
                  top_key(s, s->prediction.node), fb, s->n_files);
}

void kn_check_waivers(kn_ctx *ctx, const kn_schema *s)
{
    declare_other_blocks(ctx, s);
    size_t total = 0;
    for (size_t i = 0; i < s->n_columns; i++) {
        total += s->columns[i]->n_waivers;
    }
    if (total == 0) {
        return;
    }
    size_t n_spans;
    span *spans = column_spans(ctx->arena, s, &n_spans);
    /* zeroed: no stretch, so a column of another file matches by subject only */
    size_t *end = kn_alloc_array(ctx->arena, s->n_columns + 1, sizeof *end);
    for (size_t i = 0; i < n_spans; i++) {
        end[spans[i].col->index] = spans[i].end;
    }
    for (size_t i = 0; i < s->n_columns; i++) {
        const kn_column *c = s->columns[i];
        for (size_t j = 0; j < c->n_waivers; j++) {
            const kn_waiver *w = &c->waivers[j];
            kn_waiver_decl d = {0};
            d.rule = w->rule;
            d.rule_id = w->rule_ref.name;
            d.subject = c->name;
            d.file = s->path;
            d.start = c->key ? c->key->pos.offset : 0;
            d.end = end[c->index];
            d.reason = w->reason;
            d.expires = w->expires;
            d.at = kn_column_pos(c, w->node);
            d.rule_at = kn_column_pos(c, w->rule_ref.node);
            d.reason_at = kn_column_pos(c, w->reason_node ? w->reason_node : w->node);
            d.expires_at = kn_column_pos(c, w->expires_node);
            kn_sink_waiver(ctx->sink, &d);
        }
    }
}

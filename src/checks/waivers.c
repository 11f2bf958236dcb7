/* waivers.c - declares the waivers of a schema's columns (SPEC §3.8) to
 * the sink, each with the stretch of the file its column occupies: the
 * sink's finishing pass applies them (a waiver covers the findings of its
 * rule about its column, or pointing inside the column's YAML) and reports
 * waiver-without-reason, waiver-expired and waiver-unused (§4.6). */
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

void kn_check_waivers(kn_ctx *ctx, const kn_schema *s)
{
    size_t total = 0;
    for (size_t i = 0; i < s->n_columns; i++) {
        total += s->columns[i]->n_waivers;
    }
    if (total == 0) {
        return;
    }
    size_t n_spans;
    span *spans = column_spans(ctx->arena, s, &n_spans);
    size_t *end = kn_alloc_array(ctx->arena, s->n_columns + 1, sizeof *end);
    for (size_t i = 0; i < s->n_columns; i++) {
        end[i] = 0; /* no stretch: a column of another file matches by subject only */
    }
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

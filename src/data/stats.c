/* stats.c - the statistics of the data checks (see stats.h): a radix sort
 * for the Mann-Whitney AUC, the uncertainty coefficient over dictionary
 * ids, quantile bins, open-addressing hash tables for k-anonymity groups
 * and split overlap, and the seeded
 * generator behind reservoir sampling.  Hands on numbers only. */
#define _DEFAULT_SOURCE /* madvise's MADV_HUGEPAGE */
#include "stats.h"

#include "hash.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <sys/mman.h>

/* ---- hashing ------------------------------------------------------------- */

/* The splitmix64 finaliser (Steele, Lea and Flood, 2014). */
static uint64_t mix64(uint64_t z)
{
    return kn_mix64(z);
}

/* ---- a u64-keyed open-addressing table (linear probing) -------------------- */

/* A slot is in use when a or b is nonzero: every insertion counts at once. */
typedef struct slot {
    uint64_t key;
    uint64_t a, b;
    uint64_t line;
} slot;

typedef struct u64map {
    kn_arena *arena;
    slot *slots;
    size_t cap, used;
} u64map;

static void u64map_release(void *p)
{
    u64map *m = p;
    free(m->slots);
    m->slots = NULL;
    m->cap = m->used = 0;
}

static void u64map_init(kn_arena *a, u64map *m)
{
    m->arena = a;
    m->slots = NULL;
    m->cap = m->used = 0;
    kn_arena_defer(a, u64map_release, m);
}

static bool slot_used(const slot *s)
{
    return (s->a | s->b) != 0;
}

/* A zeroed slot array.  From 2 MiB on it is 2 MiB-aligned and marked for
 * transparent huge pages: a table of a large file is probed at random,
 * and with 4 KiB pages nearly every probe would also miss the TLB. */
static slot *slots_alloc(kn_arena *a, size_t bytes)
{
    const size_t huge = (size_t)2 << 20;
    slot *p;
    if (bytes < huge) {
        p = kn_xrealloc(a, NULL, bytes);
    } else {
        p = aligned_alloc(huge, bytes); /* bytes is a power of two >= huge */
        if (!p) {
            kn_arena_oom(a);
        }
#ifdef MADV_HUGEPAGE
        (void)madvise(p, bytes, MADV_HUGEPAGE);
#endif
    }
    memset(p, 0, bytes);
    return p;
}

static void u64map_grow(u64map *m)
{
    size_t cap = m->cap ? m->cap * 2 : 64;
    if (cap > SIZE_MAX / sizeof(slot)) {
        kn_arena_oom(m->arena);
    }
    slot *fresh = slots_alloc(m->arena, cap * sizeof(slot));
    for (size_t i = 0; i < m->cap; i++) {
        const slot *s = &m->slots[i];
        if (!slot_used(s)) {
            continue;
        }
        size_t j = (size_t)mix64(s->key) & (cap - 1);
        while (slot_used(&fresh[j])) {
            j = (j + 1) & (cap - 1);
        }
        fresh[j] = *s;
    }
    free(m->slots);
    m->slots = fresh;
    m->cap = cap;
}

/* The slot for key; a new one is all zero but for the key, and the caller
 * must count in a or b before the next call. */
static slot *u64map_get(u64map *m, uint64_t key)
{
    if (2 * (m->used + 1) > m->cap) {
        u64map_grow(m);
    }
    size_t j = (size_t)mix64(key) & (m->cap - 1);
    for (;;) {
        slot *s = &m->slots[j];
        if (!slot_used(s)) {
            s->key = key;
            m->used++;
            return s;
        }
        if (s->key == key) {
            return s;
        }
        j = (j + 1) & (m->cap - 1);
    }
}

/* ---- ROC AUC ------------------------------------------------------------ */

typedef struct scored {
    uint64_t key; /* the score's bits, ordered as unsigned integers */
    uint64_t positive;
} scored;

/* Doubles to unsigned keys with the same order (sign-magnitude flip). */
static uint64_t order_key(double v)
{
    if (v == 0.0) {
        v = 0.0; /* -0.0 and 0.0 are one score */
    }
    uint64_t bits;
    memcpy(&bits, &v, sizeof bits);
    return (bits & UINT64_C(0x8000000000000000)) ? ~bits : bits ^ UINT64_C(0x8000000000000000);
}

#define RADIX_BITS 11
#define RADIX_SIZE (1u << RADIX_BITS)
#define RADIX_PASSES 6 /* 6 * 11 >= 64 */

#define RADIX_MIN 4096 /* fewer scores are sorted with qsort */

static int by_key(const void *pa, const void *pb)
{
    uint64_t a = ((const scored *)pa)->key, b = ((const scored *)pb)->key;
    return (a > b) - (a < b);
}

/* LSD radix sort by key, 11-bit digits; passes where every key has the
 * same digit are skipped.  Returns whichever buffer holds the result. */
static scored *radix_sort(scored *v, scored *tmp, size_t n, size_t (*count)[RADIX_SIZE])
{
    /* Digits where every key agrees need no pass: scores that came from
     * 4-byte floats leave the low 29 bits of every key equal. */
    uint64_t all_or = 0, all_and = UINT64_MAX;
    for (size_t i = 0; i < n; i++) {
        all_or |= v[i].key;
        all_and &= v[i].key;
    }
    uint64_t varies = all_or ^ all_and;
    int passes[RADIX_PASSES], n_passes = 0;
    for (int p = 0; p < RADIX_PASSES; p++) {
        if ((varies >> (p * RADIX_BITS)) & (RADIX_SIZE - 1)) {
            passes[n_passes++] = p;
        }
    }
    memset(count, 0, RADIX_PASSES * sizeof *count);
    for (size_t i = 0; i < n; i++) {
        uint64_t k = v[i].key;
        for (int q = 0; q < n_passes; q++) {
            count[q][(k >> (passes[q] * RADIX_BITS)) & (RADIX_SIZE - 1)]++;
        }
    }
    for (int q = 0; q < n_passes; q++) {
        int p = passes[q];
        size_t *c = count[q];
        bool trivial = false;
        for (size_t d = 0; d < RADIX_SIZE; d++) {
            if (c[d] == n) {
                trivial = true;
                break;
            }
            if (c[d]) {
                break;
            }
        }
        if (trivial) {
            continue;
        }
        size_t sum = 0;
        for (size_t d = 0; d < RADIX_SIZE; d++) {
            size_t t = c[d];
            c[d] = sum;
            sum += t;
        }
        for (size_t i = 0; i < n; i++) {
            size_t d = (size_t)(v[i].key >> (p * RADIX_BITS)) & (RADIX_SIZE - 1);
            tmp[c[d]++] = v[i];
        }
        scored *swap = v;
        v = tmp;
        tmp = swap;
    }
    return v;
}

/* Floats to unsigned keys with the same order. */
static uint32_t order_key32(float v)
{
    if (v == 0.0f) {
        v = 0.0f;
    }
    uint32_t bits;
    memcpy(&bits, &v, sizeof bits);
    return (bits & UINT32_C(0x80000000)) ? ~bits : bits ^ UINT32_C(0x80000000);
}

/* Twice the Mann-Whitney U over scores sorted by key, tie groups counted
 * together. */
#define TWO_U(v, m, key_of, pos_of, two_u, neg_below)                        \
    for (size_t i_ = 0; i_ < (m);) {                                         \
        uint64_t pos_g = 0, neg_g = 0;                                       \
        size_t j_ = i_;                                                      \
        while (j_ < (m) && key_of((v)[j_]) == key_of((v)[i_])) {             \
            pos_g += pos_of((v)[j_]);                                        \
            neg_g += 1 - pos_of((v)[j_]);                                    \
            j_++;                                                            \
        }                                                                    \
        kn_rank_step(&(two_u), &(neg_below), pos_g, neg_g);                  \
        i_ = j_;                                                             \
    }

#define PACKED_KEY(w) ((w) >> 32)
#define PACKED_POS(w) ((w)&1u)

/* The AUC of scores that are all exactly 4-byte floats (the sample's
 * numeric cells): key and class packed in one word, two 16-bit passes of
 * an LSD radix sort over the key.  Returns false when a score is not a
 * float (the caller then sorts 64-bit keys). */
static bool auc_of_floats(kn_arena *a, const double *score, const bool *positive, size_t n, kn_auc *out)
{
    for (size_t i = 0; i < n; i++) {
        if (!isnan(score[i]) && (double)(float)score[i] != score[i]) {
            return false;
        }
    }
    kn_defer *d = kn_arena_defer(a, free, NULL);
    uint64_t *buf = kn_xrealloc(a, NULL, 2 * n * sizeof *buf + 2 * 65536 * sizeof(size_t));
    d->ptr = buf;
    uint64_t *tmp = buf + n;
    size_t *count = (size_t *)(void *)(buf + 2 * n);
    memset(count, 0, 2 * 65536 * sizeof *count);
    size_t m = 0;
    for (size_t i = 0; i < n; i++) {
        if (isnan(score[i])) {
            continue;
        }
        uint64_t k = order_key32((float)score[i]);
        buf[m++] = k << 32 | (positive[i] ? 1u : 0u);
        count[k & 0xffff]++;
        count[65536 + (k >> 16)]++;
        out->n_pos += positive[i];
    }
    out->n_neg = m - out->n_pos;
    if (out->n_pos && out->n_neg) {
        uint64_t *from = buf, *to = tmp;
        for (int p = 0; p < 2; p++) {
            size_t *c = count + 65536 * p, sum = 0;
            for (size_t j = 0; j < 65536; j++) {
                size_t t = c[j];
                c[j] = sum;
                sum += t;
            }
            for (size_t i = 0; i < m; i++) {
                to[c[(from[i] >> (32 + 16 * p)) & 0xffff]++] = from[i];
            }
            uint64_t *swap = from;
            from = to;
            to = swap;
        }
        uint64_t two_u = 0, neg_below = 0;
        TWO_U(from, m, PACKED_KEY, PACKED_POS, two_u, neg_below)
        kn_auc_finish(two_u, out->n_pos, out->n_neg, out);
    }
    kn_defer_run(a, d);
    return true;
}

/* ROC AUC as the Mann-Whitney U statistic with average ranks for ties:
 * after one sort, each tie group adds pos_g * (neg_below + neg_g / 2). */
bool kn_stats_auc(kn_arena *a, const double *score, const bool *positive, size_t n, kn_auc *out)
{
    memset(out, 0, sizeof *out);
    out->auc = out->separation = 0.5;
    if (n > RADIX_MIN && n <= SIZE_MAX / 64 && auc_of_floats(a, score, positive, n, out)) {
        return out->n_pos && out->n_neg;
    }
    /* Small inputs are sorted by comparison: the radix sort's counts
     * (96 KiB) would cost more than the sort on a wide file of few rows. */
    const size_t counts_size = n > RADIX_MIN ? RADIX_PASSES * RADIX_SIZE * sizeof(size_t) : 0;
    if (n > (SIZE_MAX - counts_size) / (2 * sizeof(scored))) {
        kn_arena_oom(a);
    }
    /* One scratch block: the scores, the radix sort's second buffer and
     * its digit counts. */
    kn_defer *d = kn_arena_defer(a, free, NULL);
    scored *buf = n ? kn_xrealloc(a, NULL, 2 * n * sizeof(scored) + counts_size) : NULL;
    d->ptr = buf;
    size_t m = 0;
    for (size_t i = 0; i < n; i++) {
        if (isnan(score[i])) {
            continue;
        }
        buf[m].key = order_key(score[i]);
        buf[m].positive = positive[i] ? 1 : 0;
        if (positive[i]) {
            out->n_pos++;
        } else {
            out->n_neg++;
        }
        m++;
    }
    if (out->n_pos == 0 || out->n_neg == 0) {
        kn_defer_run(a, d);
        return false;
    }
    const scored *v = buf;
    if (counts_size) {
        v = radix_sort(buf, buf + n, m, (size_t(*)[RADIX_SIZE])(void *)(buf + 2 * n));
    } else {
        qsort(buf, m, sizeof *buf, by_key);
    }
    /* twice U, exact in integers */
    uint64_t two_u = 0, neg_below = 0;
#define SCORED_KEY(e) ((e).key)
#define SCORED_POS(e) ((e).positive)
    TWO_U(v, m, SCORED_KEY, SCORED_POS, two_u, neg_below)
    kn_defer_run(a, d);
    return kn_auc_finish(two_u, out->n_pos, out->n_neg, out);
}

bool kn_auc_finish(uint64_t two_u, uint64_t n_pos, uint64_t n_neg, kn_auc *out)
{
    out->n_pos = (size_t)n_pos;
    out->n_neg = (size_t)n_neg;
    out->auc = out->separation = 0.5;
    if (n_pos == 0 || n_neg == 0) {
        return false;
    }
    out->auc = (double)two_u / (2.0 * (double)n_pos * (double)n_neg);
    out->separation = out->auc >= 0.5 ? out->auc : 1.0 - out->auc;
    return true;
}

typedef struct level {
    uint64_t key, pos, neg;
} level;

static int by_level_key(const void *pa, const void *pb)
{
    uint64_t a = ((const level *)pa)->key, b = ((const level *)pb)->key;
    return (a > b) - (a < b);
}

/* Distinct scores with their class counts: sorted, equal keys merged into
 * one tie group, then the same rank sum as the rows of a sample. */
bool kn_stats_auc_levels(kn_arena *a, const double *score, const uint64_t *pos, const uint64_t *neg, size_t n,
                         kn_auc *out)
{
    memset(out, 0, sizeof *out);
    out->auc = out->separation = 0.5;
    kn_defer *d = kn_arena_defer(a, free, NULL);
    level *v = n ? kn_xrealloc(a, NULL, n * sizeof *v) : NULL;
    d->ptr = v;
    size_t m = 0;
    for (size_t i = 0; i < n; i++) {
        if (isnan(score[i]) || (pos[i] | neg[i]) == 0) {
            continue;
        }
        v[m].key = order_key(score[i]);
        v[m].pos = pos[i];
        v[m].neg = neg[i];
        m++;
    }
    qsort(v, m, sizeof *v, by_level_key);
    uint64_t two_u = 0, neg_below = 0, n_pos = 0, n_neg = 0;
    for (size_t i = 0; i < m;) {
        uint64_t pos_g = 0, neg_g = 0;
        size_t j = i;
        while (j < m && v[j].key == v[i].key) {
            pos_g += v[j].pos;
            neg_g += v[j].neg;
            j++;
        }
        kn_rank_step(&two_u, &neg_below, pos_g, neg_g);
        n_pos += pos_g;
        n_neg += neg_g;
        i = j;
    }
    kn_defer_run(a, d);
    return kn_auc_finish(two_u, n_pos, n_neg, out);
}

/* ---- uncertainty coefficient ---------------------------------------------- */

/* Adds one cell of the contingency table to I(Y; X). */
static double mi_term(double nxy, double n, double nx, double ny)
{
    return nxy / n * (log(nxy) + log(n) - log(nx) - log(ny));
}

static int by_u64(const void *pa, const void *pb)
{
    uint64_t a = *(const uint64_t *)pa, b = *(const uint64_t *)pb;
    return (a > b) - (a < b);
}

/* Counted in an array when the table is small, else by sorting the
 * (x, y) pairs; scratch memory is released before returning. */
bool kn_uncertainty_ids(kn_arena *a, const uint32_t *x, const uint32_t *y, size_t n, size_t nx, size_t ny,
                        kn_uncertainty *u)
{
    return kn_uncertainty_weighted(a, x, y, NULL, n, nx, ny, u);
}

static int by_first_u64(const void *pa, const void *pb)
{
    uint64_t a = ((const uint64_t *)pa)[0], b = ((const uint64_t *)pb)[0];
    return (a > b) - (a < b);
}

bool kn_uncertainty_weighted(kn_arena *a, const uint32_t *x, const uint32_t *y, const uint64_t *w, size_t n,
                             size_t nx, size_t ny, kn_uncertainty *u)
{
    memset(u, 0, sizeof *u);
    if (nx == 0 || ny == 0) {
        return false;
    }
    kn_defer *d = kn_arena_defer(a, free, NULL);
    size_t cells = nx <= KN_UNCERTAINTY_TABLE_MAX / ny ? nx * ny : 0;
    /* sorted pairs: the pair, then (weighted) its rows */
    size_t stride = w ? 2 : 1;
    if (!cells && n > (SIZE_MAX / sizeof(uint64_t) - nx - ny) / stride) {
        kn_arena_oom(a);
    }
    size_t words = nx + ny + (cells ? cells : n * stride);
    uint64_t *scratch = kn_xrealloc(a, NULL, words * sizeof *scratch);
    d->ptr = scratch;
    memset(scratch, 0, (nx + ny + cells) * sizeof *scratch);
    uint64_t *cx = scratch, *cy = scratch + nx, *table = scratch + nx + ny;
    size_t m = 0;      /* pairs kept */
    uint64_t rows = 0; /* rows they stand for */
    for (size_t i = 0; i < n; i++) {
        if (x[i] == 0 || y[i] == 0 || x[i] >= nx || y[i] >= ny) {
            continue;
        }
        uint64_t wi = w ? w[i] : 1;
        if (wi == 0) {
            continue;
        }
        cx[x[i]] += wi;
        cy[y[i]] += wi;
        if (cells) {
            table[(size_t)x[i] * ny + y[i]] += wi;
        } else {
            table[m * stride] = (uint64_t)x[i] << 32 | y[i];
            if (w) {
                table[m * stride + 1] = wi;
            }
        }
        m++;
        rows += wi;
    }
    if (m == 0) {
        kn_defer_run(a, d);
        return false;
    }
    double dn = (double)rows, h_y = 0, mi = 0;
    for (size_t j = 0; j < ny; j++) {
        if (cy[j]) {
            double p = (double)cy[j] / dn;
            h_y -= p * log(p);
            u->y_levels++;
        }
    }
    for (size_t j = 0; j < nx; j++) {
        u->x_levels += cx[j] != 0;
    }
    if (cells) {
        for (size_t c = 0; c < cells; c++) {
            if (table[c]) {
                mi += mi_term((double)table[c], dn, (double)cx[c / ny], (double)cy[c % ny]);
            }
        }
    } else if (!w) {
        qsort(table, m, sizeof *table, by_u64);
        for (size_t i = 0; i < m;) {
            size_t j = i;
            while (j < m && table[j] == table[i]) {
                j++;
            }
            mi += mi_term((double)(j - i), dn, (double)cx[table[i] >> 32], (double)cy[table[i] & UINT32_MAX]);
            i = j;
        }
    } else {
        qsort(table, m, 2 * sizeof *table, by_first_u64);
        for (size_t i = 0; i < m;) {
            size_t j = i;
            uint64_t nxy = 0;
            while (j < m && table[2 * j] == table[2 * i]) {
                nxy += table[2 * j + 1];
                j++;
            }
            uint64_t key = table[2 * i];
            mi += mi_term((double)nxy, dn, (double)cx[key >> 32], (double)cy[key & UINT32_MAX]);
            i = j;
        }
    }
    kn_defer_run(a, d);
    u->n = (size_t)rows;
    kn_uncertainty_set(u, h_y, mi);
    return true;
}

static int by_double(const void *pa, const void *pb)
{
    double a = *(const double *)pa, b = *(const double *)pb;
    return (a > b) - (a < b);
}

typedef struct weighed {
    double v;
    uint64_t w;
} weighed;

static int by_weighed(const void *pa, const void *pb)
{
    double a = ((const weighed *)pa)->v, b = ((const weighed *)pb)->v;
    return (a > b) - (a < b);
}

size_t kn_quantile_bins(kn_arena *a, const double *v, size_t n, size_t bins, uint32_t *code)
{
    return kn_quantile_bins_weighted(a, v, NULL, n, bins, code);
}

/* Each value stands for w[i] rows (1 without w): the value at rank r of
 * the rows is the one whose run of rows, in sorted order, holds r. */
size_t kn_quantile_bins_weighted(kn_arena *a, const double *v, const uint64_t *w, size_t n, size_t bins,
                                 uint32_t *code)
{
    if (bins < 1) {
        bins = 1;
    }
    kn_defer *d = kn_arena_defer(a, free, NULL);
    size_t each = w ? sizeof(weighed) : sizeof(double);
    double *sorted = kn_xrealloc(a, NULL, (n ? n : 1) * each + bins * sizeof(double));
    d->ptr = sorted;
    double *cut = (double *)(void *)((char *)sorted + (n ? n : 1) * each);
    weighed *ws = (weighed *)(void *)sorted;
    size_t m = 0;
    uint64_t rows = 0;
    for (size_t i = 0; i < n; i++) {
        if (isnan(v[i]) || (w && w[i] == 0)) {
            continue;
        }
        if (w) {
            ws[m].v = v[i];
            ws[m++].w = w[i];
            rows += w[i];
        } else {
            sorted[m++] = v[i];
        }
    }
    if (w) {
        qsort(ws, m, sizeof *ws, by_weighed);
    } else {
        qsort(sorted, m, sizeof *sorted, by_double);
        rows = m;
    }
    /* Distinct cut points, ascending: the values at ranks rows * b / bins. */
    size_t n_cut = 0, at = 0;
    uint64_t below = 0; /* rows before entry at */
    double lowest = m ? (w ? ws[0].v : sorted[0]) : 0;
    for (size_t b = 1; b < bins && m; b++) {
        uint64_t rank = rows / bins * b + rows % bins * b / bins; /* rows * b / bins without overflow */
        double c;
        if (w) {
            while (at < m && below + ws[at].w <= rank) {
                below += ws[at].w;
                at++;
            }
            c = ws[at < m ? at : m - 1].v;
        } else {
            c = sorted[rank];
        }
        if (c > lowest && (n_cut == 0 || c > cut[n_cut - 1])) {
            cut[n_cut++] = c;
        }
    }
    bool *used = kn_alloc_array(a, n_cut + 2, sizeof *used);
    size_t distinct = 0;
    for (size_t i = 0; i < n; i++) {
        if (isnan(v[i])) {
            code[i] = 0;
            continue;
        }
        size_t lo = 0, hi = n_cut; /* the number of cuts <= v[i] */
        while (lo < hi) {
            size_t mid = (lo + hi) / 2;
            if (cut[mid] <= v[i]) {
                lo = mid + 1;
            } else {
                hi = mid;
            }
        }
        code[i] = (uint32_t)lo + 1;
        if (!used[lo]) {
            used[lo] = true;
            distinct++;
        }
    }
    kn_defer_run(a, d);
    return distinct;
}

void kn_uncertainty_set(kn_uncertainty *out, double h_y, double mi)
{
    if (h_y < 0) {
        h_y = 0;
    }
    if (mi < 0) {
        mi = 0;
    }
    if (mi > h_y) {
        mi = h_y;
    }
    out->h_y = h_y;
    out->mi = mi;
    out->u = h_y > 0 ? mi / h_y : 0.0;
}

/* ---- k-anonymity ------------------------------------------------------- */

struct kn_group_sizes {
    size_t size, groups;
};

struct kn_groups {
    u64map map;
    size_t rows;
    /* a database's histogram: groups of each size (kn_groups_add_sizes) */
    struct kn_group_sizes *sizes;
    size_t n_sizes, cap_sizes;
};

kn_groups *kn_groups_new(kn_arena *a)
{
    kn_groups *g = kn_alloc(a, sizeof *g);
    u64map_init(a, &g->map);
    return g;
}

void kn_groups_add(kn_groups *g, uint64_t tuple_hash, uint64_t line)
{
    slot *s = u64map_get(&g->map, tuple_hash);
    if (s->a == 0) {
        s->line = line;
    }
    s->a++;
    g->rows++;
}

/* k-anonymity (Sweeney, 2002): sizes of the equivalence classes of equal
 * quasi-identifier tuples, compared with k. */
void kn_groups_kanon(const kn_groups *g, size_t k, kn_kanon *out)
{
    memset(out, 0, sizeof *out);
    for (size_t i = 0; i < g->map.cap; i++) {
        const slot *s = &g->map.slots[i];
        if (slot_used(s)) {
            kn_kanon_add(out, k, (size_t)s->a, 1, s->line);
        }
    }
    for (size_t i = 0; i < g->n_sizes; i++) {
        kn_kanon_add(out, k, g->sizes[i].size, g->sizes[i].groups, 0);
    }
}

void kn_kanon_add(kn_kanon *out, size_t k, size_t size, size_t groups, uint64_t line)
{
    if (size == 0 || groups == 0) {
        return;
    }
    out->rows += size * groups;
    out->groups += groups;
    if (out->smallest == 0 || size < out->smallest || (size == out->smallest && line < out->smallest_line)) {
        out->smallest = size;
        out->smallest_line = line;
    }
    if (size < k) {
        out->groups_below_k += groups;
        out->rows_below_k += size * groups;
    }
}

void kn_groups_add_sizes(kn_groups *g, size_t size, size_t groups)
{
    if (g->n_sizes == g->cap_sizes) {
        size_t cap = g->cap_sizes ? 2 * g->cap_sizes : 16;
        struct kn_group_sizes *v = kn_alloc_array(g->map.arena, cap, sizeof *v);
        if (g->n_sizes) {
            memcpy(v, g->sizes, g->n_sizes * sizeof *v);
        }
        g->sizes = v;
        g->cap_sizes = cap;
    }
    g->sizes[g->n_sizes].size = size;
    g->sizes[g->n_sizes++].groups = groups;
}

/* ---- rows shared across a split ----------------------------------------- */

struct kn_overlap {
    u64map map;
    size_t train_rows, test_rows;
    /* One key waits while its slot is fetched from memory: the table of a
     * large file does not fit in the caches, and the next row's work hides
     * the miss. */
    bool pending;
    uint64_t pend_key, pend_line;
    bool pend_test;
    /* a database's counts (kn_overlap_set) */
    bool preset;
    kn_overlap_result result;
};

kn_overlap *kn_overlap_new(kn_arena *a)
{
    kn_overlap *o = kn_alloc(a, sizeof *o);
    u64map_init(a, &o->map);
    return o;
}

static void overlap_count(kn_overlap *o, uint64_t key, bool test_side, uint64_t line)
{
    slot *s = u64map_get(&o->map, key);
    if (test_side) {
        if (s->b == 0 || line < s->line) {
            s->line = line;
        }
        s->b++;
        o->test_rows++;
    } else {
        s->a++;
        o->train_rows++;
    }
}

void kn_overlap_add(kn_overlap *o, uint64_t key, bool test_side, uint64_t line)
{
    if (o->map.cap) {
        __builtin_prefetch(&o->map.slots[(size_t)mix64(key) & (o->map.cap - 1)], 1);
    }
    if (o->pending) {
        overlap_count(o, o->pend_key, o->pend_test, o->pend_line);
    }
    o->pending = true;
    o->pend_key = key;
    o->pend_test = test_side;
    o->pend_line = line;
}

/* Keys counted on both sides of the split. */
void kn_overlap_set(kn_overlap *o, const kn_overlap_result *r)
{
    o->preset = true;
    o->result = *r;
}

void kn_overlap_result_get(kn_overlap *o, kn_overlap_result *out)
{
    if (o->preset) {
        *out = o->result;
        return;
    }
    if (o->pending) {
        overlap_count(o, o->pend_key, o->pend_test, o->pend_line);
        o->pending = false;
    }
    memset(out, 0, sizeof *out);
    out->train_rows = o->train_rows;
    out->test_rows = o->test_rows;
    for (size_t i = 0; i < o->map.cap; i++) {
        const slot *s = &o->map.slots[i];
        if (s->a == 0 || s->b == 0) {
            continue;
        }
        out->shared_keys++;
        out->train_rows_shared += (size_t)s->a;
        out->test_rows_shared += (size_t)s->b;
        if (out->first_test_line == 0 || s->line < out->first_test_line) {
            out->first_test_line = s->line;
        }
    }
}

/* ---- reservoir sampling --------------------------------------------------- */

/* splitmix64 fills the xoshiro256** state, as its authors recommend. */
void kn_rng_seed(kn_rng *r, uint64_t seed)
{
    uint64_t x = seed;
    for (int i = 0; i < 4; i++) {
        x += UINT64_C(0x9E3779B97F4A7C15);
        r->s[i] = mix64(x);
    }
}

static uint64_t rotl(uint64_t x, int k)
{
    return (x << k) | (x >> (64 - k));
}

/* xoshiro256** (Blackman and Vigna, 2018). */
uint64_t kn_rng_next(kn_rng *r)
{
    uint64_t *s = r->s;
    const uint64_t result = rotl(s[1] * 5, 7) * 9;
    const uint64_t t = s[1] << 17;
    s[2] ^= s[0];
    s[3] ^= s[1];
    s[1] ^= s[2];
    s[0] ^= s[3];
    s[2] ^= t;
    s[3] = rotl(s[3], 45);
    return result;
}

/* Rejection of the 2^64 mod n lowest draws, then a modulo: unbiased. */
uint64_t kn_rng_below(kn_rng *r, uint64_t n)
{
    uint64_t threshold = (0 - n) % n;
    for (;;) {
        uint64_t x = kn_rng_next(r);
        if (x >= threshold) {
            return x % n;
        }
    }
}

void kn_reservoir_init(kn_reservoir *rs, size_t cap, uint64_t seed)
{
    rs->cap = cap;
    rs->seen = 0;
    kn_rng_seed(&rs->rng, seed);
}

/* Algorithm R (Vitter, 1985): item i (0-based) replaces a random slot with
 * probability cap / (i + 1). */
size_t kn_reservoir_offer(kn_reservoir *rs)
{
    uint64_t i = rs->seen++;
    if (i < rs->cap) {
        return (size_t)i;
    }
    if (rs->cap == 0) {
        return KN_RESERVOIR_SKIP;
    }
    uint64_t j = kn_rng_below(&rs->rng, i + 1);
    return j < rs->cap ? (size_t)j : KN_RESERVOIR_SKIP;
}

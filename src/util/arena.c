/* arena.c - bump allocation in chunks, deferred cleanups, and the single
 * out-of-memory path (a longjmp to the entry point's handler). */
#define _DEFAULT_SOURCE /* madvise's MADV_HUGEPAGE */
#include "arena.h"

#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/mman.h>

#define CHUNK_SIZE (64u * 1024u)
/* The first chunk is CHUNK_SIZE, from malloc, so a small run stays small;
 * every later one is this size, aligned to (and asked for as) 2 MiB pages
 * where the system offers them: one page fault per 2 MiB instead of one
 * per 4 KiB, and pages that come zeroed (no memset).  A block larger than a
 * quarter of it gets a mapping of its own, in whole 2 MiB pages.  (Chunks
 * that doubled from CHUNK_SIZE, and large blocks from malloc, cost a
 * 10,000-column check 2,750 page faults and a memset of all it allocated.) */
#define BIG_CHUNK_SIZE (4u * 1024u * 1024u)
#define HUGE_PAGE (2u * 1024u * 1024u)

typedef struct chunk {
    struct chunk *next;
    size_t used, size;
    bool mapped; /* fresh pages from mmap: already zero, released by munmap */
    max_align_t data[];
} chunk;

struct kn_arena {
    chunk *head;
    kn_defer *defers;
    jmp_buf *oom;
    size_t next_chunk; /* size of the next regular chunk (0: CHUNK_SIZE, the first) */
};

#ifdef KN_ALLOC_FAIL
static long fail_at = -1;
static long alloc_count;

bool kn_alloc_fail_now(void)
{
    if (fail_at < 0) {
        const char *env = getenv("KNOWABLE_FAIL_ALLOC");
        fail_at = env ? strtol(env, NULL, 10) : 0;
    }
    alloc_count++;
    if (fail_at > 0 && alloc_count == fail_at) {
        return true;
    }
    return false;
}
#else
bool kn_alloc_fail_now(void)
{
    return false;
}
#endif

static void *sys_malloc(size_t n)
{
    if (kn_alloc_fail_now()) {
        return NULL;
    }
    return malloc(n);
}

/* A chunk of n bytes.  A big one (n = BIG_CHUNK_SIZE) is mapped fresh,
 * aligned to HUGE_PAGE: its pages come zeroed from the kernel, so kn_alloc
 * need not clear what it hands out from it. */
static chunk *sys_chunk(size_t n, bool big)
{
    if (!big) {
        chunk *c = sys_malloc(n);
        if (c) {
            c->mapped = false;
        }
        return c;
    }
    if (kn_alloc_fail_now()) {
        return NULL;
    }
    size_t span = n + HUGE_PAGE;
    char *m = mmap(NULL, span, PROT_READ | PROT_WRITE, MAP_PRIVATE | MAP_ANONYMOUS, -1, 0);
    if (m == MAP_FAILED) {
        return NULL;
    }
    size_t head = (HUGE_PAGE - (uintptr_t)m % HUGE_PAGE) % HUGE_PAGE;
    if (head) {
        munmap(m, head);
    }
    if (span - head > n) {
        munmap(m + head + n, span - head - n);
    }
#ifdef MADV_HUGEPAGE
    (void)madvise(m + head, n, MADV_HUGEPAGE);
#endif
    chunk *c = (chunk *)(void *)(m + head);
    c->mapped = true;
    return c;
}

static void *sys_realloc(void *p, size_t n)
{
    if (kn_alloc_fail_now()) {
        return NULL;
    }
    return realloc(p, n);
}

kn_arena *kn_arena_new(void)
{
    kn_arena *a = sys_malloc(sizeof *a);
    if (!a) {
        return NULL;
    }
    memset(a, 0, sizeof *a);
    return a;
}

void kn_arena_free(kn_arena *a)
{
    if (!a) {
        return;
    }
    kn_defer *d = a->defers;
    while (d) {
        kn_defer *next = d->next;
        if (d->fn && d->ptr) {
            d->fn(d->ptr);
        }
        d = next;
    }
    chunk *c = a->head;
    while (c) {
        chunk *next = c->next;
        if (c->mapped) {
            munmap(c, sizeof(chunk) + c->size);
        } else {
            free(c);
        }
        c = next;
    }
    free(a);
}

void kn_arena_set_oom(kn_arena *a, jmp_buf *target)
{
    a->oom = target;
}

static void free_child(void *p)
{
    kn_arena_free(p);
}

kn_arena *kn_arena_child(kn_arena *a, kn_defer **release)
{
    kn_defer *d = kn_arena_defer(a, free_child, NULL);
    kn_arena *child = kn_arena_new();
    if (!child) {
        kn_arena_oom(a);
    }
    child->oom = a->oom;
    d->ptr = child;
    *release = d;
    return child;
}

_Noreturn void kn_arena_oom(kn_arena *a)
{
    if (a->oom) {
        longjmp(*a->oom, 1);
    }
    /* Every entry point installs a handler; reaching this is a bug. */
    fputs("knowable: out of memory\n", stderr);
    exit(2);
}

/* A block larger than a quarter of a big chunk gets a mapping of its own,
 * rounded up to whole 2 MiB pages, behind the current chunk so that chunk's
 * remaining space still serves small allocations. */
static void *large_block(kn_arena *a, size_t size)
{
    if (size > SIZE_MAX - sizeof(chunk) - HUGE_PAGE) {
        kn_arena_oom(a);
    }
    size_t n = (sizeof(chunk) + size + HUGE_PAGE - 1) / HUGE_PAGE * HUGE_PAGE;
    chunk *b = sys_chunk(n, true);
    if (!b) {
        kn_arena_oom(a);
    }
    b->used = size;
    b->size = n - sizeof(chunk);
    if (a->head) {
        b->next = a->head->next;
        a->head->next = b;
    } else {
        b->next = NULL;
        a->head = b;
    }
    return b->data;
}

void *kn_alloc(kn_arena *a, size_t size)
{
    /* Blocks are 8-aligned, and 16-aligned (_Alignof(max_align_t)) when
     * their size is a multiple of 16: a type that needs 16 (__int128, long
     * double) has such a size, as has an array of it.  Rounding every block
     * to sizeof(max_align_t), 32 bytes, made a 72-byte tree node take 96 and
     * a short string 32. */
    const size_t wide = _Alignof(max_align_t);
    if (size > SIZE_MAX - wide) {
        kn_arena_oom(a);
    }
    const size_t align = size % wide == 0 ? wide : 8;
    size = size == 0 ? 8 : (size + 7) & ~(size_t)7;
    chunk *c = a->head;
    size_t pad = c ? (align - c->used % align) % align : 0;
    if (c && c->size - c->used >= size + pad) {
        c->used += pad;
    } else {
        if (size > BIG_CHUNK_SIZE / 4) {
            return large_block(a, size);
        }
        /* A first small allocation takes a CHUNK_SIZE chunk from malloc, so
         * a small run stays small; anything after it a big chunk. */
        bool big = a->next_chunk == BIG_CHUNK_SIZE || size > CHUNK_SIZE / 4;
        size_t want = big ? BIG_CHUNK_SIZE : CHUNK_SIZE;
        chunk *n = sys_chunk(want, big);
        if (!n) {
            kn_arena_oom(a);
        }
        n->used = 0;
        n->size = want - sizeof(chunk);
        n->next = c;
        a->head = n;
        a->next_chunk = BIG_CHUNK_SIZE;
        c = n;
    }
    void *p = (char *)c->data + c->used;
    c->used += size;
    if (!c->mapped) {
        memset(p, 0, size);
    }
    return p;
}

void *kn_alloc_array(kn_arena *a, size_t n, size_t size)
{
    if (size && n > SIZE_MAX / size) {
        kn_arena_oom(a);
    }
    return kn_alloc(a, n * size);
}

char *kn_strndup(kn_arena *a, const char *s, size_t len)
{
    if (len == SIZE_MAX) {
        kn_arena_oom(a);
    }
    char *p = kn_alloc(a, len + 1);
    if (len) {
        memcpy(p, s, len);
    }
    p[len] = '\0';
    return p;
}

char *kn_strdup(kn_arena *a, const char *s)
{
    return kn_strndup(a, s, strlen(s));
}

char *kn_vprintf(kn_arena *a, const char *fmt, va_list ap)
{
    /* One formatting pass for the usual short text; a second only when it
     * does not fit the stack buffer. */
    char small[512];
    va_list copy;
    va_copy(copy, ap);
    int n = vsnprintf(small, sizeof small, fmt, copy);
    va_end(copy);
    if (n < 0) {
        return kn_strdup(a, "");
    }
    char *p = kn_alloc(a, (size_t)n + 1);
    if ((size_t)n < sizeof small) {
        memcpy(p, small, (size_t)n + 1);
    } else {
        vsnprintf(p, (size_t)n + 1, fmt, ap);
    }
    return p;
}

char *kn_printf(kn_arena *a, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    char *p = kn_vprintf(a, fmt, ap);
    va_end(ap);
    return p;
}

kn_defer *kn_arena_defer(kn_arena *a, void (*fn)(void *), void *ptr)
{
    kn_defer *d = kn_alloc(a, sizeof *d);
    d->fn = fn;
    d->ptr = ptr;
    d->next = a->defers;
    a->defers = d;
    return d;
}

void kn_defer_run(kn_arena *a, kn_defer *d)
{
    (void)a;
    if (d->fn && d->ptr) {
        d->fn(d->ptr);
    }
    d->ptr = NULL;
}

void *kn_xrealloc(kn_arena *a, void *p, size_t size)
{
    void *n = sys_realloc(p, size ? size : 1);
    if (!n) {
        kn_arena_oom(a);
    }
    return n;
}

static void vec_release(void *p)
{
    kn_vec *v = p;
    free(v->data);
    v->data = NULL;
}

kn_vec *kn_vec_new(kn_arena *a, size_t elem)
{
    kn_vec *v = kn_alloc(a, sizeof *v);
    v->elem = elem;
    v->arena = a;
    v->defer = kn_arena_defer(a, vec_release, v);
    return v;
}

void *kn_vec_push(kn_vec *v, const void *elem)
{
    if (v->len == v->cap) {
        size_t cap = v->cap ? v->cap * 2 : 8;
        if (cap > SIZE_MAX / v->elem) {
            kn_arena_oom(v->arena);
        }
        v->data = kn_xrealloc(v->arena, v->data, cap * v->elem);
        v->cap = cap;
    }
    void *slot = (char *)v->data + v->len * v->elem;
    if (v->elem == sizeof(void *)) {
        memcpy(slot, elem, sizeof(void *)); /* a constant size: no call (most vectors hold pointers) */
    } else {
        memcpy(slot, elem, v->elem);
    }
    v->len++;
    return slot;
}

/* arena.h - one arena per run: every allocation of a check lives here and
 * is freed at once by kn_arena_free.
 *
 * Out-of-memory policy (see DEVELOPERS.md): allocation never returns NULL.
 * When the system allocator fails, the arena longjmps to the jmp_buf that
 * the public entry point installed with KN_ARENA_TRY; that entry point frees
 * the arena (running every deferred cleanup) and exits with status 2 and an
 * "out of memory" message.  Resources that are not arena memory (FILE *,
 * libyaml parsers, PCRE2 codes, growable heap buffers) are registered with
 * kn_arena_defer *before* they are acquired, so a longjmp never leaks them.
 */
#ifndef KN_UTIL_ARENA_H
#define KN_UTIL_ARENA_H

#include <setjmp.h>
#include <stdarg.h>
#include <stdbool.h>
#include <stddef.h>

typedef struct kn_arena kn_arena;

/* A deferred cleanup: fn(ptr) runs at kn_arena_free unless cancelled. */
typedef struct kn_defer {
    void (*fn)(void *);
    void *ptr;
    struct kn_defer *next;
} kn_defer;

/* Returns a new arena, or NULL when even that fails. */
kn_arena *kn_arena_new(void);

/* Runs every deferred cleanup (newest first) and frees all memory. */
void kn_arena_free(kn_arena *a);

/* A second arena for memory that can go before a's (one schema's model in
 * a run): it shares a's out-of-memory target, and a frees it at the latest
 * when a is freed.  *release is what kn_defer_run(a, *release) takes to free
 * it earlier.  Never returns NULL (a failure jumps to a's target). */
kn_arena *kn_arena_child(kn_arena *a, kn_defer **release);

/* Installs the jump target for allocation failure (NULL: abort-free
 * fallback is not offered; every entry point must install one). */
void kn_arena_set_oom(kn_arena *a, jmp_buf *target);

/* Jumps to the arena's OOM target.  Never returns. */
_Noreturn void kn_arena_oom(kn_arena *a);

/* Zeroed memory owned by the arena.  Never returns NULL. */
void *kn_alloc(kn_arena *a, size_t size);

/* Array of n elements of size bytes each, overflow-checked. */
void *kn_alloc_array(kn_arena *a, size_t n, size_t size);

/* NUL-terminated copies owned by the arena. */
char *kn_strndup(kn_arena *a, const char *s, size_t len);
char *kn_strdup(kn_arena *a, const char *s);
char *kn_printf(kn_arena *a, const char *fmt, ...)
    __attribute__((format(printf, 2, 3)));
char *kn_vprintf(kn_arena *a, const char *fmt, va_list ap)
    __attribute__((format(printf, 2, 0)));

/* Registers fn(ptr) to run at kn_arena_free.  Register first, acquire the
 * resource second, then store it in the returned record's ptr. */
kn_defer *kn_arena_defer(kn_arena *a, void (*fn)(void *), void *ptr);

/* Runs a deferred cleanup now and removes it from the list. */
void kn_defer_run(kn_arena *a, kn_defer *d);

/* Heap allocation with the same failure policy, for buffers that grow and
 * shrink (CSV rows).  The caller frees them with free(), typically from a
 * deferred cleanup.  kn_xrealloc(a, NULL, n) allocates. */
void *kn_xrealloc(kn_arena *a, void *p, size_t size);

/* Growable array of fixed-size elements whose storage lives on the heap and
 * is released by a deferred cleanup; the struct itself is arena memory. */
typedef struct kn_vec {
    void *data;
    size_t len, cap, elem;
    kn_arena *arena;
    kn_defer *defer;
} kn_vec;

kn_vec *kn_vec_new(kn_arena *a, size_t elem);
/* Appends one element (copied from elem) and returns a pointer to it. */
void *kn_vec_push(kn_vec *v, const void *elem);
#define KN_VEC_AT(v, type, i) (((type *)(v)->data)[i])

/* Test builds (meson -Dalloc_fail=true) fail the N-th allocation, where N
 * comes from the environment variable KNOWABLE_FAIL_ALLOC. */
bool kn_alloc_fail_now(void);

#endif

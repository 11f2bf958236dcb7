/* entry.h - the prologue every public entry point shares: a fresh arena
 * whose allocation failure lands back in the entry point's own frame,
 * frees the arena, says "out of memory" and returns KN_EXIT_FAILED (the
 * one out-of-memory path of DEVELOPERS.md).  setjmp must run in the frame
 * that stays alive, hence a macro rather than a function. */
#ifndef KN_ENTRY_H
#define KN_ENTRY_H

#include <knowable/knowable.h>

#include <setjmp.h>
#include <stdio.h>

#include "../util/arena.h"

#define KN_ENTRY_ARENA(a, err)                                                                                   \
    kn_arena *a = kn_arena_new();                                                                                \
    jmp_buf a##_oom;                                                                                             \
    if (!a || setjmp(a##_oom)) {                                                                                 \
        kn_arena_free(a);                                                                                        \
        fputs("knowable: out of memory\n", (err));                                                               \
        return KN_EXIT_FAILED;                                                                                   \
    }                                                                                                            \
    kn_arena_set_oom(a, &a##_oom)

#endif

/* hash.h - 64-bit FNV-1a (Fowler, Noll and Vo), for fingerprints and hash
 * tables.  Not for anything an attacker must not steer: it is not keyed. */
#ifndef KN_UTIL_HASH_H
#define KN_UTIL_HASH_H

#include <stddef.h>
#include <stdint.h>

#define KN_HASH_INIT 0xcbf29ce484222325ull

static inline uint64_t kn_hash_bytes(uint64_t h, const void *p, size_t n)
{
    const unsigned char *b = p;
    for (size_t i = 0; i < n; i++) {
        h ^= b[i];
        h *= 0x100000001b3ull;
    }
    return h;
}

#endif

/* hash.h - 64-bit FNV-1a (Fowler, Noll and Vo), for fingerprints and the
 * data's tallies, where the same bytes must hash the same in every run.
 * Tables whose keys come from a schema (names, a mapping's keys) hash with
 * kn_hash_keyed instead: a file crafted so that its keys share a slot
 * would otherwise make every lookup walk all of them. */
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

/* A seed drawn once per process (getrandom, else the clock and the
 * address space's layout). */
uint64_t kn_hash_seed(void);

/* FNV-1a from the process's seed, then a finaliser (MurmurHash3's fmix64)
 * so that the low bits a table uses depend on every byte and on the seed.
 * The value differs from run to run: never for output or its order. */
static inline uint64_t kn_hash_keyed(const void *p, size_t n)
{
    uint64_t h = kn_hash_bytes(kn_hash_seed(), p, n);
    h ^= h >> 33;
    h *= 0xff51afd7ed558ccdull;
    h ^= h >> 33;
    h *= 0xc4ceb9fe1a85ec53ull;
    h ^= h >> 33;
    return h;
}

#endif

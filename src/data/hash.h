/* hash.h - the one hash of the data checks: field texts chained into 64-bit
 * keys (dictionary slots, feature rows across a split, entities,
 * quasi-identifier tuples).  Inline because it runs once per cell.
 *
 * A row or tuple is hashed by kn_hash_field over each field in order, from
 * KN_HASH_START, then kn_hash_finish.  KN_HASH_START is the process's seed
 * (kn_hash_seed): a file cannot be crafted to collide (a block equal to the
 * chain's state would zero it, and the multiply is invertible) without
 * knowing it, and no output depends on a hash's value or on a table's
 * order (ties go to the lowest line).  The length goes in with each field,
 * so ("ab", "c") and ("a", "bc") differ.  Tuples are compared by these 64
 * bits alone: two distinct tuples collide with a chance of about
 * n^2 / 2^65 for n distinct tuples (3e-8 for a million). */
#ifndef KN_DATA_HASH_H
#define KN_DATA_HASH_H

#include <stddef.h>
#include <stdint.h>
#include <string.h>

#include "../util/hash.h"

#define KN_HASH_START kn_hash_seed()

/* The splitmix64 finaliser (Steele, Lea and Flood, 2014): every output bit
 * depends on every input bit. */
static inline uint64_t kn_mix64(uint64_t h)
{
    h ^= h >> 30;
    h *= UINT64_C(0xbf58476d1ce4e5b9);
    h ^= h >> 27;
    h *= UINT64_C(0x94d049bb133111eb);
    h ^= h >> 31;
    return h;
}

/* One multiply-fold step: the 128-bit product of a and b, high half xor
 * low half (the mixing step of wyhash, Wang Yi, 2019). */
static inline uint64_t kn_mum(uint64_t a, uint64_t b)
{
    __extension__ typedef unsigned __int128 kn_u128;
    kn_u128 r = (kn_u128)a * b;
    return (uint64_t)(r >> 64) ^ (uint64_t)r;
}

static inline uint64_t kn_load32(const char *s)
{
    uint32_t w;
    memcpy(&w, s, 4);
    return w;
}

/* The bytes of a text of at most 8 bytes as one word, without a
 * variable-length copy: two overlapping 4-byte loads, or the first, middle
 * and last byte below 4 bytes.  Given the length, the word determines the
 * text. */
static inline uint64_t kn_short_word(const char *s, size_t len)
{
    if (len >= 4) {
        return kn_load32(s) | kn_load32(s + len - 4) << 32;
    }
    if (len > 0) {
        return (uint64_t)(unsigned char)s[0] | (uint64_t)(unsigned char)s[len / 2] << 8 |
               (uint64_t)(unsigned char)s[len - 1] << 16;
    }
    return 0;
}

/* Chains s[0..len) onto h, eight bytes per multiply. */
static inline uint64_t kn_hash_field(uint64_t h, const char *s, size_t len)
{
    h = kn_mum(h ^ UINT64_C(0xa0761d6478bd642f), len ^ UINT64_C(0xe7037ed1a0b428db));
    while (len >= 8) {
        uint64_t w;
        memcpy(&w, s, 8);
        h = kn_mum(h ^ w, UINT64_C(0x8ebc6af09c88c6e3));
        s += 8;
        len -= 8;
    }
    if (len) {
        h = kn_mum(h ^ kn_short_word(s, len), UINT64_C(0x589965cc75374cc3));
    }
    return h;
}

static inline uint64_t kn_hash_finish(uint64_t h)
{
    return kn_mix64(h);
}

#endif

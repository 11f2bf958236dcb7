/* names.c - open-addressing hash map from names to pointers. */
#include "names.h"

#include <string.h>
#include <sys/random.h>
#include <time.h>

#include "hash.h"

typedef struct slot {
    const char *name;
    void *value;
    uint64_t hash;
} slot;

struct kn_name_map {
    kn_arena *arena;
    slot *slots;
    size_t cap, count;
    const char **order;
    size_t order_cap;
};

kn_name_map *kn_names_new_sized(kn_arena *a, size_t n)
{
    kn_name_map *m = kn_alloc(a, sizeof *m);
    m->arena = a;
    size_t cap = 16;
    while (cap / 4 * 3 < n + 1 && cap < ((size_t)1 << 40)) {
        cap *= 2;
    }
    m->cap = cap;
    m->slots = kn_alloc_array(a, m->cap, sizeof(slot));
    m->order_cap = n > 16 ? n : 16;
    m->order = kn_alloc_array(a, m->order_cap, sizeof(char *));
    return m;
}

kn_name_map *kn_names_new(kn_arena *a)
{
    return kn_names_new_sized(a, 0);
}

uint64_t kn_hash_seed(void)
{
    static uint64_t seed;
    static bool drawn;
    if (!drawn) {
        if (getrandom(&seed, sizeof seed, GRND_NONBLOCK) != (ssize_t)sizeof seed) {
            struct timespec ts;
            clock_gettime(CLOCK_MONOTONIC, &ts);
            seed = (uint64_t)ts.tv_nsec ^ ((uint64_t)ts.tv_sec << 32) ^ (uint64_t)(uintptr_t)&ts;
        }
        seed ^= KN_HASH_INIT;
        drawn = true;
    }
    return seed;
}

static uint64_t hash_name(const char *s)
{
    return kn_hash_keyed(s, strlen(s));
}

static slot *find(slot *slots, size_t cap, const char *name, uint64_t h)
{
    size_t i = (size_t)h & (cap - 1);
    for (;;) {
        slot *s = &slots[i];
        if (!s->name || (s->hash == h && strcmp(s->name, name) == 0)) {
            return s;
        }
        i = (i + 1) & (cap - 1);
    }
}

static void grow(kn_name_map *m)
{
    size_t cap = m->cap * 2;
    slot *slots = kn_alloc_array(m->arena, cap, sizeof(slot));
    for (size_t i = 0; i < m->cap; i++) {
        if (m->slots[i].name) {
            *find(slots, cap, m->slots[i].name, m->slots[i].hash) = m->slots[i];
        }
    }
    m->slots = slots;
    m->cap = cap;
}

bool kn_names_put(kn_name_map *m, const char *name, void *value)
{
    if ((m->count + 1) * 4 > m->cap * 3) {
        grow(m);
    }
    uint64_t h = hash_name(name);
    slot *s = find(m->slots, m->cap, name, h);
    if (s->name) {
        return false;
    }
    s->name = name;
    s->value = value;
    s->hash = h;
    if (m->count == m->order_cap) {
        const char **order = kn_alloc_array(m->arena, m->order_cap * 2, sizeof(char *));
        memcpy(order, m->order, m->count * sizeof(char *));
        m->order = order;
        m->order_cap *= 2;
    }
    m->order[m->count++] = name;
    return true;
}

void *kn_names_get(const kn_name_map *m, const char *name)
{
    if (!m || !name) {
        return NULL;
    }
    slot *s = find(m->slots, m->cap, name, hash_name(name));
    return s->name ? s->value : NULL;
}

size_t kn_names_count(const kn_name_map *m)
{
    return m->count;
}

const char *kn_names_at(const kn_name_map *m, size_t i)
{
    return m->order[i];
}

/* dict.c - open addressing with linear probing over 64-bit hashes; a value
 * of up to 8 bytes is compared as one word (see dict.h). */
#include "dict.h"

#include "hash.h"

struct kn_dict {
    kn_arena *a;
    uint32_t *slots; /* 0: empty, else id */
    uint64_t *hashes;
    size_t cap;      /* power of two */
    const char **text;
    size_t *len;
    uint64_t *word;  /* kn_short_word of a value of up to 8 bytes, else its first 8 bytes */
    size_t n;        /* ids in use, id 0 included */
    size_t text_cap;
    size_t bytes, max_levels, max_text;
    bool full;
};

kn_dict *kn_dict_new(kn_arena *a, size_t max_levels, size_t max_text)
{
    kn_dict *d = kn_alloc(a, sizeof *d);
    d->a = a;
    d->cap = 16;
    d->slots = kn_alloc_array(a, d->cap, sizeof *d->slots);
    d->hashes = kn_alloc_array(a, d->cap, sizeof *d->hashes);
    d->text_cap = 8;
    d->text = kn_alloc_array(a, d->text_cap, sizeof *d->text);
    d->len = kn_alloc_array(a, d->text_cap, sizeof *d->len);
    d->word = kn_alloc_array(a, d->text_cap, sizeof *d->word);
    d->text[0] = "";
    d->n = 1;
    d->max_levels = max_levels;
    d->max_text = max_text;
    return d;
}

static void grow(kn_dict *d)
{
    size_t cap = d->cap * 2;
    uint32_t *slots = kn_alloc_array(d->a, cap, sizeof *slots);
    uint64_t *hashes = kn_alloc_array(d->a, cap, sizeof *hashes);
    for (size_t i = 0; i < d->cap; i++) {
        if (d->slots[i]) {
            size_t j = d->hashes[i] & (cap - 1);
            while (slots[j]) {
                j = (j + 1) & (cap - 1);
            }
            slots[j] = d->slots[i];
            hashes[j] = d->hashes[i];
        }
    }
    d->slots = slots;
    d->hashes = hashes;
    d->cap = cap;
}

uint32_t kn_dict_id(kn_dict *d, const char *s, size_t len)
{
    uint64_t w, h;
    if (len <= 8) {
        w = kn_short_word(s, len);
        h = kn_mix64(w ^ ((uint64_t)len << 58) ^ kn_hash_seed()); /* seeded: the slots cannot be chosen */
    } else {
        memcpy(&w, s, 8);
        h = kn_hash_finish(kn_hash_field(KN_HASH_START, s, len));
    }
    size_t mask = d->cap - 1, i = h & mask;
    for (; d->slots[i]; i = (i + 1) & mask) {
        uint32_t id = d->slots[i];
        if (d->hashes[i] == h && d->len[id] == len && d->word[id] == w &&
            (len <= 8 || memcmp(d->text[id] + 8, s + 8, len - 8) == 0)) {
            return id;
        }
    }
    if (d->full || d->n > d->max_levels || d->bytes + len > d->max_text) {
        d->full = true;
        return KN_DICT_OTHER;
    }
    if (d->n == d->text_cap) {
        size_t cap = d->text_cap * 2;
        const char **text = kn_alloc_array(d->a, cap, sizeof *text);
        size_t *lens = kn_alloc_array(d->a, cap, sizeof *lens);
        uint64_t *words = kn_alloc_array(d->a, cap, sizeof *words);
        memcpy(text, d->text, d->n * sizeof *text);
        memcpy(lens, d->len, d->n * sizeof *lens);
        memcpy(words, d->word, d->n * sizeof *words);
        d->text = text;
        d->len = lens;
        d->word = words;
        d->text_cap = cap;
    }
    uint32_t id = (uint32_t)d->n++;
    d->text[id] = kn_strndup(d->a, s, len);
    d->len[id] = len;
    d->word[id] = w;
    d->bytes += len;
    d->slots[i] = id;
    d->hashes[i] = h;
    if (d->n * 2 > d->cap) {
        grow(d);
    }
    return id;
}

size_t kn_dict_levels(const kn_dict *d)
{
    return d->n - 1;
}

bool kn_dict_full(const kn_dict *d)
{
    return d->full;
}

const char *kn_dict_text(const kn_dict *d, uint32_t id, size_t *len)
{
    if (id == 0 || id >= d->n) {
        *len = 0;
        return "";
    }
    *len = d->len[id];
    return d->text[id];
}

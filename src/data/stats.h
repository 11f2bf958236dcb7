/* stats.h - the statistics behind the data checks (SPEC §4.7): separation
 * of a binary target by one numeric score (ROC AUC), by one categorical
 * feature (uncertainty coefficient), k-anonymity group sizes, rows shared
 * between training and test, and a reservoir sample that caps the rows
 * kept at --max-rows.  Hands on plain numbers; deciding what is a finding
 * (thresholds, messages) is the caller's job.
 *
 * Memory: every accumulator lives in the caller's arena.  Tables that grow
 * (hash tables, sort buffers) are heap memory from kn_xrealloc, released by
 * a deferred cleanup (kn_arena_defer) when the arena is freed, and given
 * back at once when a table doubles or a sort is done, so peak memory is
 * about twice the live table.  Allocation failure longjmps (arena.h).
 *
 * Hashing: row and tuple identities (kn_groups, kn_overlap) are 64-bit
 * hashes from src/data/hash.h; see there for the chance of a collision.
 * Categories reach kn_uncertainty_ids as ids of src/data/dict.h, compared
 * exactly. */
#ifndef KN_DATA_STATS_H
#define KN_DATA_STATS_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "../util/arena.h"

/* ---- ROC AUC ------------------------------------------------------------ */

typedef struct kn_auc {
    double auc;        /* P(score of a positive > score of a negative) + P(tie) / 2 */
    double separation; /* max(auc, 1 - auc): separation in either direction */
    size_t n_pos, n_neg;
} kn_auc;

/* ROC AUC of score against a binary target (positive[i] true for the
 * positive class), by the Mann-Whitney U statistic with average ranks for
 * ties (one sort, O(n log n)), counted per tie group in exact integers.
 * Rows whose score is NaN are left out.  Returns false (and *out with the
 * class counts, auc 0.5) when either class is empty.  Scratch memory is
 * released before returning. */
bool kn_stats_auc(kn_arena *a, const double *score, const bool *positive, size_t n, kn_auc *out);

/* One tie group of the rank sum, in ascending order of score: pos and neg
 * rows share one score; neg_below counts the negatives of lower scores.
 * Twice the Mann-Whitney U grows by pos * (2 neg_below + neg) (average
 * ranks for ties), in exact integers.  The one step of every AUC in
 * knowable: the sample's sorted scores, a database's distinct values
 * (kn_stats_auc_levels) and the engine's own window sum (src/data/sql.c)
 * all add their groups this way. */
static inline void kn_rank_step(uint64_t *two_u, uint64_t *neg_below, uint64_t pos, uint64_t neg)
{
    *two_u += pos * (2 * *neg_below + neg);
    *neg_below += neg;
}

/* The AUC from twice U and the class sizes: two_u / (2 n_pos n_neg), and
 * its separation.  False (auc 0.5) when a class is empty. */
bool kn_auc_finish(uint64_t two_u, uint64_t n_pos, uint64_t n_neg, kn_auc *out);

/* ROC AUC from per-distinct-value counts: score[i] held by pos[i] rows of
 * the positive class and neg[i] of the negative one (any order; a NaN
 * score is left out).  Equal to kn_stats_auc over the rows the counts
 * stand for. */
bool kn_stats_auc_levels(kn_arena *a, const double *score, const uint64_t *pos, const uint64_t *neg, size_t n,
                         kn_auc *out);

/* ---- uncertainty coefficient -------------------------------------------- */

typedef struct kn_uncertainty {
    double u;    /* U(Y | X) = I(Y; X) / H(Y), in [0, 1]; 0 when H(Y) = 0 */
    double mi;   /* I(Y; X), natural log (nats) */
    double h_y;  /* H(Y), natural log */
    size_t n;    /* pairs counted */
    size_t x_levels, y_levels; /* distinct values seen among the pairs */
} kn_uncertainty;

/* Stores H(Y) and I(Y; X) in out, clamped to 0 <= I <= H (rounding can
 * step outside), and U = I / H (0 when H is 0). */
void kn_uncertainty_set(kn_uncertainty *out, double h_y, double mi);

/* Tables of at most this many cells are counted in an array; larger ones
 * by sorting the pairs. */
#define KN_UNCERTAINTY_TABLE_MAX (1u << 22)

/* The uncertainty coefficient U(Y | X) = I(Y; X) / H(Y) (Theil's U) of
 * the pairs (x[i], y[i]), i < n, given as dictionary ids: x in [0, nx),
 * y in [0, ny); a pair with an id 0 (no value) is not counted.  Natural
 * logarithms, I clamped to [0, H(Y)].  Returns false when no pair
 * counts.  The one implementation of U in knowable: the data checks and
 * the reference probe (tests/ref/stats_probe.c) call it. */
bool kn_uncertainty_ids(kn_arena *a, const uint32_t *x, const uint32_t *y, size_t n, size_t nx, size_t ny,
                        kn_uncertainty *out);

/* The same over pairs that each stand for w[i] rows (a database's GROUP
 * BY counts; w NULL: one row each).  out->n is the rows counted. */
bool kn_uncertainty_weighted(kn_arena *a, const uint32_t *x, const uint32_t *y, const uint64_t *w, size_t n,
                             size_t nx, size_t ny, kn_uncertainty *out);

/* Quantile bins: code[i] = 0 when v[i] is NaN, else 1 + the number of cut
 * points <= v[i], where the cut points are the values at ranks
 * floor(m * b / bins), b = 1..bins-1, of the m sorted non-NaN values
 * (equal cut points merge bins, so a value never straddles two bins).
 * Returns the number of distinct codes used, NaN excluded. */
size_t kn_quantile_bins(kn_arena *a, const double *v, size_t n, size_t bins, uint32_t *code);

/* The same where v[i] stands for w[i] rows (w NULL: one each): the cut
 * points are those of the rows the values stand for. */
size_t kn_quantile_bins_weighted(kn_arena *a, const double *v, const uint64_t *w, size_t n, size_t bins,
                                 uint32_t *code);

/* ---- k-anonymity ------------------------------------------------------- */

typedef struct kn_groups kn_groups;

typedef struct kn_kanon {
    size_t rows, groups;
    size_t smallest;          /* size of the smallest group (0 when no rows) */
    uint64_t smallest_line;   /* CSV line of the first row of a smallest group */
    size_t rows_below_k;      /* rows in groups of fewer than k rows */
    size_t groups_below_k;
} kn_kanon;

/* Groups of rows with equal quasi-identifier tuples, for k-anonymity
 * (Sweeney, 2002). */
kn_groups *kn_groups_new(kn_arena *a);

/* Adds one row whose quasi-identifier tuple has hash tuple_hash (from
 * src/data/hash.h), first seen on CSV line `line`. */
void kn_groups_add(kn_groups *g, uint64_t tuple_hash, uint64_t line);

/* k-anonymity (Sweeney, 2002): smallest equivalence-class size and the rows
 * and classes smaller than k. */
void kn_groups_kanon(const kn_groups *g, size_t k, kn_kanon *out);

/* A database's histogram instead of rows: `groups` groups of `size` rows
 * each (SELECT group_size, COUNT(*) ... GROUP BY group_size). */
void kn_groups_add_sizes(kn_groups *g, size_t size, size_t groups);

/* Adds `groups` groups of `size` rows (the first row of one on `line`, 0
 * if unknown) to a k-anonymity tally; kn_groups_kanon is this over every
 * group.  *out starts zeroed. */
void kn_kanon_add(kn_kanon *out, size_t k, size_t size, size_t groups, uint64_t line);

/* ---- rows shared across a split ----------------------------------------- */

typedef struct kn_overlap kn_overlap;

typedef struct kn_overlap_result {
    size_t train_rows, test_rows;
    size_t shared_keys;        /* distinct keys present on both sides */
    size_t test_rows_shared;   /* test rows whose key also occurs in training */
    size_t train_rows_shared;  /* training rows whose key also occurs in test */
    uint64_t first_test_line;  /* CSV line of the first test row with a shared key, 0 if none */
    const char *first_key;     /* a database: the least shared key (entities), or NULL */
} kn_overlap_result;

/* Keys (row hashes, or hashes of an entity value) seen on the training and
 * on the test side of a split: identical feature rows across the split,
 * or one entity on both sides. */
kn_overlap *kn_overlap_new(kn_arena *a);
void kn_overlap_add(kn_overlap *o, uint64_t key, bool test_side, uint64_t line);
void kn_overlap_result_get(kn_overlap *o, kn_overlap_result *out);

/* A database's counts (one aggregate row): kn_overlap_result_get then
 * returns them. */
void kn_overlap_set(kn_overlap *o, const kn_overlap_result *r);

/* ---- reservoir sampling --------------------------------------------------- */

/* xoshiro256** (Blackman and Vigna, 2018), seeded through splitmix64. */
typedef struct kn_rng {
    uint64_t s[4];
} kn_rng;
void kn_rng_seed(kn_rng *r, uint64_t seed);
uint64_t kn_rng_next(kn_rng *r);
/* Uniform in [0, n) without modulo bias (draws below 2^64 mod n are
 * rejected, as OpenBSD's arc4random_uniform does); n must be > 0. */
uint64_t kn_rng_below(kn_rng *r, uint64_t n);

/* Reservoir sampling, Algorithm R (Vitter, 1985): offers a stream one item
 * at a time and keeps a uniform sample of at most cap items. */
typedef struct kn_reservoir {
    size_t cap;
    uint64_t seen;
    kn_rng rng;
} kn_reservoir;

#define KN_RESERVOIR_SKIP SIZE_MAX

void kn_reservoir_init(kn_reservoir *rs, size_t cap, uint64_t seed);
/* For the next item of the stream: the slot in [0, cap) where the caller
 * stores it (overwriting what was there), or KN_RESERVOIR_SKIP. */
size_t kn_reservoir_offer(kn_reservoir *rs);

#endif

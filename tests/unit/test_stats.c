/* test_stats.c - unit tests of src/data/stats.c: Mann-Whitney AUC,
 * uncertainty coefficient, k-anonymity groups, split overlap, row hashes,
 * the seeded generator and reservoir sampling. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include <cmocka.h>

#include "../../src/data/dict.h"
#include "../../src/data/hash.h"
#include "../../src/data/stats.h"

static int setup(void **state)
{
    kn_arena *a = kn_arena_new();
    if (!a) {
        return -1;
    }
    *state = a;
    return 0;
}

static int teardown(void **state)
{
    kn_arena_free(*state);
    return 0;
}

#define N_OF(arr) (sizeof(arr) / sizeof *(arr))
#define assert_close(a, b) assert_true(fabs((a) - (b)) < 1e-12)

/* ---- AUC ---- */

static void test_auc_perfect_and_reversed(void **state)
{
    const double s[] = {0.1, 0.2, 0.3, 0.8, 0.9};
    const bool y[] = {false, false, false, true, true};
    const bool rev[] = {true, true, true, false, false};
    kn_auc r;
    assert_true(kn_stats_auc(*state, s, y, N_OF(s), &r));
    assert_close(r.auc, 1.0);
    assert_int_equal(r.n_pos, 2);
    assert_int_equal(r.n_neg, 3);
    assert_true(kn_stats_auc(*state, s, rev, N_OF(s), &r));
    assert_close(r.auc, 0.0);
    assert_close(r.separation, 1.0);
}

static void test_auc_ties_average_ranks(void **state)
{
    /* positives {2, 3}, negatives {1, 2}: 1 + 0.5 + 1 + 1 of 4 pairs. */
    const double s[] = {1, 2, 2, 3};
    const bool y[] = {false, false, true, true};
    kn_auc r;
    assert_true(kn_stats_auc(*state, s, y, N_OF(s), &r));
    assert_close(r.auc, 0.875);
    assert_close(r.separation, 0.875);
}

static void test_auc_all_equal_scores(void **state)
{
    const double s[] = {4, 4, 4, 4, 4, 4};
    const bool y[] = {true, false, false, true, false, false};
    kn_auc r;
    assert_true(kn_stats_auc(*state, s, y, N_OF(s), &r));
    assert_close(r.auc, 0.5);
    assert_close(r.separation, 0.5);
}

static void test_auc_single_class(void **state)
{
    const double s[] = {1, 2, 3};
    const bool y[] = {true, true, true};
    kn_auc r;
    assert_false(kn_stats_auc(*state, s, y, N_OF(s), &r));
    assert_int_equal(r.n_pos, 3);
    assert_int_equal(r.n_neg, 0);
    assert_close(r.auc, 0.5);
}

static void test_auc_empty(void **state)
{
    kn_auc r;
    assert_false(kn_stats_auc(*state, NULL, NULL, 0, &r));
    assert_int_equal(r.n_pos + r.n_neg, 0);
}

static void test_auc_nan_left_out(void **state)
{
    const double s[] = {NAN, 1, 2, NAN};
    const bool y[] = {true, false, true, false};
    kn_auc r;
    assert_true(kn_stats_auc(*state, s, y, N_OF(s), &r));
    assert_close(r.auc, 1.0);
    assert_int_equal(r.n_pos, 1);
    assert_int_equal(r.n_neg, 1);
}

static void test_auc_signed_zero_and_infinities(void **state)
{
    const double s[] = {-0.0, 0.0, -INFINITY, INFINITY, -1e300, 1e-300};
    const bool y[] = {true, false, false, true, false, true};
    kn_auc r;
    assert_true(kn_stats_auc(*state, s, y, N_OF(s), &r));
    /* positives {-0, inf, 1e-300}, negatives {0, -inf, -1e300}:
     * -0 beats 2 and ties 0; inf and 1e-300 beat all 3: (2.5 + 3 + 3) / 9 */
    assert_close(r.auc, 8.5 / 9.0);
}

/* Against the definition, pair by pair, on seeded data spread over many
 * magnitudes so every radix pass is used. */
static void test_auc_matches_pairwise_definition(void **state)
{
    kn_rng g;
    kn_rng_seed(&g, 99);
    enum { N = 700 };
    static double s[N];
    static bool y[N];
    for (size_t i = 0; i < N; i++) {
        uint64_t r = kn_rng_next(&g);
        double mag = ldexp(1.0, (int)(r % 200) - 100);
        s[i] = (r & 1024) ? -mag * (double)(r % 7) : mag * (double)(r % 5);
        y[i] = ((r >> 20) % 3) == 0;
    }
    double wins = 0;
    size_t np = 0, nn = 0;
    for (size_t i = 0; i < N; i++) {
        if (y[i]) {
            np++;
        } else {
            nn++;
        }
        for (size_t j = 0; j < N; j++) {
            if (y[i] && !y[j]) {
                wins += s[i] > s[j] ? 1.0 : s[i] == s[j] ? 0.5 : 0.0;
            }
        }
    }
    kn_auc r;
    assert_true(kn_stats_auc(*state, s, y, N, &r));
    assert_close(r.auc, wins / ((double)np * (double)nn));
}

/* ---- uncertainty coefficient ---- */

/* The pairs through the data checks' path: texts to dictionary ids, then
 * kn_uncertainty_ids. */
static bool u_lens(void **state, const char *const *x, const size_t *xl, const char *const *y, size_t n,
                   kn_uncertainty *u)
{
    kn_dict *dx = kn_dict_new(*state, 100000, 1u << 24), *dy = kn_dict_new(*state, 100000, 1u << 24);
    uint32_t *xi = kn_alloc_array(*state, n + 1, sizeof *xi), *yi = kn_alloc_array(*state, n + 1, sizeof *yi);
    for (size_t i = 0; i < n; i++) {
        xi[i] = kn_dict_id(dx, x[i], xl ? xl[i] : strlen(x[i]));
        yi[i] = kn_dict_id(dy, y[i], strlen(y[i]));
    }
    return kn_uncertainty_ids(*state, xi, yi, n, kn_dict_levels(dx) + 1, kn_dict_levels(dy) + 1, u);
}

static bool u_of(void **state, const char *const *x, const char *const *y, size_t n, kn_uncertainty *u)
{
    return u_lens(state, x, NULL, y, n, u);
}

static void test_u_feature_equals_target(void **state)
{
    const char *x[] = {"north", "south", "north", "east", "south"};
    kn_uncertainty u;
    assert_true(u_of(state, x, x, N_OF(x), &u));
    assert_close(u.u, 1.0);
    assert_close(u.mi, u.h_y);
    assert_int_equal(u.x_levels, 3);
    assert_int_equal(u.y_levels, 3);
}

static void test_u_constant_feature(void **state)
{
    const char *x[] = {"k", "k", "k", "k"};
    const char *y[] = {"late", "on time", "late", "on time"};
    kn_uncertainty u;
    assert_true(u_of(state, x, y, N_OF(x), &u));
    assert_close(u.u, 0.0);
    assert_close(u.h_y, log(2.0));
}

static void test_u_single_class_target(void **state)
{
    const char *x[] = {"a", "b", "c"};
    const char *y[] = {"yes", "yes", "yes"};
    kn_uncertainty u;
    assert_true(u_of(state, x, y, N_OF(x), &u));
    assert_close(u.h_y, 0.0);
    assert_close(u.u, 0.0);
}

static void test_u_hand_computed(void **state)
{
    /* x: a a b b; y: 0 1 0 0.  H(Y) = -(3/4 ln 3/4 + 1/4 ln 1/4);
     * H(Y|X) = 1/2 ln 2 (x = a splits evenly, x = b is pure). */
    const char *x[] = {"a", "a", "b", "b"};
    const char *y[] = {"0", "1", "0", "0"};
    kn_uncertainty u;
    assert_true(u_of(state, x, y, N_OF(x), &u));
    double h = -(0.75 * log(0.75) + 0.25 * log(0.25));
    double mi = h - 0.5 * log(2.0);
    assert_close(u.h_y, h);
    assert_close(u.mi, mi);
    assert_close(u.u, mi / h);
    assert_int_equal(u.n, 4);
}

static void test_u_strings_compared_exactly(void **state)
{
    /* "a" and "a\0b" differ only after a NUL; "" is a category of its own. */
    const char *x[] = {"a", "a\0b", ""};
    const size_t xl[] = {1, 3, 0};
    const char *y[] = {"0", "1", "1"};
    kn_uncertainty u;
    assert_true(u_lens(state, x, xl, y, 3, &u));
    assert_int_equal(u.x_levels, 3);
    assert_close(u.u, 1.0);
}

static void test_u_id_zero_not_counted(void **state)
{
    /* Id 0 is "no value" (a missing cell): such pairs are left out, so a
     * feature that is missing exactly when y = 1 says nothing here. */
    uint32_t x[] = {1, 1, 2, 0, 0, 0};
    uint32_t y[] = {1, 1, 1, 2, 2, 2};
    kn_uncertainty u;
    assert_true(kn_uncertainty_ids(*state, x, y, 6, 3, 3, &u));
    assert_int_equal(u.n, 3);
    assert_int_equal(u.y_levels, 1);
    assert_close(u.u, 0.0);
    uint32_t none[] = {0, 0};
    assert_false(kn_uncertainty_ids(*state, none, y, 2, 3, 3, &u));
}

static void test_u_sorted_pairs_agree_with_table(void **state)
{
    /* More cells than KN_UNCERTAINTY_TABLE_MAX: counted by sorting pairs;
     * the same pairs with few levels declared go through the array. */
    size_t n = 3000;
    uint32_t *x = kn_alloc_array(*state, n, sizeof *x), *y = kn_alloc_array(*state, n, sizeof *y);
    for (size_t i = 0; i < n; i++) {
        x[i] = (uint32_t)(1 + (i * 7919) % 97);
        y[i] = (uint32_t)(1 + (i * 31) % 5);
    }
    kn_uncertainty small, large;
    assert_true(kn_uncertainty_ids(*state, x, y, n, 98, 6, &small));
    assert_true(kn_uncertainty_ids(*state, x, y, n, KN_UNCERTAINTY_TABLE_MAX, 6, &large));
    assert_close(small.u, large.u);
    assert_close(small.mi, large.mi);
    assert_int_equal(small.x_levels, large.x_levels);
}

static void test_dict_cap(void **state)
{
    kn_dict *d = kn_dict_new(*state, 3, 1000);
    assert_int_equal(kn_dict_id(d, "1", 1), 1);
    assert_int_equal(kn_dict_id(d, "2", 1), 2);
    assert_int_equal(kn_dict_id(d, "3", 1), 3);
    assert_false(kn_dict_full(d));
    assert_int_equal(kn_dict_id(d, "4", 1), KN_DICT_OTHER);
    assert_true(kn_dict_full(d));
    assert_int_equal(kn_dict_id(d, "1", 1), 1); /* known values keep their id */
    assert_int_equal(kn_dict_levels(d), 3);
    size_t len;
    assert_string_equal(kn_dict_text(d, 2, &len), "2");
}

static void test_dict_many_levels_grow(void **state)
{
    kn_dict *d = kn_dict_new(*state, 10000, 1u << 20);
    char buf[32];
    for (int i = 0; i < 5000; i++) {
        int n = snprintf(buf, sizeof buf, "parcel-%d", i % 2500);
        assert_int_equal(kn_dict_id(d, buf, (size_t)n), (uint32_t)(i % 2500) + 1);
    }
    assert_int_equal(kn_dict_levels(d), 2500);
}

static void test_quantile_bins(void **state)
{
    double v[] = {5, 1, 2, NAN, 3, 4, 6, 7, 8, 9, 10};
    uint32_t code[11];
    /* 10 values in 2 bins: the cut is the 6th smallest, 6. */
    size_t used = kn_quantile_bins(*state, v, 11, 2, code);
    assert_int_equal(used, 2);
    assert_int_equal(code[3], 0);
    assert_int_equal(code[0], 1);
    assert_int_equal(code[6], 2);
    assert_int_equal(code[10], 2);
    /* ties never straddle a cut */
    double t[] = {1, 1, 1, 1, 1, 1, 2, 2};
    uint32_t tc[8];
    used = kn_quantile_bins(*state, t, 8, 4, tc);
    assert_int_equal(used, 2);
    for (int i = 0; i < 6; i++) {
        assert_int_equal(tc[i], 1);
    }
    assert_int_equal(tc[7], 2);
}

/* ---- k-anonymity ---- */

static uint64_t tuple(const char *a, const char *b)
{
    uint64_t h = kn_hash_field(KN_HASH_START, a, strlen(a));
    return kn_hash_finish(kn_hash_field(h, b, strlen(b)));
}

static void test_kanon_groups(void **state)
{
    kn_groups *g = kn_groups_new(*state);
    kn_groups_add(g, tuple("1984", "N1"), 2);
    kn_groups_add(g, tuple("1984", "N1"), 3);
    kn_groups_add(g, tuple("1984", "N1"), 4);
    kn_groups_add(g, tuple("1990", "N1"), 5);
    kn_groups_add(g, tuple("1984", "N2"), 6);
    kn_groups_add(g, tuple("1984", "N2"), 7);
    kn_kanon r;
    kn_groups_kanon(g, 3, &r);
    assert_int_equal(r.rows, 6);
    assert_int_equal(r.groups, 3);
    assert_int_equal(r.smallest, 1);
    assert_int_equal(r.smallest_line, 5);
    assert_int_equal(r.groups_below_k, 2);
    assert_int_equal(r.rows_below_k, 3);
    kn_groups_kanon(g, 1, &r);
    assert_int_equal(r.rows_below_k, 0);
}

static void test_kanon_empty(void **state)
{
    kn_groups *g = kn_groups_new(*state);
    kn_kanon r;
    kn_groups_kanon(g, 5, &r);
    assert_int_equal(r.rows, 0);
    assert_int_equal(r.smallest, 0);
    assert_int_equal(r.groups_below_k, 0);
}

static void test_kanon_many_groups(void **state)
{
    kn_groups *g = kn_groups_new(*state);
    for (uint64_t i = 0; i < 20000; i++) {
        uint64_t key = i % 4000;
        kn_groups_add(g, kn_hash_finish(kn_hash_field(KN_HASH_START, (const char *)&key, sizeof key)), i + 2);
    }
    kn_kanon r;
    kn_groups_kanon(g, 6, &r);
    assert_int_equal(r.groups, 4000);
    assert_int_equal(r.smallest, 5);
    assert_int_equal(r.rows_below_k, 20000);
    assert_int_equal(r.smallest_line, 2);
}

/* ---- split overlap ---- */

static void test_overlap(void **state)
{
    kn_overlap *o = kn_overlap_new(*state);
    kn_overlap_add(o, 11, false, 2);
    kn_overlap_add(o, 22, false, 3);
    kn_overlap_add(o, 22, false, 4);
    kn_overlap_add(o, 33, true, 5);
    kn_overlap_add(o, 22, true, 9);
    kn_overlap_add(o, 22, true, 7);
    kn_overlap_result r;
    kn_overlap_result_get(o, &r);
    assert_int_equal(r.train_rows, 3);
    assert_int_equal(r.test_rows, 3);
    assert_int_equal(r.shared_keys, 1);
    assert_int_equal(r.train_rows_shared, 2);
    assert_int_equal(r.test_rows_shared, 2);
    assert_int_equal(r.first_test_line, 7);
}

static void test_overlap_none(void **state)
{
    kn_overlap *o = kn_overlap_new(*state);
    kn_overlap_add(o, 1, false, 2);
    kn_overlap_add(o, 2, true, 3);
    kn_overlap_result r;
    kn_overlap_result_get(o, &r);
    assert_int_equal(r.shared_keys, 0);
    assert_int_equal(r.first_test_line, 0);
}

/* ---- hashing ---- */

static void test_row_hash_field_boundaries(void **state)
{
    (void)state;
    assert_true(tuple("ab", "c") != tuple("a", "bc"));
    assert_true(tuple("ab", "c") == tuple("ab", "c"));
    assert_true(tuple("", "x") != tuple("x", ""));
    /* no field and one empty field differ */
    assert_true(kn_hash_finish(KN_HASH_START) != kn_hash_finish(kn_hash_field(KN_HASH_START, "", 0)));
}

static void test_hash_content(void **state)
{
    (void)state;
    uint64_t h = kn_hash_finish(kn_hash_field(KN_HASH_START, "bakery", 6));
    assert_true(h == kn_hash_finish(kn_hash_field(KN_HASH_START, "bakery", 6)));
    assert_true(h != kn_hash_finish(kn_hash_field(KN_HASH_START, "bakerz", 6)));
    assert_true(kn_hash_finish(kn_hash_field(KN_HASH_START, "", 0)) !=
                kn_hash_finish(kn_hash_field(KN_HASH_START, "\0", 1)));
    /* texts longer than a word: only the tail differs */
    assert_true(kn_hash_finish(kn_hash_field(KN_HASH_START, "croissant-0001", 14)) !=
                kn_hash_finish(kn_hash_field(KN_HASH_START, "croissant-0002", 14)));
}

/* ---- generator and reservoir ---- */

static void test_rng_reproducible(void **state)
{
    (void)state;
    kn_rng a, b, c;
    kn_rng_seed(&a, 42);
    kn_rng_seed(&b, 42);
    kn_rng_seed(&c, 43);
    int same_c = 0;
    for (int i = 0; i < 100; i++) {
        uint64_t x = kn_rng_next(&a);
        assert_true(x == kn_rng_next(&b));
        same_c += x == kn_rng_next(&c);
    }
    assert_true(same_c < 2);
}

static void test_rng_below_range_and_spread(void **state)
{
    (void)state;
    kn_rng g;
    kn_rng_seed(&g, 7);
    size_t hist[6] = {0};
    for (int i = 0; i < 60000; i++) {
        uint64_t v = kn_rng_below(&g, 6);
        assert_true(v < 6);
        hist[v]++;
    }
    for (int k = 0; k < 6; k++) {
        /* expected 10000, sd about 91: 5 sd either way */
        assert_true(hist[k] > 9540 && hist[k] < 10460);
    }
    assert_int_equal(kn_rng_below(&g, 1), 0);
}

static void test_reservoir_keeps_first_cap_items(void **state)
{
    (void)state;
    kn_reservoir rs;
    kn_reservoir_init(&rs, 4, 1);
    for (size_t i = 0; i < 4; i++) {
        assert_int_equal(kn_reservoir_offer(&rs), i);
    }
    for (int i = 0; i < 100; i++) {
        size_t s = kn_reservoir_offer(&rs);
        assert_true(s == KN_RESERVOIR_SKIP || s < 4);
    }
    kn_reservoir_init(&rs, 0, 1);
    assert_true(kn_reservoir_offer(&rs) == KN_RESERVOIR_SKIP);
}

static void test_reservoir_reproducible(void **state)
{
    (void)state;
    kn_reservoir a, b;
    kn_reservoir_init(&a, 10, 2024);
    kn_reservoir_init(&b, 10, 2024);
    for (int i = 0; i < 1000; i++) {
        assert_int_equal(kn_reservoir_offer(&a), kn_reservoir_offer(&b));
    }
}

/* Algorithm R keeps each of N items with probability cap / N. */
static void test_reservoir_uniform(void **state)
{
    (void)state;
    enum { N = 20, CAP = 5, TRIALS = 20000 };
    size_t kept[N] = {0};
    for (int t = 0; t < TRIALS; t++) {
        kn_reservoir rs;
        kn_reservoir_init(&rs, CAP, (uint64_t)t);
        int slot_item[CAP];
        for (int i = 0; i < N; i++) {
            size_t s = kn_reservoir_offer(&rs);
            if (s != KN_RESERVOIR_SKIP) {
                slot_item[s] = i;
            }
        }
        for (int s = 0; s < CAP; s++) {
            kept[slot_item[s]]++;
        }
    }
    for (int i = 0; i < N; i++) {
        /* expected 5000 (p = 1/4), sd about 61: 5 sd either way */
        assert_true(kept[i] > 4690 && kept[i] < 5310);
    }
}

/* ---- a database's groups: the same figures as the rows they stand for ---- */

/* Seeded groups (value, positive rows, negative rows) with ties across
 * groups: the AUC from the counts equals the AUC of the expanded rows. */
static void test_auc_levels_equal_rows(void **state)
{
    enum { G = 300 };
    double lv[G];
    uint64_t pos[G], neg[G];
    static double score[G * 20];
    static bool y[G * 20];
    size_t n = 0;
    kn_rng r;
    kn_rng_seed(&r, 7);
    for (size_t i = 0; i < G; i++) {
        lv[i] = (double)kn_rng_below(&r, 60) / 4.0; /* many groups share a value */
        pos[i] = kn_rng_below(&r, 8);
        neg[i] = kn_rng_below(&r, 8);
        for (uint64_t k = 0; k < pos[i] + neg[i]; k++) {
            score[n] = lv[i];
            y[n++] = k < pos[i];
        }
    }
    kn_auc a, b;
    assert_true(kn_stats_auc(*state, score, y, n, &a));
    assert_true(kn_stats_auc_levels(*state, lv, pos, neg, G, &b));
    assert_true(a.auc == b.auc); /* exact: both are integers over the same product */
    assert_int_equal(a.n_pos, b.n_pos);
    assert_int_equal(a.n_neg, b.n_neg);
}

/* kn_auc_finish from twice U and the class sizes (an engine's rank sum). */
static void test_auc_finish(void **state)
{
    (void)state;
    kn_auc a;
    assert_true(kn_auc_finish(6, 2, 3, &a)); /* U = 3 of 6 pairs */
    assert_close(a.auc, 0.5);
    assert_true(kn_auc_finish(2, 1, 4, &a)); /* U = 1 of 4 */
    assert_close(a.auc, 0.25);
    assert_close(a.separation, 0.75);
    assert_false(kn_auc_finish(0, 0, 4, &a));
    assert_close(a.auc, 0.5);
}

/* Weighted pairs give the U of the rows they stand for, through the
 * counting table and through sorted pairs alike. */
static void test_u_weighted_equals_rows(void **state)
{
    enum { G = 200 };
    uint32_t x[G], y[G];
    uint64_t w[G];
    static uint32_t xr[G * 10], yr[G * 10];
    size_t n = 0;
    kn_rng r;
    kn_rng_seed(&r, 11);
    for (size_t i = 0; i < G; i++) {
        x[i] = 1 + (uint32_t)kn_rng_below(&r, 12);
        y[i] = 1 + (uint32_t)kn_rng_below(&r, 3);
        w[i] = kn_rng_below(&r, 10);
        for (uint64_t k = 0; k < w[i]; k++) {
            xr[n] = x[i];
            yr[n++] = y[i];
        }
    }
    kn_uncertainty rows, grouped, sorted;
    assert_true(kn_uncertainty_ids(*state, xr, yr, n, 13, 4, &rows));
    assert_true(kn_uncertainty_weighted(*state, x, y, w, G, 13, 4, &grouped));
    assert_true(kn_uncertainty_weighted(*state, x, y, w, G, KN_UNCERTAINTY_TABLE_MAX, 4, &sorted));
    assert_true(fabs(rows.u - grouped.u) < 1e-12 && fabs(rows.u - sorted.u) < 1e-12);
    assert_int_equal(rows.n, grouped.n);
    assert_int_equal(rows.n, sorted.n);
    assert_int_equal(rows.x_levels, sorted.x_levels);
}

/* Quantile bins of weighted values: the codes of the rows they stand for. */
static void test_quantile_bins_weighted(void **state)
{
    double v[] = {3, 1, NAN, 2, 5, 4};
    uint64_t w[] = {2, 5, 9, 1, 0, 4};
    static double rows[32];
    size_t n = 0;
    for (size_t i = 0; i < N_OF(v); i++) {
        for (uint64_t k = 0; k < w[i]; k++) {
            rows[n++] = v[i];
        }
    }
    uint32_t code_rows[32], code[N_OF(v)];
    size_t used_rows = kn_quantile_bins(*state, rows, n, 3, code_rows);
    size_t used = kn_quantile_bins_weighted(*state, v, w, N_OF(v), 3, code);
    assert_int_equal(used, used_rows);
    n = 0;
    for (size_t i = 0; i < N_OF(v); i++) {
        for (uint64_t k = 0; k < w[i]; k++) {
            assert_int_equal(code[i], code_rows[n++]);
        }
    }
}

/* A database's histogram of group sizes gives the k-anonymity of the
 * groups it describes. */
static void test_kanon_from_sizes(void **state)
{
    kn_groups *g = kn_groups_new(*state);
    kn_groups_add_sizes(g, 1, 3); /* three groups of one row */
    kn_groups_add_sizes(g, 4, 2);
    kn_groups_add_sizes(g, 9, 1);
    kn_kanon k;
    kn_groups_kanon(g, 5, &k);
    assert_int_equal(k.rows, 3 + 8 + 9);
    assert_int_equal(k.groups, 6);
    assert_int_equal(k.smallest, 1);
    assert_int_equal(k.groups_below_k, 5);
    assert_int_equal(k.rows_below_k, 11);
    assert_int_equal(k.smallest_line, 0);
}

static void test_overlap_preset(void **state)
{
    kn_overlap *o = kn_overlap_new(*state);
    kn_overlap_result in = {.train_rows = 10, .test_rows = 4, .shared_keys = 2, .test_rows_shared = 2,
                            .train_rows_shared = 3, .first_key = "C0042"},
                      out;
    kn_overlap_set(o, &in);
    kn_overlap_result_get(o, &out);
    assert_int_equal(out.train_rows, 10);
    assert_int_equal(out.test_rows_shared, 2);
    assert_string_equal(out.first_key, "C0042");
}

int main(void)
{
#define T(f) cmocka_unit_test_setup_teardown(f, setup, teardown)
    const struct CMUnitTest tests[] = {
        T(test_auc_perfect_and_reversed),
        T(test_auc_ties_average_ranks),
        T(test_auc_all_equal_scores),
        T(test_auc_single_class),
        T(test_auc_empty),
        T(test_auc_nan_left_out),
        T(test_auc_signed_zero_and_infinities),
        T(test_auc_matches_pairwise_definition),
        T(test_u_feature_equals_target),
        T(test_u_constant_feature),
        T(test_u_single_class_target),
        T(test_u_hand_computed),
        T(test_u_strings_compared_exactly),
        T(test_u_id_zero_not_counted),
        T(test_u_sorted_pairs_agree_with_table),
        T(test_dict_cap),
        T(test_dict_many_levels_grow),
        T(test_quantile_bins),
        T(test_kanon_groups),
        T(test_kanon_empty),
        T(test_kanon_many_groups),
        T(test_overlap),
        T(test_overlap_none),
        T(test_row_hash_field_boundaries),
        T(test_hash_content),
        T(test_rng_reproducible),
        T(test_rng_below_range_and_spread),
        T(test_reservoir_keeps_first_cap_items),
        T(test_reservoir_reproducible),
        T(test_reservoir_uniform),
        T(test_auc_levels_equal_rows),
        T(test_auc_finish),
        T(test_u_weighted_equals_rows),
        T(test_quantile_bins_weighted),
        T(test_kanon_from_sizes),
        T(test_overlap_preset),
    };
#undef T
    return cmocka_run_group_tests(tests, NULL, NULL);
}

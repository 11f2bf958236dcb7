/* stats_probe.c - runs the statistics of src/data/stats.c (through the
 * dictionary and hash the data checks use) on blocks read
 * from stdin, for tests/ref/stats_ref.py.  Blocks:
 *
 *   auc N        then N lines "SCORE LABEL" (LABEL 0 or 1)
 *                -> "AUC SEPARATION N_POS N_NEG" or "undefined N_POS N_NEG"
 *   u N          then N lines "X<TAB>Y" (categories as text)
 *                -> "U MI H_Y X_LEVELS Y_LEVELS" or "empty"
 *   kanon N K    then N lines of quasi-identifier fields separated by tabs
 *                -> "SMALLEST ROWS_BELOW_K GROUPS_BELOW_K GROUPS"
 *
 * Numbers are printed with %.17g (exact round trip). */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../../src/data/dict.h"
#include "../../src/data/hash.h"
#include "../../src/data/stats.h"

static char line[1 << 16];

static bool read_line(void)
{
    if (!fgets(line, sizeof line, stdin)) {
        return false;
    }
    size_t len = strlen(line);
    if (len && line[len - 1] == '\n') {
        line[len - 1] = '\0';
    }
    return true;
}

static int run_auc(kn_arena *a, size_t n)
{
    double *score = kn_alloc_array(a, n ? n : 1, sizeof *score);
    bool *pos = kn_alloc_array(a, n ? n : 1, sizeof *pos);
    for (size_t i = 0; i < n; i++) {
        if (!read_line()) {
            return 1;
        }
        char *end;
        score[i] = strtod(line, &end);
        pos[i] = strtol(end, NULL, 10) != 0;
    }
    kn_auc r;
    if (kn_stats_auc(a, score, pos, n, &r)) {
        printf("%.17g %.17g %zu %zu\n", r.auc, r.separation, r.n_pos, r.n_neg);
    } else {
        printf("undefined %zu %zu\n", r.n_pos, r.n_neg);
    }
    return 0;
}

/* U through the production path: each text mapped to an id by the
 * sample's dictionary (src/data/dict.c), then kn_uncertainty_ids. */
static int run_u(kn_arena *a, size_t n)
{
    kn_dict *dx = kn_dict_new(a, 100000, 64u << 20), *dy = kn_dict_new(a, 100000, 64u << 20);
    uint32_t *x = kn_alloc_array(a, n ? n : 1, sizeof *x), *y = kn_alloc_array(a, n ? n : 1, sizeof *y);
    for (size_t i = 0; i < n; i++) {
        if (!read_line()) {
            return 1;
        }
        char *tab = strchr(line, '\t');
        if (!tab) {
            return 1;
        }
        x[i] = kn_dict_id(dx, line, (size_t)(tab - line));
        y[i] = kn_dict_id(dy, tab + 1, strlen(tab + 1));
    }
    kn_uncertainty u;
    if (kn_uncertainty_ids(a, x, y, n, kn_dict_levels(dx) + 1, kn_dict_levels(dy) + 1, &u)) {
        printf("%.17g %.17g %.17g %zu %zu\n", u.u, u.mi, u.h_y, u.x_levels, u.y_levels);
    } else {
        puts("empty");
    }
    return 0;
}

/* k-anonymity through the production path: the tuple hashed field by
 * field as src/data/table.c hashes quasi-identifiers, then kn_groups. */
static int run_kanon(kn_arena *a, size_t n, size_t k)
{
    kn_groups *g = kn_groups_new(a);
    for (size_t i = 0; i < n; i++) {
        if (!read_line()) {
            return 1;
        }
        uint64_t h = KN_HASH_START;
        char *p = line;
        for (;;) {
            char *tab = strchr(p, '\t');
            size_t len = tab ? (size_t)(tab - p) : strlen(p);
            h = kn_hash_field(h, p, len);
            if (!tab) {
                break;
            }
            p = tab + 1;
        }
        kn_groups_add(g, kn_hash_finish(h), i + 1);
    }
    kn_kanon r;
    kn_groups_kanon(g, k, &r);
    printf("%zu %zu %zu %zu\n", r.smallest, r.rows_below_k, r.groups_below_k, r.groups);
    return 0;
}

int main(void)
{
    kn_arena *a = kn_arena_new();
    if (!a) {
        return 2;
    }
    jmp_buf oom;
    if (setjmp(oom)) {
        kn_arena_free(a);
        fputs("stats_probe: out of memory\n", stderr);
        return 2;
    }
    kn_arena_set_oom(a, &oom);
    int rc = 0;
    while (rc == 0 && read_line()) {
        char cmd[16];
        size_t n = 0, k = 0;
        int got = sscanf(line, "%15s %zu %zu", cmd, &n, &k);
        if (got >= 2 && strcmp(cmd, "auc") == 0) {
            rc = run_auc(a, n);
        } else if (got >= 2 && strcmp(cmd, "u") == 0) {
            rc = run_u(a, n);
        } else if (got == 3 && strcmp(cmd, "kanon") == 0) {
            rc = run_kanon(a, n, k);
        } else {
            rc = 1;
        }
    }
    kn_arena_free(a);
    if (rc) {
        fputs("stats_probe: bad input\n", stderr);
    }
    return rc || ferror(stdout) ? 1 : 0;
}

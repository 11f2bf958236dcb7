/* routes_probe.c - reads a network of events with first_of events and
 * columns known at one_of several events on stdin, solves it with
 * kn_timeline_solve and prints the ranges, for the cross-check in
 * routes_ref.py (SPEC §3.3 first_of, §3.5 known.one_of).
 *
 * Input (whitespace separated):
 *   N M MOMENT F K
 *   M lines "A B LO HI": t(B) - t(A) in [LO, HI] (microseconds; HI may be "inf")
 *   F lines "E k M1 .. Mk": event E is first_of M1..Mk (E has no constraints)
 *   K lines "k M1 .. Mk": a column known at one_of M1..Mk
 * Output: "consistent" or "contradictory", then (when consistent) N lines
 * "LO HI" for the events and K lines "LO HI" for the columns' known part
 * ("-inf" / "inf" when unbounded, "none" when not placed). */
#include <inttypes.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../../src/report/diag.h"
#include "../../src/time/timeline.h"

static int64_t read_time(int *ok)
{
    char buf[64];
    if (scanf("%63s", buf) != 1) {
        *ok = 0;
        return 0;
    }
    return strcmp(buf, "inf") == 0 ? KN_TIME_INF : (int64_t)strtoll(buf, NULL, 10);
}

static void put_range(kn_interval r)
{
    if (r.lo <= -KN_TIME_INF) {
        fputs("-inf ", stdout);
    } else {
        printf("%" PRId64 " ", r.lo);
    }
    if (r.hi >= KN_TIME_INF) {
        puts("inf");
    } else {
        printf("%" PRId64 "\n", r.hi);
    }
}

static kn_ref *read_members(kn_arena *a, kn_schema *s, size_t *n_out)
{
    size_t k;
    if (scanf("%zu", &k) != 1 || k == 0 || k > s->n_events) {
        return NULL;
    }
    kn_ref *r = kn_alloc_array(a, k, sizeof *r);
    for (size_t j = 0; j < k; j++) {
        size_t m;
        if (scanf("%zu", &m) != 1 || m >= s->n_events) {
            return NULL;
        }
        r[j].name = s->events[m]->name;
        r[j].target = s->events[m];
    }
    *n_out = k;
    return r;
}

int main(void)
{
    size_t n, m, mom, nf, nk;
    if (scanf("%zu %zu %zu %zu %zu", &n, &m, &mom, &nf, &nk) != 5 || n == 0 || mom >= n || n > 100000 ||
        m > 1000000 || nf > n || nk > 100000) {
        fprintf(stderr, "routes_probe: bad header\n");
        return 2;
    }
    kn_arena *a = kn_arena_new();
    kn_sink *sink = kn_sink_new(a);
    kn_schema *s = kn_alloc(a, sizeof *s);
    s->path = "probe";
    s->n_events = n;
    s->events = kn_alloc_array(a, n, sizeof *s->events);
    size_t *from = kn_alloc_array(a, m + 1, sizeof *from), *to = kn_alloc_array(a, m + 1, sizeof *to);
    int64_t *lo = kn_alloc_array(a, m + 1, sizeof *lo), *hi = kn_alloc_array(a, m + 1, sizeof *hi);
    size_t *per = kn_alloc_array(a, n, sizeof *per);
    for (size_t i = 0; i < m; i++) {
        int ok = 1;
        if (scanf("%zu %zu", &from[i], &to[i]) != 2 || from[i] >= n || to[i] >= n) {
            fprintf(stderr, "routes_probe: bad edge %zu\n", i);
            return 2;
        }
        lo[i] = read_time(&ok);
        hi[i] = read_time(&ok);
        if (!ok) {
            return 2;
        }
        per[to[i]]++;
    }
    for (size_t i = 0; i < n; i++) {
        kn_event *e = kn_alloc(a, sizeof *e);
        e->name = kn_printf(a, "e%zu", i);
        e->index = i;
        e->cons = kn_alloc_array(a, per[i] + 1, sizeof *e->cons);
        s->events[i] = e;
    }
    for (size_t i = 0; i < m; i++) {
        kn_event *b = s->events[to[i]];
        kn_constraint *c = &b->cons[b->n_cons++];
        c->earlier = s->events[from[i]];
        c->later = b;
        c->lag.present = true;
        c->lag.lo = lo[i];
        c->lag.hi = hi[i];
        c->ref.name = c->earlier->name;
        c->ref.target = c->earlier;
    }
    kn_node *mark = kn_alloc(a, sizeof *mark); /* stands for the first_of list */
    for (size_t i = 0; i < nf; i++) {
        size_t e;
        if (scanf("%zu", &e) != 1 || e >= n) {
            return 2;
        }
        kn_event *ev = s->events[e];
        ev->first_of_node = mark;
        ev->first_of = read_members(a, s, &ev->n_first_of);
        if (!ev->first_of) {
            return 2;
        }
    }
    s->n_columns = nk;
    s->columns = kn_alloc_array(a, nk + 1, sizeof *s->columns);
    for (size_t i = 0; i < nk; i++) {
        kn_column *c = kn_alloc(a, sizeof *c);
        c->name = kn_printf(a, "c%zu", i);
        c->index = i;
        c->quasi_identifier = -1;
        c->one_of_node = mark;
        c->one_of = read_members(a, s, &c->n_one_of);
        if (!c->one_of) {
            return 2;
        }
        s->columns[i] = c;
    }
    s->prediction.moment.name = s->events[mom]->name;
    s->prediction.moment.target = s->events[mom];

    kn_timeline *t = kn_timeline_solve(a, sink, s, false);
    if (kn_timeline_contradictory(t)) {
        puts("contradictory");
    } else {
        puts("consistent");
        for (size_t i = 0; i < n; i++) {
            kn_interval r;
            if (kn_timeline_event_range(t, s->events[i], &r)) {
                put_range(r);
            } else {
                puts("none");
            }
        }
        for (size_t i = 0; i < nk; i++) {
            const kn_column_timing *T = kn_timeline_column_timing(t, s->columns[i]);
            if (T && T->computed) {
                put_range(T->event[KN_PART_KNOWN]);
            } else {
                puts("none");
            }
        }
    }
    kn_arena_free(a);
    return 0;
}

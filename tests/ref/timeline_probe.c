/* timeline_probe.c - reads a network of events on stdin, solves it with
 * kn_timeline_solve and prints what the solver found, for the cross-check
 * in timeline_ref.py.
 *
 * Input (whitespace separated):
 *   N M MOMENT
 *   then M lines "A B LO HI": t(B) - t(A) in [LO, HI] (microseconds;
 *   HI may be "inf"), declared on B with `after`.
 * Output, when consistent:
 *   consistent
 *   then N lines "LO HI" (t(X) - t(moment); "-inf" / "inf" when unbounded)
 * and otherwise:
 *   contradictions K complete|cut  (cut: the search stopped early)
 *   then one line per contradiction: "WEIGHT AT E1:U1 E2:U2 ..." where Ei is
 *   the input line (0-based) of each constraint round the cycle and Ui is 1
 *   when its upper bound is used, 0 for its lower bound. */
#include <inttypes.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../../src/report/diag.h"
#include "../../src/time/timeline.h"

static int64_t read_time(FILE *in, int *ok)
{
    char buf[64];
    if (scanf("%63s", buf) != 1) {
        *ok = 0;
        return 0;
    }
    (void)in;
    if (strcmp(buf, "inf") == 0) {
        return KN_TIME_INF;
    }
    return (int64_t)strtoll(buf, NULL, 10);
}

int main(void)
{
    size_t n, m, mom;
    if (scanf("%zu %zu %zu", &n, &m, &mom) != 3 || n == 0 || mom >= n || n > 1000000 ||
        m > 10000000) {
        fprintf(stderr, "timeline_probe: bad header\n");
        return 2;
    }
    kn_arena *a = kn_arena_new();
    kn_sink *sink = kn_sink_new(a);
    kn_schema *s = kn_alloc(a, sizeof *s);
    s->path = "probe";
    s->events = kn_alloc_array(a, n, sizeof *s->events);
    s->n_events = n;
    size_t *from = kn_alloc_array(a, m + 1, sizeof *from);
    size_t *to = kn_alloc_array(a, m + 1, sizeof *to);
    int64_t *lo = kn_alloc_array(a, m + 1, sizeof *lo);
    int64_t *hi = kn_alloc_array(a, m + 1, sizeof *hi);
    size_t *per = kn_alloc_array(a, n, sizeof *per);
    for (size_t i = 0; i < m; i++) {
        int ok = 1;
        if (scanf("%zu %zu", &from[i], &to[i]) != 2 || from[i] >= n || to[i] >= n) {
            fprintf(stderr, "timeline_probe: bad edge %zu\n", i);
            return 2;
        }
        lo[i] = read_time(stdin, &ok);
        hi[i] = read_time(stdin, &ok);
        if (!ok) {
            fprintf(stderr, "timeline_probe: bad lag %zu\n", i);
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
    /* which input line each constraint came from */
    const kn_constraint **line_of = kn_alloc_array(a, m + 1, sizeof *line_of);
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
        line_of[i] = c;
    }
    s->prediction.moment.name = s->events[mom]->name;
    s->prediction.moment.target = s->events[mom];

    kn_timeline *t = kn_timeline_solve(a, sink, s, false);
    if (!kn_timeline_contradictory(t)) {
        puts("consistent");
        for (size_t i = 0; i < n; i++) {
            kn_interval r;
            kn_timeline_event_range(t, s->events[i], &r);
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
    } else {
        const kn_contradiction *cy;
        size_t k = kn_timeline_contradictions(t, &cy);
        printf("contradictions %zu %s\n", k, kn_timeline_search_complete(t) ? "complete" : "cut");
        for (size_t i = 0; i < k; i++) {
            printf("%" PRId64 " %zu", cy[i].weight, cy[i].at);
            for (size_t j = 0; j < cy[i].n_steps; j++) {
                size_t line = 0;
                /* constraints are stored in their event's array in input order */
                for (size_t l = 0; l < m; l++) {
                    if (line_of[l] == cy[i].steps[j].con) {
                        line = l;
                        break;
                    }
                }
                printf(" %zu:%d", line, cy[i].steps[j].upper ? 1 : 0);
            }
            putchar('\n');
        }
    }
    kn_arena_free(a);
    return 0;
}

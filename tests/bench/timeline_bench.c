/* timeline_bench.c - a benchmark, not a timed test (SPEC §8).
 *
 * 1. The solver: generated networks of 100, 1,000 and 10,000 events (a
 *    business process running forward, each event tied to one to three
 *    earlier ones, one in ten without a maximum, and a column per event),
 *    timed through kn_timeline_solve; reports the time per solve, per
 *    constraint and per event x constraint (the bound SPEC §8 allows).
 * 2. With a path argument (`timeline_bench SCHEMA.yaml`): writes there a
 *    schema of 10,000 columns, 300 events and 100 sources, then compares
 *    `knowable check` on it (through the public API, output to /dev/null)
 *    with a bare libyaml parse of the same file, in one run; SPEC §8's
 *    target is a ratio of at most 1.5.
 *
 * Usage: timeline_bench [SCHEMA_PATH] */
#include <inttypes.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include <knowable/knowable.h>
#include <yaml.h>

#include "../../src/time/timeline.h"

static double now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + (double)ts.tv_nsec / 1e9;
}

/* A small deterministic generator (xorshift64*), so runs are comparable. */
static uint64_t rng_state = 0x9e3779b97f4a7c15ull;
static uint64_t rnd(void)
{
    rng_state ^= rng_state >> 12;
    rng_state ^= rng_state << 25;
    rng_state ^= rng_state >> 27;
    return rng_state * 0x2545f4914f6cdd1dull;
}
static size_t below(size_t n)
{
    return (size_t)(rnd() % n);
}

static kn_schema *network(kn_arena *a, size_t n, size_t *n_cons)
{
    kn_schema *s = kn_alloc(a, sizeof *s);
    s->path = "bench";
    s->events = kn_alloc_array(a, n, sizeof *s->events);
    s->columns = kn_alloc_array(a, n, sizeof *s->columns);
    s->n_events = n;
    s->n_columns = n;
    *n_cons = 0;
    /* Each event has a hidden time and every lag contains the true
     * difference, so the network is consistent by construction. */
    int64_t *when = kn_alloc_array(a, n, sizeof *when);
    for (size_t i = 0; i < n; i++) {
        kn_event *e = kn_alloc(a, sizeof *e);
        e->name = kn_printf(a, "step_%zu", i);
        e->index = i;
        e->cons = kn_alloc_array(a, 4, sizeof *e->cons);
        s->events[i] = e;
        when[i] = i ? when[i - 1] + (int64_t)below(240) * KN_US_PER_MIN : 0;
        size_t k = i ? 1 + below(3) : 0;
        for (size_t j = 0; j < k; j++) {
            kn_constraint *c = &e->cons[e->n_cons++];
            size_t o = below(i);
            kn_event *other = s->events[o];
            int64_t d = when[i] - when[o];
            c->lag.present = true;
            c->lag.lo = d - (int64_t)below(120) * KN_US_PER_MIN;
            c->lag.hi = below(10) ? d + (int64_t)below(48) * KN_US_PER_HOUR : KN_TIME_INF;
            c->earlier = other;
            c->later = e;
            c->ref.target = other;
            (*n_cons)++;
        }
        kn_column *col = kn_alloc(a, sizeof *col);
        col->name = kn_printf(a, "col_%zu", i);
        col->index = i;
        col->known.target = e;
        col->known.name = e->name;
        s->columns[i] = col;
    }
    s->prediction.moment.target = s->events[n / 2];
    s->prediction.moment.name = s->events[n / 2]->name;
    return s;
}

static void bench_solver(void)
{
    static const size_t sizes[] = {100, 1000, 10000};
    printf("solver: queue-based Bellman-Ford, negative-cycle search plus shortest paths from "
           "and to the moment\n");
    printf("%8s %12s %8s %14s %16s %20s\n", "events", "constraints", "runs", "ms per solve",
           "ns per constraint", "ns per event x cons.");
    for (size_t k = 0; k < sizeof sizes / sizeof sizes[0]; k++) {
        size_t n = sizes[k], m = 0;
        kn_arena *a = kn_arena_new();
        kn_schema *s = network(a, n, &m);
        size_t runs = 0;
        double t0 = now(), t1;
        do {
            /* A fresh arena per solve, as in one check run. */
            kn_arena *run = kn_arena_new();
            kn_sink *sink = kn_sink_new(run);
            kn_timeline *t = kn_timeline_solve(run, sink, s, false);
            if (!t || kn_timeline_contradictory(t)) {
                fprintf(stderr, "timeline_bench: the generated network should be consistent\n");
                exit(1);
            }
            kn_arena_free(run);
            runs++;
            t1 = now();
        } while (t1 - t0 < 1.0 && runs < 100000);
        double per = (t1 - t0) / (double)runs;
        printf("%8zu %12zu %8zu %14.3f %16.1f %20.6f\n", n, m, runs, per * 1e3,
               per * 1e9 / (double)m, per * 1e9 / ((double)n * (double)m));
        kn_arena_free(a);
    }
}

/* --- knowable check against a bare libyaml parse -------------------------- */

/* A carefully annotated schema: each event follows the previous one, some
 * also follow an earlier one, the moment is the last, and every feature is
 * known early enough to be available - so check does all of its work and
 * finds nothing (the cost of reading, not of rendering findings). */
static void write_schema(const char *path, size_t n_cols, size_t n_events, size_t n_sources)
{
    FILE *f = fopen(path, "w");
    if (!f) {
        perror(path);
        exit(1);
    }
    fprintf(f, "knowable: 1\ndataset: bakery_orders_bench\nprediction:\n  moment: ev_%zu\n"
               "  target: col_0\nevents:\n  ev_0: {}\n",
            n_events - 1);
    for (size_t i = 1; i < n_events; i++) {
        if (i > 1 && below(3) == 0) {
            fprintf(f, "  ev_%zu:\n    after: {ev_%zu: [PT1M, PT1H], ev_%zu: [PT1M, null]}\n", i,
                    i - 1, below(i - 1));
        } else {
            fprintf(f, "  ev_%zu:\n    after: {ev_%zu: [PT1M, PT1H]}\n", i, i - 1);
        }
    }
    fputs("sources:\n", f);
    for (size_t i = 0; i < n_sources; i++) {
        fprintf(f, "  src_%zu:\n    kind: internal\n    history: append\n    latency: PT%zuM\n"
                   "    refresh: PT1H\n",
                i, below(30));
    }
    fprintf(f, "columns:\n  col_0:\n    role: target\n    known: ev_%zu\n    source: src_0\n",
            n_events - 1);
    for (size_t i = 1; i < n_cols; i++) {
        /* events up to n_events - 100 are at least 99 min before the moment */
        fprintf(f, "  col_%zu:\n    type: number\n    known: ev_%zu\n    source: src_%zu\n"
                   "    description: amount of batch %zu\n",
                i, below(n_events - 100), below(n_sources), i);
    }
    fclose(f);
}

static size_t bare_parse(const char *path)
{
    FILE *f = fopen(path, "rb");
    yaml_parser_t p;
    yaml_event_t ev;
    size_t events = 0;
    if (!f || !yaml_parser_initialize(&p)) {
        exit(1);
    }
    yaml_parser_set_input_file(&p, f);
    for (;;) {
        if (!yaml_parser_parse(&p, &ev)) {
            fprintf(stderr, "timeline_bench: libyaml refused the generated file\n");
            exit(1);
        }
        int done = ev.type == YAML_STREAM_END_EVENT;
        yaml_event_delete(&ev);
        events++;
        if (done) {
            break;
        }
    }
    yaml_parser_delete(&p);
    fclose(f);
    return events;
}

static void bench_check(const char *path)
{
    write_schema(path, 10000, 300, 100);
    kn_options o;
    kn_options_init(&o);
    o.fail_on = KN_FAIL_ON_NEVER;
    FILE *null = fopen("/dev/null", "w");
    const char *schemas[1] = {path};
    double best_check = 1e9, best_parse = 1e9;
    size_t events = 0;
    /* Interleaved and best of seven, so both see the same cache state. */
    for (int r = 0; r < 7; r++) {
        double t0 = now();
        events = bare_parse(path);
        double t1 = now();
        kn_status st = kn_check(&o, schemas, 1, null, stderr);
        double t2 = now();
        if (st == KN_EXIT_FAILED) {
            fprintf(stderr, "timeline_bench: knowable check could not check the file\n");
            exit(1);
        }
        if (t1 - t0 < best_parse) {
            best_parse = t1 - t0;
        }
        if (t2 - t1 < best_check) {
            best_check = t2 - t1;
        }
    }
    fclose(null);
    printf("\ncheck: 10,000 columns, 300 events, 100 sources (%s, %zu YAML events)\n", path, events);
    printf("  bare libyaml parse  %8.2f ms\n", best_parse * 1e3);
    printf("  knowable check      %8.2f ms\n", best_check * 1e3);
    printf("  ratio               %8.2f  (SPEC 8 target: at most 1.5)\n", best_check / best_parse);
}

int main(int argc, char **argv)
{
    bench_solver();
    if (argc > 1) {
        bench_check(argv[1]);
    }
    return 0;
}

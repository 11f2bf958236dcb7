/* test_timeline.c - unit tests of src/time/timeline.c and
 * src/checks/availability.c on schemas built by hand: ranges along chains,
 * unbounded ends, negative lags, calendar months, contradictions and their
 * cycles, strict_moment at exactly 0, derived columns in any file order, and
 * each availability rule with its message and notes.
 *
 * Scenarios: a parcel carrier (order placed, dispatch, hub scan, delivery),
 * a library's loans and a bakery chain's deliveries.  Distances on random
 * networks are cross-checked against networkx by tests/ref/timeline_ref.py. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../../src/report/diag_impl.h"
#include "../../src/checks/checks.h"
#include "../../src/docs/docs.h"
#include "../../src/time/timeline.h"

#define MIN KN_US_PER_MIN
#define HOUR KN_US_PER_HOUR
#define DAY KN_US_PER_DAY
#define INF KN_TIME_INF
#define CAP 64

/* --- a schema builder ---------------------------------------------------- */

typedef struct world {
    kn_arena *a;
    kn_sink *sink;
    kn_schema *s;
    uint32_t line; /* each node gets the next line, so positions are distinct */
} world;

static world *W;

static kn_node *node(const char *text)
{
    kn_node *n = kn_alloc(W->a, sizeof *n);
    n->kind = KN_NODE_SCALAR;
    n->pos.file = "t.knowable.yaml";
    n->pos.line = ++W->line;
    n->pos.col = 5;
    n->u.scalar.text = kn_strdup(W->a, text);
    n->u.scalar.len = strlen(text);
    return n;
}

static int setup(void **state)
{
    (void)state;
    W = calloc(1, sizeof *W);
    W->a = kn_arena_new();
    W->sink = kn_sink_new(W->a);
    W->s = kn_alloc(W->a, sizeof *W->s);
    W->s->path = "t.knowable.yaml";
    W->s->events = kn_alloc_array(W->a, CAP, sizeof(kn_event *));
    W->s->columns = kn_alloc_array(W->a, CAP, sizeof(kn_column *));
    W->s->sources = kn_alloc_array(W->a, CAP, sizeof(kn_source *));
    return 0;
}

static int teardown(void **state)
{
    (void)state;
    kn_arena_free(W->a);
    free(W);
    W = NULL;
    return 0;
}

static kn_event *ev(const char *name)
{
    kn_event *e = kn_alloc(W->a, sizeof *e);
    e->name = name;
    e->key = node(name);
    e->cons = kn_alloc_array(W->a, CAP, sizeof *e->cons);
    e->index = W->s->n_events;
    W->s->events[W->s->n_events++] = e;
    return e;
}

static kn_lag lag(int64_t lo, int64_t hi)
{
    kn_lag l = {true, lo, hi, node("lag")};
    return l;
}

/* x: {after: {y: [lo, hi]}} */
static kn_constraint *after(kn_event *x, kn_event *y, int64_t lo, int64_t hi)
{
    kn_constraint *c = &x->cons[x->n_cons++];
    c->earlier = y;
    c->later = x;
    c->lag = lag(lo, hi);
    c->ref.name = y->name;
    c->ref.node = node(y->name);
    c->ref.target = y;
    return c;
}

/* x: {before: {y: [lo, hi]}} */
static kn_constraint *before(kn_event *x, kn_event *y, int64_t lo, int64_t hi)
{
    kn_constraint *c = &x->cons[x->n_cons++];
    c->earlier = x;
    c->later = y;
    c->lag = lag(lo, hi);
    c->before = true;
    c->ref.name = y->name;
    c->ref.node = node(y->name);
    c->ref.target = y;
    return c;
}

static kn_ref ref(const char *name, void *target)
{
    kn_ref r = {name, node(name), target};
    return r;
}

static kn_column *col(const char *name, kn_role role)
{
    kn_column *c = kn_alloc(W->a, sizeof *c);
    c->name = name;
    c->key = node(name);
    c->role = role;
    c->index = W->s->n_columns;
    c->derived_from = kn_alloc_array(W->a, CAP, sizeof *c->derived_from);
    W->s->columns[W->s->n_columns++] = c;
    return c;
}

static kn_column *known_col(const char *name, kn_event *e)
{
    kn_column *c = col(name, KN_ROLE_FEATURE);
    c->known = ref(e->name, e);
    return c;
}

static void derive(kn_column *c, kn_column *input)
{
    c->derived_from[c->n_derived++] = ref(input->name, input);
    c->derived_node = c->derived_from[0].node;
}

static kn_source *source(const char *name, int64_t lat_lo, int64_t lat_hi, int64_t refresh)
{
    kn_source *s = kn_alloc(W->a, sizeof *s);
    s->name = name;
    s->key = node(name);
    s->kind = KN_SOURCE_INTERNAL;
    if (lat_lo || lat_hi) {
        s->latency = lag(lat_lo, lat_hi);
    }
    if (refresh) {
        s->has_refresh = true;
        s->refresh = refresh;
        s->field[KN_SF_REFRESH] = node("refresh");
    }
    s->index = W->s->n_sources;
    W->s->sources[W->s->n_sources++] = s;
    return s;
}

static void moment(kn_event *e)
{
    W->s->prediction.moment = ref(e->name, e);
}

static void target(kn_column *c)
{
    W->s->prediction.target = ref(c->name, c);
}

static kn_timeline *solve(bool strict)
{
    return kn_timeline_solve(W->a, W->sink, W->s, strict);
}

static void check(kn_timeline *t)
{
    kn_ctx ctx = {W->a, W->sink, NULL, "2024-01-01"};
    kn_check_availability(&ctx, W->s, t);
}

static void assert_range(kn_timeline *t, kn_event *e, int64_t lo, int64_t hi)
{
    kn_interval r;
    assert_true(kn_timeline_event_range(t, e, &r));
    if (r.lo != lo || r.hi != hi) {
        fail_msg("'%s': got [%lld, %lld], want [%lld, %lld]", e->name, (long long)r.lo,
                 (long long)r.hi, (long long)lo, (long long)hi);
    }
}

static size_t n_diags(void)
{
    size_t n;
    kn_sink_diags(W->sink, &n);
    return n;
}

/* The only diagnostic of rule r (fails when there is not exactly one). */
static kn_diag *only(kn_rule r)
{
    size_t n, found = 0;
    kn_diag **all = kn_sink_diags(W->sink, &n);
    kn_diag *d = NULL;
    for (size_t i = 0; i < n; i++) {
        if (all[i]->rule == r) {
            d = all[i];
            found++;
        }
    }
    if (found != 1) {
        for (size_t i = 0; i < n; i++) {
            fprintf(stderr, "  [%s] %s\n", kn_rule_get(all[i]->rule)->id, all[i]->message);
        }
        fail_msg("%zu diagnostics of %s, want 1", found, kn_rule_get(r)->id);
    }
    return d;
}

static size_t count(kn_rule r)
{
    size_t n, found = 0;
    kn_diag **all = kn_sink_diags(W->sink, &n);
    for (size_t i = 0; i < n; i++) {
        found += all[i]->rule == r;
    }
    return found;
}

static bool has_note(const kn_diag *d, const char *text, uint32_t line)
{
    for (size_t i = 0; i < d->n_notes; i++) {
        if (strstr(d->notes[i].message, text) && (line == 0 || d->notes[i].pos.line == line)) {
            return true;
        }
    }
    return false;
}

static void assert_note(const kn_diag *d, const char *text, uint32_t line)
{
    if (!has_note(d, text, line)) {
        for (size_t i = 0; i < d->n_notes; i++) {
            fprintf(stderr, "  note line %u: %s\n", d->notes[i].pos.line, d->notes[i].message);
        }
        fail_msg("no note \"%s\" at line %u", text, line);
    }
}

static void assert_contains(const char *s, const char *part)
{
    if (!s) {
        fail_msg("no text, looking for \"%s\"", part);
    } else if (!strstr(s, part)) {
        fail_msg("\"%s\" does not contain \"%s\"", s, part);
    }
}

/* The parcel carrier of SPEC §3.3. */
typedef struct parcel {
    kn_event *order, *dispatch, *scan, *delivered;
    kn_constraint *dispatch_after, *scan_after, *delivered_after;
} parcel;

static parcel parcel_events(void)
{
    parcel p;
    p.order = ev("order_placed");
    p.dispatch = ev("dispatch");
    p.scan = ev("first_hub_scan");
    p.delivered = ev("delivered");
    p.dispatch_after = after(p.dispatch, p.order, 30 * MIN, 3 * DAY);
    p.scan_after = after(p.scan, p.dispatch, 10 * MIN, 6 * HOUR);
    p.delivered_after = after(p.delivered, p.scan, 2 * HOUR, 10 * DAY);
    return p;
}

/* --- ranges ---------------------------------------------------------------- */

static void test_chain_forward_and_back(void **state)
{
    (void)state;
    parcel p = parcel_events();
    moment(p.dispatch);
    kn_timeline *t = solve(false);
    assert_non_null(t);
    assert_false(kn_timeline_contradictory(t));
    assert_range(t, p.dispatch, 0, 0);
    assert_range(t, p.order, -3 * DAY, -30 * MIN);
    assert_range(t, p.scan, 10 * MIN, 6 * HOUR);
    assert_range(t, p.delivered, 2 * HOUR + 10 * MIN, 10 * DAY + 6 * HOUR);
}

static void test_chain_steps_name_constraints(void **state)
{
    (void)state;
    parcel p = parcel_events();
    moment(p.order);
    kn_timeline *t = solve(false);
    const kn_chain_step *steps;
    size_t n = kn_timeline_chain(t, p.scan, true, &steps);
    assert_int_equal(n, 2);
    assert_ptr_equal(steps[0].con, p.dispatch_after);
    assert_ptr_equal(steps[1].con, p.scan_after);
    assert_true(steps[0].upper && steps[1].upper);
    n = kn_timeline_chain(t, p.scan, false, &steps);
    assert_int_equal(n, 2);
    assert_ptr_equal(steps[0].con, p.scan_after);
    assert_false(steps[0].upper);

    kn_diag *d = kn_diag_push(W->sink, KN_R_AFTER_MOMENT, NULL, "x", "probe");
    kn_timeline_note_chain(t, W->sink, d, p.scan, true);
    assert_int_equal(d->n_notes, 2);
    assert_string_equal(d->notes[0].message,
                        "'dispatch' is at most 3d after 'order_placed' (events.dispatch.after)");
    assert_int_equal(d->notes[0].pos.line, p.dispatch_after->lag.node->pos.line);
    assert_string_equal(d->notes[1].message,
                        "'first_hub_scan' is at most 6h after 'dispatch' (events.first_hub_scan.after)");
}

static void test_before_is_the_mirror_of_after(void **state)
{
    (void)state;
    kn_event *open = ev("branch_opens");
    kn_event *bake = ev("first_bake");
    /* first_bake: {before: {branch_opens: [1h, 3h]}} */
    before(bake, open, HOUR, 3 * HOUR);
    moment(open);
    kn_timeline *t = solve(false);
    assert_range(t, bake, -3 * HOUR, -HOUR);
    const kn_chain_step *steps;
    assert_int_equal(kn_timeline_chain(t, bake, true, &steps), 1);
    kn_diag *d = kn_diag_push(W->sink, KN_R_AFTER_MOMENT, NULL, "x", "probe");
    kn_timeline_note_step(W->sink, d, &steps[0]);
    assert_string_equal(d->notes[0].message,
                        "'first_bake' is at least 1h before 'branch_opens' (events.first_bake.before)");
}

static void test_unbounded_ends(void **state)
{
    (void)state;
    kn_event *loan = ev("loan_start");
    kn_event *ret = ev("returned");
    kn_event *other = ev("catalogue_update");
    after(ret, loan, 0, INF); /* `after: loan_start` */
    moment(loan);
    kn_timeline *t = solve(false);
    assert_range(t, ret, 0, INF);
    assert_range(t, loan, 0, 0);
    assert_range(t, other, -INF, INF);
    const kn_chain_step *steps;
    assert_int_equal(kn_timeline_chain(t, ret, true, &steps), 0);
    assert_int_equal(kn_timeline_chain(t, ret, false, &steps), 1);
}

static void test_negative_lags(void **state)
{
    (void)state;
    kn_event *dispatch = ev("dispatch");
    kn_event *label = ev("label_printed");
    /* label_printed: {after: {dispatch: [-2h, -30min]}}: it comes before */
    after(label, dispatch, -2 * HOUR, -30 * MIN);
    kn_event *slot = ev("pickup_slot");
    after(slot, label, -HOUR, 3 * HOUR);
    moment(dispatch);
    kn_timeline *t = solve(false);
    assert_range(t, label, -2 * HOUR, -30 * MIN);
    assert_range(t, slot, -3 * HOUR, 2 * HOUR + 30 * MIN);
}

static void test_two_paths_take_the_tightest(void **state)
{
    (void)state;
    kn_event *a = ev("order_placed");
    kn_event *b = ev("dispatch");
    kn_event *c = ev("delivered");
    after(b, a, HOUR, 5 * DAY);
    after(c, b, HOUR, 5 * DAY);
    after(c, a, 3 * DAY, 4 * DAY); /* a tighter direct bound */
    moment(a);
    kn_timeline *t = solve(false);
    assert_range(t, c, 3 * DAY, 4 * DAY);
    /* and it tightens dispatch through delivered: b <= c - 1h, b >= c - 5d */
    assert_range(t, b, HOUR, 4 * DAY - HOUR);
}

static void test_calendar_month_against_30_days(void **state)
{
    (void)state;
    kn_event *start = ev("membership_start");
    kn_event *renewal = ev("renewal");
    kn_event *review = ev("review");
    /* renewal P1M after start: [28d, 31d]; review exactly P30D after start */
    after(renewal, start, 28 * DAY, 31 * DAY);
    after(review, start, 30 * DAY, 30 * DAY);
    moment(review);
    kn_column *c = known_col("renewed", renewal);
    kn_timeline *t = solve(false);
    assert_range(t, renewal, -2 * DAY, DAY);
    assert_int_equal(kn_timeline_column_verdict(t, c), KN_VERDICT_MAYBE_LATE);
    check(t);
    kn_diag *d = only(KN_R_MAYBE_AFTER_MOMENT);
    assert_contains(d->message, "between 2d before and 1d after the moment 'review'");
}

static void test_calendar_year_against_365_days(void **state)
{
    (void)state;
    kn_event *start = ev("lease_start");
    kn_event *anniversary = ev("anniversary");
    kn_event *audit = ev("audit");
    after(anniversary, start, 365 * DAY, 366 * DAY); /* P1Y */
    after(audit, start, 366 * DAY, 366 * DAY);       /* P366D */
    moment(audit);
    kn_column *c = known_col("anniversary_flag", anniversary);
    kn_timeline *t = solve(false);
    assert_range(t, anniversary, -DAY, 0);
    assert_int_equal(kn_timeline_column_verdict(t, c), KN_VERDICT_AVAILABLE);
    assert_true(kn_timeline_solve(W->a, NULL, W->s, true) != NULL);
    assert_int_equal(kn_timeline_column_verdict(kn_timeline_solve(W->a, NULL, W->s, true), c),
                     KN_VERDICT_MAYBE_LATE);
}

/* --- contradictions --------------------------------------------------------- */

static void test_contradiction_with_its_cycle(void **state)
{
    (void)state;
    kn_event *dispatch = ev("dispatch");
    kn_event *scan = ev("first_hub_scan");
    kn_event *sort = ev("sorted");
    kn_constraint *c1 = after(scan, dispatch, 2 * HOUR, 6 * HOUR);
    kn_constraint *c2 = after(sort, scan, HOUR, 2 * HOUR);
    kn_constraint *c3 = before(sort, dispatch, HOUR, 2 * HOUR); /* sorted before dispatch: impossible */
    moment(dispatch);
    kn_column *c = known_col("scan_hub", scan);
    kn_timeline *t = solve(false);
    assert_true(kn_timeline_contradictory(t));
    const kn_contradiction *cy;
    assert_int_equal(kn_timeline_contradictions(t, &cy), 1);
    assert_int_equal(cy[0].n_steps, 3);
    /* lower bounds of c1, c2 and c3 round the loop: -(2h + 1h + 1h) */
    assert_int_equal(cy[0].weight, -4 * HOUR);
    bool seen[3] = {false, false, false};
    for (size_t i = 0; i < 3; i++) {
        seen[0] |= cy[0].steps[i].con == c1;
        seen[1] |= cy[0].steps[i].con == c2;
        seen[2] |= cy[0].steps[i].con == c3;
    }
    assert_true(seen[0] && seen[1] && seen[2]);
    kn_diag *d = only(KN_R_TIMELINE_CONTRADICTION);
    /* at the constraint declared last, with every constraint in notes */
    assert_int_equal(d->pos.line, c3->lag.node->pos.line);
    assert_int_equal(d->n_notes, 3);
    assert_note(d, "(events.first_hub_scan.after)", c1->lag.node->pos.line);
    assert_note(d, "(events.sorted.after)", c2->lag.node->pos.line);
    assert_note(d, "'sorted' is at least 1h before 'dispatch' (events.sorted.before)",
                c3->lag.node->pos.line);
    assert_contains(d->message, "at least 4h before itself");
    /* no ranges and no verdicts after a contradiction */
    kn_interval r;
    assert_false(kn_timeline_event_range(t, scan, &r));
    assert_false(kn_timeline_column_range(t, c, &r));
    check(t);
    assert_int_equal(n_diags(), 1);
}

static void test_contradiction_away_from_the_moment(void **state)
{
    (void)state;
    kn_event *m = ev("loan_start");
    kn_event *a = ev("shelf_check");
    kn_event *b = ev("inventory");
    (void)m;
    after(b, a, HOUR, HOUR);
    after(a, b, 0, INF);
    moment(m);
    kn_timeline *t = solve(false);
    assert_true(kn_timeline_contradictory(t));
    assert_int_equal(count(KN_R_TIMELINE_CONTRADICTION), 1);
}

static void test_every_contradiction_is_reported(void **state)
{
    (void)state;
    kn_event *m = ev("dispatch");
    kn_event *a = ev("oven_on");
    kn_event *b = ev("oven_off");
    kn_event *c = ev("van_leaves");
    kn_event *d = ev("van_back");
    after(b, a, HOUR, 2 * HOUR);
    before(b, a, 0, INF); /* off before on */
    after(d, c, HOUR, 2 * HOUR);
    after(c, d, 3 * HOUR, INF); /* leaves 3h after it is back */
    after(a, m, 0, HOUR);
    kn_event *self = ev("self_loop");
    after(self, self, MIN, MIN);
    moment(m);
    kn_timeline *t = solve(false);
    const kn_contradiction *cy;
    assert_int_equal(kn_timeline_contradictions(t, &cy), 3);
    assert_int_equal(count(KN_R_TIMELINE_CONTRADICTION), 3);
}

static void test_zero_cycle_is_consistent(void **state)
{
    (void)state;
    kn_event *a = ev("order_placed");
    kn_event *b = ev("invoice");
    after(b, a, 0, 0);
    before(b, a, 0, 0);
    moment(a);
    kn_timeline *t = solve(false);
    assert_false(kn_timeline_contradictory(t));
    assert_range(t, b, 0, 0);
}

static void test_bad_lag_is_skipped(void **state)
{
    (void)state;
    kn_event *a = ev("order_placed");
    kn_event *b = ev("dispatch");
    after(b, a, 2 * HOUR, HOUR); /* MIN > MAX: bad-duration, the loader's */
    moment(a);
    kn_timeline *t = solve(false);
    assert_false(kn_timeline_contradictory(t));
    assert_range(t, b, -INF, INF);
}

/* --- verdicts ----------------------------------------------------------- */

static void test_strict_moment_at_exactly_zero(void **state)
{
    (void)state;
    kn_event *m = ev("dispatch");
    kn_column *c = known_col("parcel_weight", m);
    moment(m);
    kn_timeline *t = solve(false);
    assert_int_equal(kn_timeline_column_verdict(t, c), KN_VERDICT_AVAILABLE);
    check(t);
    assert_int_equal(n_diags(), 0);
    t = solve(true);
    assert_true(kn_timeline_strict(t));
    assert_int_equal(kn_timeline_column_verdict(t, c), KN_VERDICT_LATE);
    check(t);
    kn_diag *d = only(KN_R_AFTER_MOMENT);
    assert_contains(d->message, "exactly at the moment 'dispatch'");
}

static void test_after_moment_with_proof(void **state)
{
    (void)state;
    parcel p = parcel_events();
    moment(p.dispatch);
    kn_column *c = known_col("delivery_rating", p.delivered);
    kn_source *src = source("ratings_db", HOUR, 2 * HOUR, DAY);
    c->source = ref(src->name, src);
    kn_timeline *t = solve(false);
    kn_interval r;
    assert_true(kn_timeline_column_range(t, c, &r));
    assert_int_equal(r.lo, 2 * HOUR + 10 * MIN + HOUR);
    assert_int_equal(r.hi, 10 * DAY + 6 * HOUR + 2 * HOUR + DAY);
    check(t);
    kn_diag *d = only(KN_R_AFTER_MOMENT);
    assert_int_equal(d->pos.line, c->known.node->pos.line);
    assert_string_equal(d->subject, "delivery_rating");
    assert_string_equal(d->message,
                        "column 'delivery_rating' (known at 'delivered') is available only after "
                        "the moment: between 3h 10min and 11d 8h after the moment 'dispatch'");
    /* the lower bound's chain: delivered >= scan + 2h, scan >= dispatch + 10min */
    assert_note(d, "'delivered' is at least 2h after 'first_hub_scan'",
                p.delivered_after->lag.node->pos.line);
    assert_note(d, "'first_hub_scan' is at least 10min after 'dispatch'",
                p.scan_after->lag.node->pos.line);
    assert_note(d, "source 'ratings_db' makes a record queryable between 1h and 2h",
                src->latency.node->pos.line);
    assert_note(d, "refreshed every 1d", src->field[KN_SF_REFRESH]->pos.line);
}

static void test_maybe_after_moment_gives_range(void **state)
{
    (void)state;
    kn_event *m = ev("dispatch");
    kn_event *weigh = ev("weighed");
    after(weigh, m, -2 * HOUR, DAY + 4 * HOUR);
    moment(m);
    kn_column *c = known_col("parcel_weight", weigh);
    kn_timeline *t = solve(false);
    assert_int_equal(kn_timeline_column_verdict(t, c), KN_VERDICT_MAYBE_LATE);
    check(t);
    kn_diag *d = only(KN_R_MAYBE_AFTER_MOMENT);
    assert_contains(d->message, "between 2h before and 1d 4h after the moment 'dispatch'");
    assert_note(d, "'weighed' is at most 1d 4h after 'dispatch'", 0);
}

static void test_available_column_is_quiet(void **state)
{
    (void)state;
    parcel p = parcel_events();
    moment(p.scan);
    kn_column *c = known_col("order_value", p.order);
    kn_column *d = known_col("dispatch_depot", p.dispatch);
    kn_timeline *t = solve(false);
    assert_int_equal(kn_timeline_column_verdict(t, c), KN_VERDICT_AVAILABLE);
    assert_int_equal(kn_timeline_column_verdict(t, d), KN_VERDICT_AVAILABLE);
    check(t);
    assert_int_equal(n_diags(), 0);
}

static void test_unordered_event(void **state)
{
    (void)state;
    kn_event *m = ev("loan_start");
    kn_event *free_ev = ev("catalogue_update");
    kn_event *ret = ev("returned");
    after(ret, m, 0, INF);
    moment(m);
    kn_column *c = known_col("catalogue_rating", free_ev);
    kn_column *r = known_col("returned_on_time", ret);
    kn_timeline *t = solve(false);
    assert_int_equal(kn_timeline_column_verdict(t, c), KN_VERDICT_UNORDERED);
    assert_int_equal(kn_timeline_column_verdict(t, r), KN_VERDICT_UNORDERED);
    check(t);
    assert_int_equal(count(KN_R_UNORDERED_EVENT), 2);
    assert_int_equal(count(KN_R_AFTER_MOMENT), 0);
}

static void test_unordered_but_surely_late(void **state)
{
    (void)state;
    kn_event *m = ev("loan_start");
    kn_event *ret = ev("returned");
    after(ret, m, DAY, INF);
    moment(m);
    kn_column *c = known_col("late_fee", ret);
    kn_timeline *t = solve(false);
    assert_int_equal(kn_timeline_column_verdict(t, c), KN_VERDICT_LATE);
    check(t);
    kn_diag *d = only(KN_R_AFTER_MOMENT);
    assert_contains(d->message, "from 1d after the moment 'loan_start' on, with no upper bound");
}

static void test_only_features_get_late_verdicts(void **state)
{
    (void)state;
    kn_event *m = ev("loan_start");
    kn_event *ret = ev("returned");
    after(ret, m, DAY, 30 * DAY);
    moment(m);
    kn_column *label = known_col("returned_late", ret);
    label->role = KN_ROLE_TARGET;
    target(label);
    kn_column *ts = known_col("returned_at", ret);
    ts->role = KN_ROLE_TIMESTAMP;
    kn_column *ex = known_col("fine_paid", ret);
    ex->role = KN_ROLE_EXCLUDED;
    kn_timeline *t = solve(false);
    assert_int_equal(kn_timeline_column_verdict(t, label), KN_VERDICT_LATE);
    check(t);
    assert_int_equal(n_diags(), 0);
}

static void test_delay_and_latency_are_added(void **state)
{
    (void)state;
    kn_event *m = ev("dispatch");
    moment(m);
    kn_event *scan = ev("scanned");
    after(scan, m, -3 * HOUR, -2 * HOUR);
    kn_column *c = known_col("scan_hub", scan);
    c->delay = lag(30 * MIN, HOUR);
    kn_source *src = source("scans", 20 * MIN, 40 * MIN, HOUR);
    c->source = ref(src->name, src);
    kn_timeline *t = solve(false);
    kn_interval r;
    assert_true(kn_timeline_column_range(t, c, &r));
    assert_int_equal(r.lo, -3 * HOUR + 30 * MIN + 20 * MIN);
    assert_int_equal(r.hi, -2 * HOUR + HOUR + 40 * MIN + HOUR);
    assert_int_equal(kn_timeline_column_verdict(t, c), KN_VERDICT_MAYBE_LATE);
    check(t);
    kn_diag *d = only(KN_R_MAYBE_AFTER_MOMENT);
    assert_note(d, "'scan_hub' is recorded between 30min and 1h after that", c->delay.node->pos.line);
}

/* --- windows and joins ------------------------------------------------------ */

static kn_column *window_col(const char *name, kn_event *anchor, int64_t from, int64_t to,
                             kn_source *src)
{
    kn_column *c = col(name, KN_ROLE_FEATURE);
    c->window.present = true;
    c->window.node = node("window");
    c->window.anchor = ref(anchor->name, anchor);
    c->window.from.lo = c->window.from.hi = from;
    c->window.to.lo = c->window.to.hi = to;
    c->window.from_node = node("from");
    c->window.to_node = node("to");
    if (src) {
        c->source = ref(src->name, src);
    }
    return c;
}

static void test_window_ends_after_the_moment(void **state)
{
    (void)state;
    kn_event *m = ev("store_opens");
    moment(m);
    kn_column *c = window_col("sales_today", m, 0, DAY, NULL);
    kn_timeline *t = solve(false);
    assert_int_equal(kn_timeline_column_verdict(t, c), KN_VERDICT_LATE);
    check(t);
    kn_diag *d = only(KN_R_WINDOW_OVERRUNS);
    assert_int_equal(d->severity, KN_SEV_ERROR);
    assert_int_equal(d->pos.line, c->window.to_node->pos.line);
    assert_contains(d->message, "ends after the moment: its end is exactly 1d after the moment "
                                "'store_opens'");
    assert_int_equal(count(KN_R_AFTER_MOMENT), 0);
}

static void test_window_past_landed_records(void **state)
{
    (void)state;
    kn_event *m = ev("store_opens");
    moment(m);
    kn_source *pos = source("tills", 0, 0, 6 * HOUR); /* refreshed every 6h */
    kn_column *c = window_col("sales_last_week", m, -7 * DAY, -HOUR, pos);
    kn_column *ok = window_col("sales_week_before", m, -14 * DAY, -7 * HOUR, pos);
    kn_timeline *t = solve(false);
    assert_int_equal(kn_timeline_column_verdict(t, c), KN_VERDICT_MAYBE_LATE);
    assert_int_equal(kn_timeline_column_verdict(t, ok), KN_VERDICT_AVAILABLE);
    check(t);
    kn_diag *d = only(KN_R_WINDOW_OVERRUNS);
    assert_string_equal(d->subject, "sales_last_week");
    assert_contains(d->message, "ends exactly 1h before the moment 'store_opens', possibly after the newest record");
    assert_contains(d->message, "queryable between 1h before and 5h after the moment");
    assert_note(d, "refreshed every 6h", pos->field[KN_SF_REFRESH]->pos.line);
}

static void test_window_surely_past_landed_records(void **state)
{
    (void)state;
    kn_event *m = ev("store_opens");
    moment(m);
    kn_source *pos = source("tills", 2 * HOUR, 3 * HOUR, 0);
    kn_column *c = window_col("sales_last_hour", m, -HOUR, -30 * MIN, pos);
    kn_timeline *t = solve(false);
    assert_int_equal(kn_timeline_column_verdict(t, c), KN_VERDICT_LATE);
    check(t);
    kn_diag *d = only(KN_R_WINDOW_OVERRUNS);
    assert_int_equal(d->severity, KN_SEV_ERROR);
}

static void test_as_of_after_moment(void **state)
{
    (void)state;
    kn_event *m = ev("loan_start");
    kn_event *ret = ev("returned");
    kn_event *reg = ev("registered");
    after(ret, m, HOUR, 30 * DAY);
    before(reg, m, DAY, INF);
    moment(m);
    kn_column *c = known_col("member_tier", reg);
    c->join.present = true;
    c->join.node = node("join");
    c->join.as_of = ref(ret->name, ret);
    kn_column *ok = known_col("member_branch", reg);
    ok->join.present = true;
    ok->join.as_of = ref(reg->name, reg);
    kn_timeline *t = solve(false);
    assert_int_equal(kn_timeline_column_verdict(t, c), KN_VERDICT_LATE);
    assert_int_equal(kn_timeline_column_verdict(t, ok), KN_VERDICT_AVAILABLE);
    check(t);
    kn_diag *d = only(KN_R_AS_OF_AFTER_MOMENT);
    assert_int_equal(d->pos.line, c->join.as_of.node->pos.line);
    assert_contains(d->message, "joined as of 'returned', which comes after the moment: between "
                                "1h and 30d after the moment 'loan_start'");
    assert_int_equal(count(KN_R_AFTER_MOMENT), 0);
}

/* --- derived columns -------------------------------------------------------- */

/* base (late) <- mid <- top, and an available input beside them; columns
 * declared in the order given by perm. */
static void build_chain(const int *perm, kn_column **out)
{
    kn_event *m = ev("dispatch");
    kn_event *del = ev("delivered");
    after(del, m, HOUR, 2 * DAY);
    moment(m);
    kn_column *cols[4];
    for (int k = 0; k < 4; k++) {
        switch (perm[k]) {
        case 0:
            cols[0] = known_col("delivered_late", del);
            break;
        case 1:
            cols[1] = col("late_ratio", KN_ROLE_FEATURE);
            break;
        case 2:
            cols[2] = col("late_ratio_scaled", KN_ROLE_FEATURE);
            break;
        default:
            cols[3] = known_col("dispatch_hour", m);
            break;
        }
    }
    derive(cols[1], cols[3]);
    derive(cols[1], cols[0]);
    derive(cols[2], cols[1]);
    for (int k = 0; k < 4; k++) {
        out[k] = cols[k];
    }
}

static void test_derived_order_independent(void **state)
{
    (void)state;
    static const int perms[][4] = {{0, 1, 2, 3}, {2, 1, 0, 3}, {3, 2, 0, 1}, {1, 3, 2, 0}};
    kn_interval first[4];
    for (size_t p = 0; p < sizeof perms / sizeof perms[0]; p++) {
        teardown(NULL);
        setup(NULL);
        kn_column *cols[4];
        build_chain(perms[p], cols);
        kn_timeline *t = solve(false);
        for (int k = 0; k < 4; k++) {
            kn_interval r;
            assert_true(kn_timeline_column_range(t, cols[k], &r));
            if (p == 0) {
                first[k] = r;
            } else {
                assert_int_equal(r.lo, first[k].lo);
                assert_int_equal(r.hi, first[k].hi);
            }
        }
        assert_int_equal(kn_timeline_column_verdict(t, cols[2]), KN_VERDICT_LATE);
        check(t);
        assert_int_equal(count(KN_R_INHERITS_LATE_INPUT), 2);
        assert_int_equal(count(KN_R_AFTER_MOMENT), 1);
    }
    assert_int_equal(first[2].lo, HOUR);
    assert_int_equal(first[2].hi, 2 * DAY);
}

static void test_inherits_late_input_chain_in_notes(void **state)
{
    (void)state;
    static const int perm[4] = {2, 3, 1, 0};
    kn_column *cols[4];
    build_chain(perm, cols);
    kn_timeline *t = solve(false);
    check(t);
    size_t n;
    kn_diag **all = kn_sink_diags(W->sink, &n);
    kn_diag *top = NULL;
    for (size_t i = 0; i < n; i++) {
        if (all[i]->rule == KN_R_INHERITS_LATE_INPUT && strcmp(all[i]->subject, "late_ratio_scaled") == 0) {
            top = all[i];
        }
    }
    assert_non_null(top);
    assert_int_equal(top->severity, KN_SEV_ERROR);
    assert_int_equal(top->pos.line, cols[2]->derived_from[0].node->pos.line);
    assert_contains(top->message, "derived from 'late_ratio', which is available only after the moment");
    assert_note(top, "'late_ratio_scaled' is derived from 'late_ratio'", cols[2]->derived_from[0].node->pos.line);
    assert_note(top, "'late_ratio' is derived from 'delivered_late'", cols[1]->derived_from[1].node->pos.line);
    assert_note(top, "'delivered_late' is known at 'delivered'", cols[0]->known.node->pos.line);
    assert_note(top, "'delivered' is at least 1h after 'dispatch'", 0);
}

static void test_inherits_maybe_late_is_a_warning(void **state)
{
    (void)state;
    kn_event *m = ev("dispatch");
    kn_event *w = ev("weighed");
    after(w, m, -HOUR, HOUR);
    moment(m);
    kn_column *weight = known_col("weight", w);
    weight->role = KN_ROLE_EXCLUDED;
    kn_column *band = col("weight_band", KN_ROLE_FEATURE);
    derive(band, weight);
    kn_timeline *t = solve(false);
    check(t);
    kn_diag *d = only(KN_R_INHERITS_LATE_INPUT);
    assert_int_equal(d->severity, KN_SEV_WARNING);
    assert_contains(d->message, "may be available after the moment: between 1h before and 1h after");
    /* the sink re-applies the rulebook's severity at finish; the cap holds */
    kn_sink_finish(W->sink, NULL);
    assert_int_equal(only(KN_R_INHERITS_LATE_INPUT)->severity, KN_SEV_WARNING);
}

static void test_derivation_cycle_is_skipped(void **state)
{
    (void)state;
    kn_event *m = ev("dispatch");
    moment(m);
    kn_column *a = col("a_ratio", KN_ROLE_FEATURE);
    kn_column *b = col("b_ratio", KN_ROLE_FEATURE);
    kn_column *c = col("c_after_cycle", KN_ROLE_FEATURE);
    kn_column *ok = known_col("ok", m);
    derive(a, b);
    derive(b, a);
    derive(c, a);
    kn_timeline *t = solve(false);
    assert_false(kn_timeline_column_timing(t, a)->ordered);
    assert_false(kn_timeline_column_timing(t, c)->ordered);
    assert_true(kn_timeline_column_timing(t, ok)->computed);
    check(t);
    assert_int_equal(n_diags(), 0);
}

static void test_built_from_target_through_chain(void **state)
{
    (void)state;
    kn_event *m = ev("loan_start");
    kn_event *ret = ev("returned");
    after(ret, m, DAY, 30 * DAY);
    moment(m);
    kn_column *label = known_col("returned_late", ret);
    label->role = KN_ROLE_TARGET;
    target(label);
    kn_column *rate = col("branch_late_rate", KN_ROLE_EXCLUDED);
    derive(rate, label);
    kn_column *feat = col("branch_late_rate_smoothed", KN_ROLE_FEATURE);
    derive(feat, rate);
    kn_column *direct = col("label_copy", KN_ROLE_FEATURE);
    derive(direct, label);
    kn_timeline *t = solve(false);
    check(t);
    assert_int_equal(count(KN_R_BUILT_FROM_TARGET), 2);
    assert_int_equal(count(KN_R_INHERITS_LATE_INPUT), 0);
    size_t n;
    kn_diag **all = kn_sink_diags(W->sink, &n);
    for (size_t i = 0; i < n; i++) {
        kn_diag *d = all[i];
        if (strcmp(d->subject, "branch_late_rate_smoothed") == 0) {
            assert_string_equal(d->message, "feature 'branch_late_rate_smoothed' is derived from the "
                                            "target 'returned_late' through 'branch_late_rate'");
            assert_note(d, "'branch_late_rate' is derived from 'returned_late'", rate->derived_from[0].node->pos.line);
            assert_note(d, "'returned_late' is the target (prediction.target)", W->s->prediction.target.node->pos.line);
        } else {
            assert_string_equal(d->subject, "label_copy");
            assert_string_equal(d->message, "feature 'label_copy' is derived from the target 'returned_late'");
        }
    }
}

static void test_known_before_inputs(void **state)
{
    (void)state;
    kn_event *m = ev("loan_start");
    kn_event *reserved = ev("reserved");
    kn_event *picked = ev("picked_up");
    before(reserved, m, DAY, 3 * DAY);
    before(picked, m, HOUR, 2 * HOUR);
    moment(m);
    kn_column *pick = known_col("pickup_branch", picked);
    kn_column *c = known_col("pickup_delay", reserved);
    derive(c, pick);
    kn_column *fine = known_col("pickup_hour", picked);
    derive(fine, pick);
    kn_timeline *t = solve(false);
    check(t);
    kn_diag *d = only(KN_R_KNOWN_BEFORE_INPUTS);
    assert_string_equal(d->subject, "pickup_delay");
    assert_contains(d->message, "as early as 3d before the moment 'loan_start', but its inputs are "
                                "available no earlier than 2h before the moment 'loan_start' (input "
                                "'pickup_branch')");
    kn_interval r;
    assert_true(kn_timeline_column_range(t, c, &r));
    assert_int_equal(r.lo, -2 * HOUR);
    assert_int_equal(r.hi, -HOUR);
}

static void test_range_words(void **state)
{
    (void)state;
    kn_arena *a = W->a;
    struct {
        int64_t lo, hi;
        const char *want;
    } cases[] = {
        {-2 * HOUR, DAY + 4 * HOUR, "between 2h before and 1d 4h after the moment 'm'"},
        {HOUR, 2 * HOUR, "between 1h and 2h after the moment 'm'"},
        {-2 * HOUR, -HOUR, "between 2h and 1h before the moment 'm'"},
        {0, HOUR, "between the moment 'm' and 1h after it"},
        {-HOUR, 0, "between 1h before the moment 'm' and the moment itself"},
        {0, 0, "exactly at the moment 'm'"},
        {-30 * MIN, -30 * MIN, "exactly 30min before the moment 'm'"},
        {HOUR, INF, "from 1h after the moment 'm' on, with no upper bound"},
        {-INF, -HOUR, "at the latest 1h before the moment 'm', with no lower bound"},
        {-INF, INF, "at a time no constraint bounds relative to the moment 'm'"},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        kn_interval r = {cases[i].lo, cases[i].hi};
        assert_string_equal(kn_timeline_range_words(a, r, "m"), cases[i].want);
    }
}

static void test_no_moment_no_timeline(void **state)
{
    (void)state;
    kn_event *e = ev("dispatch");
    kn_column *c = known_col("parcel_weight", e);
    W->s->prediction.moment.name = "dispach";
    kn_timeline *t = solve(false);
    assert_non_null(t);
    assert_null(kn_timeline_moment(t));
    kn_interval r;
    assert_false(kn_timeline_event_range(t, e, &r));
    assert_int_equal(kn_timeline_column_verdict(t, c), KN_VERDICT_UNKNOWN);
    check(t);
    assert_int_equal(n_diags(), 0);
}

static void test_huge_lags_do_not_overflow(void **state)
{
    (void)state;
    /* 40 events each up to 10,000 years after the previous one: the sum
     * leaves int64 and the bound must read unbounded, not wrap round. */
    kn_event *prev = ev("e0");
    moment(prev);
    kn_event *e = prev;
    for (int i = 1; i < 40; i++) {
        char *name = kn_printf(W->a, "e%d", i);
        e = ev(name);
        after(e, prev, KN_DURATION_MAX, KN_DURATION_MAX);
        prev = e;
    }
    kn_timeline *t = solve(false);
    assert_false(kn_timeline_contradictory(t));
    kn_interval r;
    assert_true(kn_timeline_event_range(t, e, &r));
    assert_true(r.lo > 0);
    assert_int_equal(r.hi, INF);
    /* and a long negative loop through them is still found */
    after(W->s->events[0], e, 0, INF);
    t = solve(false);
    assert_true(kn_timeline_contradictory(t));
}


/* --- the text report ----------------------------------------------------- */

/* The text report, with the findings of the availability rules in it (the
 * report groups the columns by them). */
static char *report(kn_timeline *t)
{
    char *buf = NULL;
    size_t len = 0;
    const kn_doc_findings *found = NULL;
    if (t) {
        check(t);
        kn_sink_finish(W->sink, NULL);
        found = kn_doc_findings_make(W->a, W->sink, 0, W->s, t);
    }
    FILE *f = open_memstream(&buf, &len);
    assert_non_null(f);
    kn_timeline_write_text(f, W->s, t, found);
    fclose(f);
    char *copy = kn_strdup(W->a, buf);
    free(buf);
    return copy;
}

static void test_text_report_aligned(void **state)
{
    (void)state;
    parcel p = parcel_events();
    moment(p.dispatch);
    W->s->dataset = "parcel_eta";
    known_col("order_value", p.order);
    known_col("delivery_rating", p.delivered);
    kn_column *label = known_col("late", p.delivered);
    label->role = KN_ROLE_TARGET;
    kn_timeline *t = solve(false);
    char *out = report(t);
    assert_contains(out, "Timeline of 'parcel_eta': moment 'dispatch'");
    assert_contains(out, "  event           earliest   latest\n");
    assert_contains(out, "  order_placed    -3d        -30min\n");
    assert_contains(out, "  dispatch        0s         0s       the moment\n");
    assert_contains(out, "  delivered       +2h 10min  +10d 6h\n");
    assert_contains(out, "Features late in every case: available only after the moment (1):\n"
                         "  delivery_rating  feature  +2h 10min  +10d 6h  after the moment           after-moment  known at delivered\n");
    assert_contains(out, "Features available at the moment (1):\n"
                         "  order_value      feature  -3d        -30min   available                  -             known at order_placed\n");
    /* the target is not a feature: never late */
    assert_contains(out, "(target, timestamps, identifiers, split, weight, excluded): never late (1):\n"
                         "  late             target   +2h 10min  +10d 6h  the target: not a feature  -");
    /* no trailing blanks */
    assert_null(strstr(out, " \n"));
}

static void test_text_report_escapes_names(void **state)
{
    (void)state;
    kn_event *m = ev("dis\x1b[2Jpatch");
    moment(m);
    known_col("bell\a", m);
    kn_timeline *t = solve(false);
    char *out = report(t);
    assert_null(strchr(out, '\x1b'));
    assert_null(strchr(out, '\a'));
    assert_contains(out, "dis\\e[2Jpatch");
}

static void test_text_report_contradiction(void **state)
{
    (void)state;
    kn_event *a = ev("oven_on");
    kn_event *b = ev("oven_off");
    after(b, a, HOUR, 2 * HOUR);
    before(b, a, 0, INF);
    moment(a);
    char *out = report(solve(false));
    assert_contains(out, "contradict each other (1 contradiction)");
    assert_contains(out, "'oven_off' is not after 'oven_on' (events.oven_off.before)");
    /* the events on the contradiction are set aside, and listed as such */
    assert_contains(out, "  oven_off  -         -       set aside: a schema error or a contradiction\n");
    assert_contains(report(NULL), "does not name a defined event");
}

int main(void)
{
#define T(f) cmocka_unit_test_setup_teardown(f, setup, teardown)
    const struct CMUnitTest tests[] = {
        T(test_chain_forward_and_back),
        T(test_chain_steps_name_constraints),
        T(test_before_is_the_mirror_of_after),
        T(test_unbounded_ends),
        T(test_negative_lags),
        T(test_two_paths_take_the_tightest),
        T(test_calendar_month_against_30_days),
        T(test_calendar_year_against_365_days),
        T(test_contradiction_with_its_cycle),
        T(test_contradiction_away_from_the_moment),
        T(test_every_contradiction_is_reported),
        T(test_zero_cycle_is_consistent),
        T(test_bad_lag_is_skipped),
        T(test_strict_moment_at_exactly_zero),
        T(test_after_moment_with_proof),
        T(test_maybe_after_moment_gives_range),
        T(test_available_column_is_quiet),
        T(test_unordered_event),
        T(test_unordered_but_surely_late),
        T(test_only_features_get_late_verdicts),
        T(test_delay_and_latency_are_added),
        T(test_window_ends_after_the_moment),
        T(test_window_past_landed_records),
        T(test_window_surely_past_landed_records),
        T(test_as_of_after_moment),
        T(test_derived_order_independent),
        T(test_inherits_late_input_chain_in_notes),
        T(test_inherits_maybe_late_is_a_warning),
        T(test_derivation_cycle_is_skipped),
        T(test_built_from_target_through_chain),
        T(test_known_before_inputs),
        T(test_range_words),
        T(test_no_moment_no_timeline),
        T(test_huge_lags_do_not_overflow),
        T(test_text_report_aligned),
        T(test_text_report_escapes_names),
        T(test_text_report_contradiction),
    };
#undef T
    return cmocka_run_group_tests(tests, NULL, NULL);
}

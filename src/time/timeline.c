/* timeline.c - the timeline as a Simple Temporal Network (Dechter, Meiri &
 * Pearl, 1991).  Every event is a time point; every constraint
 * t(later) - t(earlier) in [lo, hi] is an edge earlier->later of weight hi
 * and an edge later->earlier of weight -lo.  Queue-based Bellman-Ford finds
 * every negative cycle (a contradiction) and, when there is none, the
 * shortest paths from and to the moment, which bound t(X) - t(moment) for
 * every event X.  The searches start from a reverse postorder of the graph,
 * so their cost does not depend on the order events are declared in, and
 * look for a cycle in the predecessor graph every n relaxations, so a
 * short negative cycle is found in about one sweep, not n.  Column availability (SPEC §3.5) is then computed in
 * derivation order.  Hands on a kn_timeline read by the availability checks
 * and the timeline document. */
#include "timeline.h"

#include "../util/text.h"

#include <stdint.h>
#include <string.h>

#define NONE SIZE_MAX
/* Contradictions reported before the search stops: each costs one full
 * search, and a hostile file could hold thousands. */
#define MAX_CONTRADICTIONS 100
#define KN_STR_(x) #x
#define KN_STR(x) KN_STR_(x)

/* Path sums need more than 64 bits: a path of n edges of up to 10,000
 * years each overflows int64 after about 30 edges, and the negative-cycle
 * search must never saturate (a saturated value stops decreasing, which
 * would hide the cycle). */
#ifdef __SIZEOF_INT128__
__extension__ typedef __int128 wide;
static wide wide_add(wide a, int64_t b)
{
    return a + b;
}
#else
typedef int64_t wide;
static wide wide_add(wide a, int64_t b)
{
    return kn_time_add(a, b);
}
#endif

typedef struct edge {
    size_t from, to;
    int64_t w;
    kn_chain_step step;
    bool off; /* set aside after a contradiction was reported on it */
} edge;

struct kn_timeline {
    kn_arena *arena;
    const kn_schema *schema;
    const kn_event *moment;
    size_t moment_index;
    bool strict;

    size_t n_ev;
    edge *edges;
    size_t n_edges;
    size_t *out_off, *out_e; /* edges leaving each event (CSR) */
    size_t *in_off, *in_e;   /* edges entering each event */
    size_t *order;           /* reverse postorder over the edges of weight <= 0 */

    int64_t *up, *down;         /* bounds of t(X) - t(moment) */
    size_t *pred_up, *pred_down; /* edge behind each bound, NONE at the ends */

    kn_contradiction *cyc;
    size_t n_cyc;
    bool contradictory;
    bool search_cut; /* stopped at MAX_CONTRADICTIONS or the work limit */
    bool work_cut;   /* ... at the work limit */
    bool unsolved;   /* no ranges at all: a contradiction could not be
                        isolated, or the search for them was cut */
    bool *aside;     /* per event: broken, on a contradiction, or tied to the
                        moment only through such an event (no range) */
    const char **step_text; /* per edge: the words of its step, made once
                               (many findings share the steps of a chain) */
    size_t *first_up, *first_down; /* per first_of event: the member whose
                                      bound decided its upper / lower end */

    kn_column_timing *col;
    size_t n_col;
};

/* Scratch space for one Bellman-Ford run. */
typedef struct scratch {
    wide *d;
    size_t *pred, *cnt, *queue, *stamp;
    bool *inq, *seen;
    size_t token;
    size_t work; /* relaxations tried by the negative-cycle searches so far */
} scratch;

static size_t ev_index(const kn_timeline *t, const kn_event *e)
{
    if (e && e->index < t->n_ev && t->schema->events[e->index] == e) {
        return e->index;
    }
    return NONE;
}

static const kn_event *decl_event(const kn_constraint *c)
{
    return c->before ? c->earlier : c->later;
}

static const kn_pos *constraint_pos(const kn_constraint *c)
{
    if (c->lag.node) {
        return &c->lag.node->pos;
    }
    if (c->ref.node) {
        return &c->ref.node->pos;
    }
    const kn_event *d = decl_event(c);
    return d && d->key ? &d->key->pos : NULL;
}

static size_t sat_mul(size_t a, size_t b)
{
    if (a && b > SIZE_MAX / a) {
        return SIZE_MAX;
    }
    return a * b;
}

/* --- building the network ------------------------------------------------ */

static void add_edge(kn_timeline *t, size_t from, size_t to, int64_t w,
                     const kn_constraint *c, bool upper)
{
    edge *e = &t->edges[t->n_edges++];
    e->from = from;
    e->to = to;
    e->w = w;
    e->step.con = c;
    e->step.upper = upper;
    e->off = false;
}

static void build_csr(kn_timeline *t, bool incoming, size_t **off_out, size_t **idx_out)
{
    size_t n = t->n_ev;
    size_t *off = kn_alloc_array(t->arena, n + 1, sizeof *off);
    size_t *idx = kn_alloc_array(t->arena, t->n_edges ? t->n_edges : 1, sizeof *idx);
    for (size_t i = 0; i < t->n_edges; i++) {
        off[(incoming ? t->edges[i].to : t->edges[i].from) + 1]++;
    }
    for (size_t i = 0; i < n; i++) {
        off[i + 1] += off[i];
    }
    size_t *fill = kn_alloc_array(t->arena, n + 1, sizeof *fill);
    memcpy(fill, off, (n + 1) * sizeof *fill);
    for (size_t i = 0; i < t->n_edges; i++) {
        size_t v = incoming ? t->edges[i].to : t->edges[i].from;
        idx[fill[v]++] = i;
    }
    *off_out = off;
    *idx_out = idx;
}

static void build_network(kn_timeline *t)
{
    const kn_schema *s = t->schema;
    size_t n_cons = 0;
    for (size_t i = 0; i < s->n_events; i++) {
        n_cons += s->events[i]->n_cons;
    }
    t->edges = kn_alloc_array(t->arena, sat_mul(n_cons, 2) + 1, sizeof *t->edges);
    for (size_t i = 0; i < s->n_events; i++) {
        const kn_event *ev = s->events[i];
        for (size_t k = 0; k < ev->n_cons; k++) {
            const kn_constraint *c = &ev->cons[k];
            size_t a = ev_index(t, c->earlier), b = ev_index(t, c->later);
            /* Unresolved names, unreadable lags and MIN > MAX were reported
             * by the loader; an event with such a constraint is set aside
             * whole (aside_broken below). */
            if (a == NONE || b == NONE || c->broken || !c->lag.present || c->lag.lo > c->lag.hi ||
                s->events[a]->broken || s->events[b]->broken) {
                continue;
            }
            if (c->lag.hi < KN_TIME_INF) {
                add_edge(t, a, b, c->lag.hi, c, true);
            }
            if (c->lag.lo > -KN_TIME_INF) {
                add_edge(t, b, a, kn_time_neg(c->lag.lo), c, false);
            }
        }
    }
    build_csr(t, false, &t->out_off, &t->out_e);
    build_csr(t, true, &t->in_off, &t->in_e);
}

/* The order the negative-cycle search starts in: a reverse postorder of an
 * iterative depth-first search over the edges of weight <= 0 (lower bounds:
 * later -> earlier).  From a virtual source every distance starts at 0, so
 * these are the edges that can lower one; in reverse postorder each event
 * comes before the events it lowers, and a chain settles in one sweep
 * whichever way round it was declared. */
static void build_order(kn_timeline *t)
{
    size_t n = t->n_ev;
    t->order = kn_alloc_array(t->arena, n ? n : 1, sizeof *t->order);
    unsigned char *state = kn_alloc(t->arena, n ? n : 1); /* 0 new, 1 open, 2 done */
    size_t *stack = kn_alloc_array(t->arena, n ? n : 1, sizeof *stack);
    size_t *next = kn_alloc_array(t->arena, n ? n : 1, sizeof *next);
    size_t done = 0;
    for (size_t r = 0; r < n; r++) {
        if (state[r]) {
            continue;
        }
        size_t top = 0;
        stack[top++] = r;
        state[r] = 1;
        next[r] = t->out_off[r];
        while (top) {
            size_t u = stack[top - 1];
            if (next[u] < t->out_off[u + 1]) {
                const edge *e = &t->edges[t->out_e[next[u]++]];
                if (e->w <= 0 && !state[e->to]) {
                    state[e->to] = 1;
                    next[e->to] = t->out_off[e->to];
                    stack[top++] = e->to;
                }
            } else {
                state[u] = 2;
                top--;
                t->order[n - 1 - done++] = u; /* postorder, filled from the end */
            }
        }
    }
}

static scratch *scratch_new(kn_timeline *t)
{
    size_t n = t->n_ev ? t->n_ev : 1;
    scratch *sc = kn_alloc(t->arena, sizeof *sc);
    sc->d = kn_alloc_array(t->arena, n, sizeof *sc->d);
    sc->pred = kn_alloc_array(t->arena, n, sizeof *sc->pred);
    sc->cnt = kn_alloc_array(t->arena, n, sizeof *sc->cnt);
    sc->queue = kn_alloc_array(t->arena, n, sizeof *sc->queue);
    sc->stamp = kn_alloc_array(t->arena, n, sizeof *sc->stamp);
    sc->inq = kn_alloc_array(t->arena, n, sizeof *sc->inq);
    sc->seen = kn_alloc_array(t->arena, n, sizeof *sc->seen);
    return sc;
}

/* --- negative cycles ----------------------------------------------------- */

/* The cycle of the predecessor graph through x, in path order.  Any cycle
 * of a Bellman-Ford predecessor graph has negative weight; the sum is
 * checked anyway.  Returns false when the cycle is not negative. */
static bool extract_cycle(kn_timeline *t, scratch *sc, size_t x, kn_contradiction *out,
                          size_t **edge_ids)
{
    size_t n = 0, y = x;
    do {
        n++;
        y = t->edges[sc->pred[y]].from;
    } while (y != x && n <= t->n_ev);
    if (y != x) {
        return false;
    }
    size_t *ids = kn_alloc_array(t->arena, n, sizeof *ids);
    y = x;
    for (size_t i = n; i-- > 0;) {
        ids[i] = sc->pred[y];
        y = t->edges[sc->pred[y]].from;
    }
    wide sum = 0;
    for (size_t i = 0; i < n; i++) {
        sum = wide_add(sum, t->edges[ids[i]].w);
    }
    if (sum >= 0) {
        return false;
    }
    kn_chain_step *steps = kn_alloc_array(t->arena, n, sizeof *steps);
    for (size_t i = 0; i < n; i++) {
        steps[i] = t->edges[ids[i]].step;
    }
    out->steps = steps;
    out->n_steps = n;
    out->weight = sum <= -KN_TIME_INF ? -KN_TIME_INF : (int64_t)sum;
    *edge_ids = ids;
    return true;
}

/* Walks the predecessors from v looking for a cycle. */
static bool pred_cycle_from(kn_timeline *t, scratch *sc, size_t v, kn_contradiction *out,
                            size_t **ids)
{
    size_t token = ++sc->token, x = v;
    for (size_t i = 0; i <= t->n_ev; i++) {
        if (sc->stamp[x] == token) {
            return extract_cycle(t, sc, x, out, ids);
        }
        sc->stamp[x] = token;
        if (sc->pred[x] == NONE) {
            return false;
        }
        x = t->edges[sc->pred[x]].from;
    }
    return false;
}

/* Looks for any cycle in the whole predecessor graph, O(V). */
static bool pred_cycle_any(kn_timeline *t, scratch *sc, kn_contradiction *out, size_t **ids)
{
    memset(sc->seen, 0, t->n_ev * sizeof *sc->seen);
    for (size_t s = 0; s < t->n_ev; s++) {
        size_t token = ++sc->token, x = s;
        while (!sc->seen[x]) {
            sc->seen[x] = true;
            sc->stamp[x] = token;
            if (sc->pred[x] == NONE) {
                break;
            }
            x = t->edges[sc->pred[x]].from;
        }
        if (sc->stamp[x] == token && sc->pred[x] != NONE &&
            extract_cycle(t, sc, x, out, ids)) {
            return true;
        }
    }
    return false;
}

/* Bellman-Ford from a virtual source joined to every event by a 0 edge, so
 * that cycles anywhere are found, not only those reachable from the moment.
 * The predecessor graph is searched for a cycle every n relaxations (O(1)
 * amortised per relaxation) and whenever a relaxation chain reaches n edges,
 * which proves a negative cycle.  cap bounds the relaxations of this search:
 * CUT when it runs out first. */
typedef enum cycle_result { NO_CYCLE, CYCLE, CYCLE_UNLOCATED, CUT } cycle_result;

static cycle_result find_cycle(kn_timeline *t, scratch *sc, kn_contradiction *out, size_t **ids,
                               size_t cap)
{
    size_t n = t->n_ev;
    for (size_t v = 0; v < n; v++) {
        sc->d[v] = 0;
        sc->pred[v] = NONE;
        sc->cnt[v] = 0;
        sc->inq[v] = true;
        sc->queue[v] = t->order[v];
    }
    size_t head = 0, len = n;
    /* Without a negative cycle the queue empties within n * m relaxations;
     * twice that proves a cycle even if none was isolated yet. */
    size_t budget = sat_mul(sat_mul(n + 1, t->n_edges + 1), 2);
    size_t until_look = n + 1;
    bool changed = false;
    while (len) {
        size_t u = sc->queue[head];
        head = head + 1 == n ? 0 : head + 1;
        len--;
        sc->inq[u] = false;
        for (size_t k = t->out_off[u]; k < t->out_off[u + 1]; k++) {
            size_t ei = t->out_e[k];
            const edge *e = &t->edges[ei];
            if (e->off) {
                continue;
            }
            wide nd = wide_add(sc->d[u], e->w);
            if (nd < sc->d[e->to]) {
                size_t v = e->to;
                sc->d[v] = nd;
                sc->pred[v] = ei;
                sc->cnt[v] = sc->cnt[u] + 1;
                changed = true;
                if (sc->cnt[v] >= n) {
                    sc->cnt[v] = 0;
                    if (pred_cycle_from(t, sc, v, out, ids) || pred_cycle_any(t, sc, out, ids)) {
                        return CYCLE;
                    }
                }
                if (!sc->inq[v]) {
                    sc->inq[v] = true;
                    sc->queue[(head + len) % n] = v;
                    len++;
                }
            }
            sc->work++;
            if (--until_look == 0) {
                until_look = n + 1;
                if (changed && pred_cycle_any(t, sc, out, ids)) {
                    return CYCLE;
                }
                changed = false;
            }
            if (--budget == 0) {
                return pred_cycle_any(t, sc, out, ids) ? CYCLE : CYCLE_UNLOCATED;
            }
            if (--cap == 0) {
                return CUT;
            }
        }
    }
    return NO_CYCLE;
}

/* The step a contradiction points at: the constraint declared last. */
static size_t latest_step(const kn_contradiction *c)
{
    size_t best = 0, best_ev = 0, best_k = 0;
    for (size_t i = 0; i < c->n_steps; i++) {
        const kn_constraint *con = c->steps[i].con;
        const kn_event *d = decl_event(con);
        size_t ev = d->index;
        size_t k = 0;
        while (k < d->n_cons && &d->cons[k] != con) {
            k++;
        }
        if (i == 0 || ev > best_ev || (ev == best_ev && k > best_k)) {
            best = i;
            best_ev = ev;
            best_k = k;
        }
    }
    return best;
}

static void find_contradictions(kn_timeline *t, scratch *sc)
{
    t->cyc = kn_alloc_array(t->arena, MAX_CONTRADICTIONS + 1, sizeof *t->cyc);
    /* The first search runs to its end: it decides whether the network is
     * consistent.  The searches for further contradictions share a budget
     * proportional to the network, however many contradictions a hostile
     * file holds; when it runs out, the output says the search stopped. */
    size_t limit = sat_mul(t->n_ev + t->n_edges + 1, 64);
    limit = limit > SIZE_MAX - 4000000 ? SIZE_MAX : limit + 4000000;
    while (t->n_cyc < MAX_CONTRADICTIONS) {
        size_t cap = SIZE_MAX;
        if (t->n_cyc) {
            if (sc->work >= limit) {
                t->search_cut = t->work_cut = true;
                break;
            }
            cap = limit - sc->work;
        }
        kn_contradiction c = {0};
        size_t *ids = NULL;
        cycle_result r = find_cycle(t, sc, &c, &ids, cap);
        if (r == NO_CYCLE) {
            break;
        }
        if (r == CUT) {
            t->search_cut = t->work_cut = true;
            break;
        }
        t->contradictory = true;
        if (r == CYCLE_UNLOCATED) {
            t->cyc[t->n_cyc++] = c;
            break;
        }
        c.at = latest_step(&c);
        t->edges[ids[c.at]].off = true;
        t->cyc[t->n_cyc++] = c;
    }
    if (t->n_cyc == MAX_CONTRADICTIONS) {
        t->search_cut = true;
    }
}

/* --- words ------------------------------------------------------------- */

static const char *fmt_dur(int64_t us, char *buf)
{
    return kn_duration_format(us, buf, 48);
}

/* One bound of a constraint, said from the declaring event's side. */
char *kn_timeline_step_words(kn_arena *a, const kn_chain_step *st)
{
    const kn_constraint *c = st->con;
    const kn_event *self = decl_event(c);
    const kn_event *other = c->before ? c->later : c->earlier;
    char b[48];
    const char *x = self->name, *y = other ? other->name : "?";
    const char *where = c->before ? "before" : "after";
    /* For `after`, the declared value is t(self) - t(other); for `before`,
     * t(other) - t(self).  Either way the words use the declared direction. */
    const char *same = c->before ? "before" : "after";
    const char *opposite = c->before ? "after" : "before";
    char *text;
    if (st->upper) {
        int64_t v = c->lag.hi;
        if (v >= 0) {
            text = kn_printf(a, "'%s' is at most %s %s '%s'", x, fmt_dur(v, b), same, y);
        } else {
            text = kn_printf(a, "'%s' is at least %s %s '%s'", x, fmt_dur(kn_time_neg(v), b),
                             opposite, y);
        }
    } else {
        int64_t v = c->lag.lo;
        if (v > 0) {
            text = kn_printf(a, "'%s' is at least %s %s '%s'", x, fmt_dur(v, b), same, y);
        } else if (v == 0) {
            text = kn_printf(a, "'%s' is not %s '%s'", x, opposite, y);
        } else {
            text = kn_printf(a, "'%s' is at most %s %s '%s'", x, fmt_dur(kn_time_neg(v), b),
                             opposite, y);
        }
    }
    return kn_printf(a, "%s (events.%s.%s)", text, x, where);
}

void kn_timeline_note_step(kn_sink *sink, kn_diag *d, const kn_chain_step *st)
{
    kn_arena *a = kn_sink_arena(sink);
    kn_diag_note(sink, d, constraint_pos(st->con), "%s", kn_timeline_step_words(a, st));
}

char *kn_timeline_range_words(kn_arena *a, kn_interval r, const char *m)
{
    char b1[48], b2[48];
    int64_t lo = r.lo, hi = r.hi;
    if (lo <= -KN_TIME_INF && hi >= KN_TIME_INF) {
        return kn_printf(a, "at a time no constraint bounds relative to the moment '%s'", m);
    }
    if (hi >= KN_TIME_INF) {
        if (lo < 0) {
            return kn_printf(a, "from %s before the moment '%s' on, with no upper bound",
                             fmt_dur(kn_time_neg(lo), b1), m);
        }
        if (lo == 0) {
            return kn_printf(a, "from the moment '%s' on, with no upper bound", m);
        }
        return kn_printf(a, "from %s after the moment '%s' on, with no upper bound",
                         fmt_dur(lo, b1), m);
    }
    if (lo <= -KN_TIME_INF) {
        if (hi < 0) {
            return kn_printf(a, "at the latest %s before the moment '%s', with no lower bound",
                             fmt_dur(kn_time_neg(hi), b1), m);
        }
        if (hi == 0) {
            return kn_printf(a, "at the latest at the moment '%s', with no lower bound", m);
        }
        return kn_printf(a, "at the latest %s after the moment '%s', with no lower bound",
                         fmt_dur(hi, b1), m);
    }
    if (lo == hi) {
        if (lo == 0) {
            return kn_printf(a, "exactly at the moment '%s'", m);
        }
        return kn_printf(a, "exactly %s %s the moment '%s'",
                         fmt_dur(lo < 0 ? kn_time_neg(lo) : lo, b1),
                         lo < 0 ? "before" : "after", m);
    }
    if (lo >= 0) {
        if (lo == 0) {
            return kn_printf(a, "between the moment '%s' and %s after it", m, fmt_dur(hi, b1));
        }
        return kn_printf(a, "between %s and %s after the moment '%s'", fmt_dur(lo, b1),
                         fmt_dur(hi, b2), m);
    }
    if (hi <= 0) {
        if (hi == 0) {
            return kn_printf(a, "between %s before the moment '%s' and the moment itself",
                             fmt_dur(kn_time_neg(lo), b1), m);
        }
        return kn_printf(a, "between %s and %s before the moment '%s'",
                         fmt_dur(kn_time_neg(lo), b1), fmt_dur(kn_time_neg(hi), b2), m);
    }
    return kn_printf(a, "between %s before and %s after the moment '%s'",
                     fmt_dur(kn_time_neg(lo), b1), fmt_dur(hi, b2), m);
}

static kn_diag *push_contradiction(kn_timeline *t, kn_sink *sink, const kn_contradiction *c)
{
    kn_arena *a = t->arena;
    if (c->n_steps == 0) {
        const kn_pos *pos = t->moment && t->moment->key ? &t->moment->key->pos : NULL;
        return kn_diag_push(sink, KN_R_TIMELINE_CONTRADICTION, pos, t->moment ? t->moment->name : "",
                            "the event constraints cannot all hold (a negative cycle exists; "
                            "it could not be isolated within the work limit)");
    }
    const kn_chain_step *at = &c->steps[c->at];
    const kn_event *self = decl_event(at->con);
    /* Name the events in the order the loop visits them, starting at the
     * constraint the diagnostic points at. */
    size_t shown = c->n_steps < 6 ? c->n_steps : 5;
    const char *names = "";
    for (size_t i = 0; i < shown; i++) {
        const kn_chain_step *st = &c->steps[(c->at + i) % c->n_steps];
        const kn_constraint *con = st->con;
        const kn_event *from = st->upper ? con->earlier : con->later;
        names = kn_printf(a, "%s%s'%s'", names,
                          i == 0 ? "" : (i + 1 == shown && shown == c->n_steps ? " and " : ", "),
                          from->name);
    }
    if (shown < c->n_steps) {
        names = kn_printf(a, "%s and %zu more", names, c->n_steps - shown);
    }
    const kn_constraint *first = c->steps[c->at].con;
    const kn_event *start = c->steps[c->at].upper ? first->earlier : first->later;
    char b[48];
    kn_diag *d = kn_diag_push(
        sink, KN_R_TIMELINE_CONTRADICTION, constraint_pos(at->con), self->name,
        "the constraints between %s cannot all hold: followed round the loop they put '%s' "
        "at least %s before itself",
        c->n_steps == 1 ? kn_printf(a, "'%s' and itself", start->name) : names, start->name,
        fmt_dur(kn_time_neg(c->weight), b));
    for (size_t i = 0; i < c->n_steps; i++) {
        if (c->n_steps > KN_CHAIN_SHOWN && i == KN_CHAIN_SHOWN / 2) {
            kn_diag_note(sink, d, NULL, "... and %zu more constraints of this loop, not shown",
                         c->n_steps - KN_CHAIN_SHOWN);
            i = c->n_steps - KN_CHAIN_SHOWN / 2;
        }
        kn_timeline_note_step(sink, d, &c->steps[(c->at + i) % c->n_steps]);
    }
    return d;
}

/* --- shortest paths from and to the moment ------------------------------ */

/* Queue-based Bellman-Ford from the moment, forward (reverse = false: the
 * distance moment->X, an upper bound of t(X) - t(moment)) or on the reversed
 * graph (the distance X->moment, minus a lower bound).  Runs only on a
 * network without negative cycles, where it stops within n * m steps. */
static void solve_from_moment(kn_timeline *t, scratch *sc, bool reverse, int64_t *bound,
                              size_t *pred)
{
    size_t n = t->n_ev, m0 = t->moment_index;
    for (size_t v = 0; v < n; v++) {
        sc->seen[v] = false;
        sc->inq[v] = false;
        pred[v] = NONE;
    }
    sc->d[m0] = 0;
    sc->seen[m0] = true;
    sc->inq[m0] = true;
    sc->queue[0] = m0;
    size_t head = 0, len = 1;
    size_t budget = sat_mul(n + 1, t->n_edges + 1);
    const size_t *off = reverse ? t->in_off : t->out_off;
    const size_t *idx = reverse ? t->in_e : t->out_e;
    while (len && budget) {
        size_t u = sc->queue[head];
        head = head + 1 == n ? 0 : head + 1;
        len--;
        sc->inq[u] = false;
        for (size_t k = off[u]; k < off[u + 1] && budget; k++, budget--) {
            size_t ei = idx[k];
            const edge *e = &t->edges[ei];
            if (e->off) {
                continue;
            }
            size_t v = reverse ? e->from : e->to;
            wide nd = wide_add(sc->d[u], e->w);
            if (!sc->seen[v] || nd < sc->d[v]) {
                sc->seen[v] = true;
                sc->d[v] = nd;
                pred[v] = ei;
                if (!sc->inq[v]) {
                    sc->inq[v] = true;
                    sc->queue[(head + len) % n] = v;
                    len++;
                }
            }
        }
    }
    for (size_t v = 0; v < n; v++) {
        wide d = sc->d[v];
        int64_t b;
        if (!sc->seen[v] || d >= KN_TIME_INF) {
            b = KN_TIME_INF; /* no chain, or beyond any representable bound */
        } else if (d <= -KN_TIME_INF) {
            b = -KN_TIME_INF + 1;
        } else {
            b = (int64_t)d;
        }
        if (reverse) {
            /* t(X) - t(moment) >= -d(X -> moment) */
            bound[v] = b >= KN_TIME_INF ? -KN_TIME_INF : kn_time_neg(b);
        } else {
            bound[v] = b;
        }
    }
}

/* --- columns ------------------------------------------------------------- */

static kn_interval iv(int64_t lo, int64_t hi)
{
    kn_interval r = {lo, hi};
    return r;
}

static kn_interval iv_max(kn_interval a, kn_interval b)
{
    return iv(a.lo > b.lo ? a.lo : b.lo, a.hi > b.hi ? a.hi : b.hi);
}

kn_verdict kn_timeline_classify(const kn_timeline *t, kn_interval r)
{
    bool strict = t && t->strict;
    if (strict ? r.lo >= 0 : r.lo > 0) {
        return KN_VERDICT_LATE;
    }
    if (strict ? r.hi < 0 : r.hi <= 0) {
        return KN_VERDICT_AVAILABLE;
    }
    return KN_VERDICT_MAYBE_LATE;
}

static bool event_iv(const kn_timeline *t, const kn_event *e, kn_interval *out)
{
    size_t i = ev_index(t, e);
    if (i == NONE || t->unsolved || t->aside[i]) {
        return false;
    }
    *out = iv(t->down[i], t->up[i]);
    return true;
}

static size_t col_index(const kn_timeline *t, const kn_column *c)
{
    if (c && c->index < t->n_col && t->schema->columns[c->index] == c) {
        return c->index;
    }
    return NONE;
}

/* t(event) + lag, where a lag whose MIN exceeds its MAX (reported by the
 * loader) makes the part unknown. */
static bool lag_iv(const kn_lag *l, kn_interval *out)
{
    if (!l->present) {
        *out = iv(0, 0);
        return true;
    }
    if (l->lo > l->hi) {
        return false;
    }
    *out = iv(l->lo, l->hi);
    return true;
}

static bool source_wait(const kn_column *c, kn_interval *out)
{
    *out = iv(0, 0);
    if (!c->source.node && !c->source.target) {
        return true;
    }
    const kn_source *src = KN_REF_SOURCE(c->source);
    if (!src) {
        return false;
    }
    if (!lag_iv(&src->latency, out)) {
        return false;
    }
    if (src->has_refresh) {
        if (src->refresh < 0) {
            return false;
        }
        out->hi = kn_time_add(out->hi, src->refresh);
    }
    return true;
}

static bool is_target(const kn_schema *s, const kn_column *c)
{
    return c->role == KN_ROLE_TARGET || KN_REF_COLUMN(s->prediction.target) == c;
}

static void compute_column(kn_timeline *t, size_t ci)
{
    const kn_column *c = t->schema->columns[ci];
    kn_column_timing *T = &t->col[ci];
    T->ordered = true;

    if (is_target(t->schema, c)) {
        T->from_target = true;
    }
    /* Not through a column that is set aside: what it derives from is not
     * known for sure (a derivation cycle, a name that resolves to nothing). */
    for (size_t i = 0; i < c->n_derived && !T->from_target; i++) {
        size_t j = col_index(t, KN_REF_COLUMN(c->derived_from[i]));
        if (j != NONE && !t->schema->columns[j]->broken && t->col[j].from_target) {
            T->from_target = true;
            T->target_via = t->schema->columns[j];
        }
    }

    bool ok = !t->unsolved && !c->broken;
    kn_interval delay, wait;
    ok = lag_iv(&c->delay, &delay) && ok;
    ok = source_wait(c, &wait) && ok;

    if (c->n_one_of) {
        /* known: {one_of: [...]}: the row's event is one of the members,
         * so the hull of their ranges (SPEC §3.5). */
        T->has[KN_PART_KNOWN] = true;
        kn_interval hull = iv(KN_TIME_INF, -KN_TIME_INF);
        for (size_t k = 0; k < c->n_one_of && ok; k++) {
            const kn_event *m = KN_REF_EVENT(c->one_of[k]);
            kn_interval e;
            if (!event_iv(t, m, &e)) {
                ok = false;
                break;
            }
            if (!T->known_lo_by || e.lo < hull.lo) {
                hull.lo = e.lo;
                T->known_lo_by = m;
            }
            if (!T->known_hi_by || e.hi > hull.hi) {
                hull.hi = e.hi;
                T->known_hi_by = m;
            }
        }
        if (ok) {
            T->event[KN_PART_KNOWN] = hull;
            T->part[KN_PART_KNOWN] = kn_interval_add(kn_interval_add(hull, delay), wait);
        }
    } else if (c->known.node || c->known.target) {
        T->has[KN_PART_KNOWN] = true;
        kn_interval e;
        if (ok && event_iv(t, KN_REF_EVENT(c->known), &e)) {
            T->known_lo_by = T->known_hi_by = KN_REF_EVENT(c->known);
            T->event[KN_PART_KNOWN] = e;
            T->part[KN_PART_KNOWN] = kn_interval_add(kn_interval_add(e, delay), wait);
        } else {
            ok = false;
        }
    }
    if (c->window.present) {
        T->has[KN_PART_WINDOW] = true;
        kn_interval e;
        if (ok && c->window.to.lo <= c->window.to.hi &&
            event_iv(t, KN_REF_EVENT(c->window.anchor), &e)) {
            T->event[KN_PART_WINDOW] = e;
            T->window_end = kn_interval_add(e, c->window.to);
            T->part[KN_PART_WINDOW] = kn_interval_add(T->window_end, wait);
        } else {
            ok = false;
        }
    }
    bool own_timing = T->has[KN_PART_KNOWN] || T->has[KN_PART_WINDOW];
    if (c->n_derived && ok) {
        kn_interval latest = iv(-KN_TIME_INF, -KN_TIME_INF);
        bool any_unordered = false, any_timed = false;
        for (size_t i = 0; i < c->n_derived; i++) {
            size_t j = col_index(t, KN_REF_COLUMN(c->derived_from[i]));
            /* An input without declared timing (an identifier, say) or one
             * set aside: the column is judged on its timed inputs (SPEC §4). */
            if (j == NONE || !t->col[j].computed) {
                T->inputs_partial = true;
                continue;
            }
            any_timed = true;
            const kn_column_timing *in = &t->col[j];
            if (!T->latest_hi || in->range.hi > latest.hi) {
                T->latest_hi = t->schema->columns[j];
            }
            if (!T->latest_lo || in->range.lo > latest.lo) {
                T->latest_lo = t->schema->columns[j];
            }
            latest = iv_max(latest, in->range);
            any_unordered = any_unordered || in->verdict == KN_VERDICT_UNORDERED;
        }
        kn_interval part = kn_interval_add(latest, delay);
        kn_verdict v = any_timed ? kn_timeline_classify(t, part) : KN_VERDICT_UNKNOWN;
        if (any_timed && !T->inputs_partial) {
            T->has[KN_PART_INPUTS] = true;
            T->inputs_latest = latest;
            T->part[KN_PART_INPUTS] = part;
            T->part_verdict[KN_PART_INPUTS] =
                v != KN_VERDICT_LATE && any_unordered ? KN_VERDICT_UNORDERED : v;
        } else if (any_timed && v == KN_VERDICT_LATE) {
            /* Late whatever the untimed inputs do; how late is open-ended. */
            T->has[KN_PART_INPUTS] = true;
            T->inputs_latest = iv(latest.lo, KN_TIME_INF);
            T->part[KN_PART_INPUTS] = iv(part.lo, KN_TIME_INF);
            T->part_verdict[KN_PART_INPUTS] = KN_VERDICT_LATE;
        } else if (!own_timing) {
            ok = false; /* nothing to judge it by */
        }
    } else if (c->n_derived) {
        T->has[KN_PART_INPUTS] = true;
    }
    if (c->join.present && (c->join.as_of.node || c->join.as_of.target)) {
        T->has[KN_PART_AS_OF] = true;
        kn_interval e;
        if (ok && event_iv(t, KN_REF_EVENT(c->join.as_of), &e)) {
            T->event[KN_PART_AS_OF] = e;
            /* as_of: {event, offset}: the value as it stood at event + offset */
            T->part[KN_PART_AS_OF] = c->join.has_offset ? kn_interval_add(e, c->join.offset) : e;
        } else {
            ok = false;
        }
    }

    bool any = false;
    for (int p = 0; p < KN_PART_COUNT; p++) {
        any = any || T->has[p];
    }
    if (!ok || !any) {
        T->computed = false;
        T->verdict = KN_VERDICT_UNKNOWN;
        return;
    }
    T->computed = true;
    kn_interval total = iv(-KN_TIME_INF, -KN_TIME_INF);
    bool unordered = false;
    for (int p = 0; p < KN_PART_COUNT; p++) {
        if (!T->has[p]) {
            continue;
        }
        total = iv_max(total, T->part[p]);
        if (p != KN_PART_INPUTS) {
            kn_verdict v = kn_timeline_classify(t, T->part[p]);
            if (v != KN_VERDICT_LATE && T->event[p].hi >= KN_TIME_INF) {
                v = KN_VERDICT_UNORDERED;
            }
            T->part_verdict[p] = v;
        }
        unordered = unordered || T->part_verdict[p] == KN_VERDICT_UNORDERED;
    }
    T->range = total;
    kn_verdict v = kn_timeline_classify(t, total);
    T->verdict = v != KN_VERDICT_LATE && unordered ? KN_VERDICT_UNORDERED : v;
}

/* Kahn's algorithm over derived_from: each column after all its inputs, so
 * the results do not depend on the order of columns in the file.  Columns
 * on a derivation cycle (reported by the loader) or behind one are never
 * reached and stay uncomputed. */
static void compute_columns(kn_timeline *t)
{
    const kn_schema *s = t->schema;
    size_t n = t->n_col, n_refs = 0;
    for (size_t i = 0; i < n; i++) {
        n_refs += s->columns[i]->n_derived;
    }
    size_t *indeg = kn_alloc_array(t->arena, n + 1, sizeof *indeg);
    size_t *off = kn_alloc_array(t->arena, n + 1, sizeof *off);
    size_t *users = kn_alloc_array(t->arena, n_refs + 1, sizeof *users);
    size_t *queue = kn_alloc_array(t->arena, n + 1, sizeof *queue);
    /* An input that is set aside (on a derivation cycle, say) is no edge:
     * its users are judged on their other inputs. */
    for (size_t i = 0; i < n; i++) {
        const kn_column *c = s->columns[i];
        for (size_t k = 0; k < c->n_derived; k++) {
            size_t j = col_index(t, KN_REF_COLUMN(c->derived_from[k]));
            if (j != NONE && !s->columns[j]->broken) {
                indeg[i]++;
                off[j + 1]++;
            }
        }
    }
    for (size_t i = 0; i < n; i++) {
        off[i + 1] += off[i];
    }
    size_t *fill = kn_alloc_array(t->arena, n + 1, sizeof *fill);
    memcpy(fill, off, (n + 1) * sizeof *fill);
    for (size_t i = 0; i < n; i++) {
        const kn_column *c = s->columns[i];
        for (size_t k = 0; k < c->n_derived; k++) {
            size_t j = col_index(t, KN_REF_COLUMN(c->derived_from[k]));
            if (j != NONE && !s->columns[j]->broken) {
                users[fill[j]++] = i;
            }
        }
    }
    size_t head = 0, tail = 0;
    for (size_t i = 0; i < n; i++) {
        if (indeg[i] == 0) {
            queue[tail++] = i;
        }
    }
    while (head < tail) {
        size_t i = queue[head++];
        compute_column(t, i);
        for (size_t k = off[i]; k < off[i + 1]; k++) {
            if (--indeg[users[k]] == 0) {
                queue[tail++] = users[k];
            }
        }
    }
}

/* --- what a broken part affects ------------------------------------------ */

static bool contradictions_located(const kn_timeline *t)
{
    for (size_t i = 0; i < t->n_cyc; i++) {
        if (t->cyc[i].n_steps == 0) {
            return false;
        }
    }
    return true;
}

/* The events of every contradiction are set aside with their constraints
 * (SPEC §4: an event on a contradictory cycle is reported and set aside),
 * so the rest of the network is consistent and solved as usual. */
static void set_aside_contradictions(kn_timeline *t)
{
    for (size_t i = 0; i < t->n_cyc; i++) {
        for (size_t k = 0; k < t->cyc[i].n_steps; k++) {
            const kn_constraint *c = t->cyc[i].steps[k].con;
            t->aside[ev_index(t, c->earlier)] = true;
            t->aside[ev_index(t, c->later)] = true;
        }
    }
    for (size_t i = 0; i < t->n_ev; i++) {
        t->aside[i] = t->aside[i] || t->schema->events[i]->broken;
    }
    for (size_t i = 0; i < t->n_edges; i++) {
        edge *e = &t->edges[i];
        e->off = t->aside[e->from] || t->aside[e->to];
    }
}

static bool *copy_seen(kn_timeline *t, const scratch *sc)
{
    bool *seen = kn_alloc_array(t->arena, t->n_ev + 1, sizeof *seen);
    memcpy(seen, sc->seen, t->n_ev * sizeof *seen);
    return seen;
}

/* Reachability from the moment (forward: paths that bound an event from
 * above; reverse: from below) over every constraint as declared, whatever
 * its state: what the declarations tie to the moment before anything is
 * set aside.  A constraint whose lag could not be read ties both ways. */
static void full_reach(const kn_timeline *t, bool reverse, bool *reach, size_t *queue)
{
    const kn_schema *s = t->schema;
    size_t n_cons = 0;
    for (size_t i = 0; i < s->n_events; i++) {
        n_cons += s->events[i]->n_cons;
    }
    size_t *off = kn_alloc_array(t->arena, t->n_ev + 2, sizeof *off);
    size_t *adj = kn_alloc_array(t->arena, sat_mul(n_cons, 2) + 1, sizeof *adj);
    size_t *fill = kn_alloc_array(t->arena, t->n_ev + 1, sizeof *fill);
    for (int pass = 0; pass < 2; pass++) {
        for (size_t i = 0; i < s->n_events; i++) {
            for (size_t k = 0; k < s->events[i]->n_cons; k++) {
                const kn_constraint *c = &s->events[i]->cons[k];
                size_t a = ev_index(t, c->earlier), b = ev_index(t, c->later);
                if (a == NONE || b == NONE) {
                    continue;
                }
                bool unread = c->broken || !c->lag.present;
                /* a -> b bounds b from above (hi); b -> a bounds a (lo) */
                bool ab = unread || c->lag.hi < KN_TIME_INF, ba = unread || c->lag.lo > -KN_TIME_INF;
                size_t from[2] = {a, b}, to[2] = {b, a};
                bool has[2] = {ab, ba};
                for (int e = 0; e < 2; e++) {
                    if (!has[e]) {
                        continue;
                    }
                    size_t u = reverse ? to[e] : from[e], v = reverse ? from[e] : to[e];
                    if (!pass) {
                        off[u + 1]++;
                    } else {
                        adj[fill[u]++] = v;
                    }
                }
            }
        }
        if (!pass) {
            for (size_t i = 0; i < t->n_ev; i++) {
                off[i + 1] += off[i];
            }
            memcpy(fill, off, (t->n_ev + 1) * sizeof *fill);
        }
    }
    size_t head = 0, tail = 0;
    reach[t->moment_index] = true;
    queue[tail++] = t->moment_index;
    while (head < tail) {
        size_t u = queue[head++];
        for (size_t k = off[u]; k < off[u + 1]; k++) {
            if (!reach[adj[k]]) {
                reach[adj[k]] = true;
                queue[tail++] = adj[k];
            }
        }
    }
}

/* An event that the declarations tie to the moment, but that reaches it
 * (in either direction) only through a set-aside event, has no trustworthy
 * range: it is set aside too, silently (its cause has its own error).
 * Events never tied to the moment stay, and are reported as unordered. */
static void set_aside_cut_off(kn_timeline *t, const scratch *sc, const bool *reached_up)
{
    bool any = false;
    for (size_t i = 0; i < t->n_ev && !any; i++) {
        any = t->aside[i];
    }
    if (!any) {
        return;
    }
    bool *up = kn_alloc_array(t->arena, t->n_ev + 1, sizeof *up);
    bool *down = kn_alloc_array(t->arena, t->n_ev + 1, sizeof *down);
    size_t *queue = kn_alloc_array(t->arena, t->n_ev + 1, sizeof *queue);
    full_reach(t, false, up, queue);
    full_reach(t, true, down, queue);
    for (size_t i = 0; i < t->n_ev; i++) {
        if ((up[i] && !reached_up[i]) || (down[i] && !sc->seen[i])) {
            t->aside[i] = true;
        }
    }
}

/* first_of events (SPEC §3.3): no constraint names them, so the solve
 * leaves them unbounded; each takes [min of its members' lower bounds, min
 * of their upper bounds], which holds whichever member comes first.  A
 * member set aside (or unresolved) sets the first_of event aside too: how
 * early it could come is then unknown.  Members are ordinary events (the
 * loader refuses a first_of member), so one pass suffices. */
static void solve_first_of(kn_timeline *t)
{
    const kn_schema *s = t->schema;
    t->first_up = kn_alloc_array(t->arena, t->n_ev + 1, sizeof *t->first_up);
    t->first_down = kn_alloc_array(t->arena, t->n_ev + 1, sizeof *t->first_down);
    for (size_t i = 0; i < t->n_ev; i++) {
        t->first_up[i] = t->first_down[i] = NONE;
        const kn_event *e = s->events[i];
        if (!e->first_of_node) {
            continue;
        }
        int64_t lo = KN_TIME_INF, hi = KN_TIME_INF;
        bool ok = !e->broken && e->n_first_of > 0;
        for (size_t k = 0; k < e->n_first_of && ok; k++) {
            size_t m = ev_index(t, KN_REF_EVENT(e->first_of[k]));
            if (m == NONE || t->aside[m] || s->events[m]->first_of_node) {
                ok = false;
                break;
            }
            if (t->first_down[i] == NONE || t->down[m] < lo) {
                lo = t->down[m];
                t->first_down[i] = m;
            }
            if (t->first_up[i] == NONE || t->up[m] < hi) {
                hi = t->up[m];
                t->first_up[i] = m;
            }
        }
        if (!ok) {
            t->aside[i] = true;
            continue;
        }
        t->down[i] = lo;
        t->up[i] = hi;
    }
}

/* --- public ---------------------------------------------------------------- */

kn_timeline *kn_timeline_solve(kn_arena *a, kn_sink *sink, const kn_schema *s,
                               bool strict_moment)
{
    const kn_event *moment = KN_REF_EVENT(s->prediction.moment);
    kn_timeline *t = kn_alloc(a, sizeof *t);
    t->arena = a;
    t->schema = s;
    t->strict = strict_moment;
    t->n_col = s->n_columns;
    t->col = kn_alloc_array(a, t->n_col + 1, sizeof *t->col);
    if (!moment || moment->index >= s->n_events || s->events[moment->index] != moment) {
        /* No moment, no ranges; what needs no timeline (built-from-target)
         * is still worked out. */
        t->unsolved = true;
        compute_columns(t);
        return t;
    }
    t->moment = moment;
    t->moment_index = moment->index;
    t->n_ev = s->n_events;
    t->up = kn_alloc_array(a, t->n_ev, sizeof *t->up);
    t->down = kn_alloc_array(a, t->n_ev, sizeof *t->down);
    t->pred_up = kn_alloc_array(a, t->n_ev, sizeof *t->pred_up);
    t->pred_down = kn_alloc_array(a, t->n_ev, sizeof *t->pred_down);

    build_network(t);
    t->step_text = kn_alloc_array(a, t->n_edges + 1, sizeof *t->step_text);
    build_order(t);
    scratch *sc = scratch_new(t);
    find_contradictions(t, sc);
    if (sink) {
        kn_diag *last = NULL;
        for (size_t i = 0; i < t->n_cyc; i++) {
            last = push_contradiction(t, sink, &t->cyc[i]);
        }
        if (last && t->search_cut) {
            kn_diag_note(sink, last, NULL,
                         "the search for contradictions stopped after %zu (%s); further ones, if "
                         "any, were not searched for: fix these and check again",
                         t->n_cyc, t->work_cut ? "its work limit, proportional to the network"
                                               : "it reports at most " KN_STR(MAX_CONTRADICTIONS));
        }
    }
    t->aside = kn_alloc_array(a, t->n_ev + 1, sizeof *t->aside);
    t->unsolved = t->contradictory && (t->search_cut || !contradictions_located(t));
    if (!t->unsolved) {
        set_aside_contradictions(t);
        solve_from_moment(t, sc, false, t->up, t->pred_up);
        bool *reached_up = copy_seen(t, sc);
        solve_from_moment(t, sc, true, t->down, t->pred_down);
        set_aside_cut_off(t, sc, reached_up);
        solve_first_of(t);
    }
    compute_columns(t);
    return t;
}

bool kn_timeline_event_range(const kn_timeline *t, const kn_event *e, kn_interval *out)
{
    return t && event_iv(t, e, out);
}

bool kn_timeline_column_range(const kn_timeline *t, const kn_column *c, kn_interval *out)
{
    const kn_column_timing *T = kn_timeline_column_timing(t, c);
    if (!T || !T->computed) {
        return false;
    }
    *out = T->range;
    return true;
}

kn_verdict kn_timeline_column_verdict(const kn_timeline *t, const kn_column *c)
{
    const kn_column_timing *T = kn_timeline_column_timing(t, c);
    return T ? T->verdict : KN_VERDICT_UNKNOWN;
}

const kn_column_timing *kn_timeline_column_timing(const kn_timeline *t, const kn_column *c)
{
    if (!t) {
        return NULL;
    }
    size_t i = col_index(t, c);
    return i == NONE ? NULL : &t->col[i];
}

kn_arena *kn_timeline_arena(const kn_timeline *t)
{
    return t ? t->arena : NULL;
}

bool kn_timeline_contradictory(const kn_timeline *t)
{
    return t && t->contradictory;
}

size_t kn_timeline_contradictions(const kn_timeline *t, const kn_contradiction **out)
{
    *out = t ? t->cyc : NULL;
    return t ? t->n_cyc : 0;
}

bool kn_timeline_search_complete(const kn_timeline *t)
{
    return t && !t->search_cut;
}

const kn_event *kn_timeline_moment(const kn_timeline *t)
{
    return t ? t->moment : NULL;
}

bool kn_timeline_strict(const kn_timeline *t)
{
    return t && t->strict;
}

size_t kn_timeline_chain(const kn_timeline *t, const kn_event *e, bool upper,
                         const kn_chain_step **out)
{
    *out = NULL;
    size_t i = t ? ev_index(t, e) : NONE;
    if (i == NONE || t->unsolved || t->aside[i]) {
        return 0;
    }
    const kn_event *by = kn_timeline_first_of_member(t, e, upper);
    if (by) {
        i = ev_index(t, by);
    }
    const size_t *pred = upper ? t->pred_up : t->pred_down;
    size_t n = 0;
    for (size_t x = i; pred[x] != NONE && n < t->n_ev; n++) {
        const edge *ed = &t->edges[pred[x]];
        x = upper ? ed->from : ed->to;
    }
    if (n == 0) {
        return 0;
    }
    kn_chain_step *steps = kn_alloc_array(t->arena, n, sizeof *steps);
    size_t x = i;
    for (size_t k = 0; k < n; k++) {
        const edge *ed = &t->edges[pred[x]];
        /* The upper chain is found walking back from e; store it from the
         * moment outwards. */
        steps[upper ? n - 1 - k : k] = ed->step;
        x = upper ? ed->from : ed->to;
    }
    *out = steps;
    return n;
}

const kn_event *kn_timeline_first_of_member(const kn_timeline *t, const kn_event *e, bool upper)
{
    size_t i = t ? ev_index(t, e) : NONE;
    if (i == NONE || t->unsolved || t->aside[i] || !t->first_up) {
        return NULL;
    }
    size_t m = upper ? t->first_up[i] : t->first_down[i];
    return m == NONE ? NULL : t->schema->events[m];
}

void kn_timeline_note_chain(const kn_timeline *t, kn_sink *sink, kn_diag *d,
                            const kn_event *e, bool upper)
{
    size_t i = t ? ev_index(t, e) : NONE;
    if (i == NONE || t->unsolved || t->aside[i]) {
        return;
    }
    const kn_event *by = kn_timeline_first_of_member(t, e, upper);
    if (by) {
        /* The end of a first_of event is the end of one member's range. */
        char b[48];
        int64_t v = upper ? t->up[i] : t->down[i];
        const char *w;
        if (v >= KN_TIME_INF || v <= -KN_TIME_INF) {
            w = "unbounded";
        } else if (v == 0) {
            w = "at the moment";
        } else {
            w = kn_printf(t->arena, "%s %s the moment", kn_duration_format(v < 0 ? kn_time_neg(v) : v, b, sizeof b),
                          v < 0 ? "before" : "after");
        }
        kn_diag_note(sink, d, e->first_of_node ? &e->first_of_node->pos : NULL,
                     "'%s' is the first of %zu events; its %s end (%s) is that of '%s', the member with the "
                     "earliest %s bound (events.%s.first_of)",
                     e->name, e->n_first_of, upper ? "latest" : "earliest", w, by->name, upper ? "upper" : "lower",
                     e->name);
        e = by;
        i = ev_index(t, e);
    }
    /* Walks the predecessors twice instead of copying the chain: a column
     * at the end of a long chain costs its shown notes, not the chain. */
    const size_t *pred = upper ? t->pred_up : t->pred_down;
    size_t n = 0;
    for (size_t x = i; pred[x] != NONE && n < t->n_ev; n++) {
        const edge *ed = &t->edges[pred[x]];
        x = upper ? ed->from : ed->to;
    }
    enum { HALF = KN_CHAIN_SHOWN / 2 };
    kn_chain_step shown[KN_CHAIN_SHOWN];
    size_t shown_edge[KN_CHAIN_SHOWN];
    size_t x = i;
    for (size_t k = 0; k < n; k++) {
        const edge *ed = &t->edges[pred[x]];
        /* The upper chain is found walking back from e; it is shown from
         * the moment outwards. */
        size_t at = upper ? n - 1 - k : k, slot = SIZE_MAX;
        if (n <= KN_CHAIN_SHOWN || at < HALF) {
            slot = at;
        } else if (at >= n - HALF) {
            slot = HALF + at - (n - HALF);
        }
        if (slot != SIZE_MAX) {
            shown[slot] = ed->step;
            shown_edge[slot] = pred[x];
        }
        x = upper ? ed->from : ed->to;
    }
    size_t m = n <= KN_CHAIN_SHOWN ? n : KN_CHAIN_SHOWN;
    for (size_t k = 0; k < m; k++) {
        if (n > KN_CHAIN_SHOWN && k == HALF) {
            kn_diag_note(sink, d, NULL, "... and %zu more constraints of this chain, not shown",
                         n - KN_CHAIN_SHOWN);
        }
        size_t ei = shown_edge[k];
        if (!t->step_text[ei]) {
            /* in the sink's memory: the findings outlive the timeline */
            t->step_text[ei] = kn_timeline_step_words(kn_sink_arena(sink), &shown[k]);
        }
        kn_diag_note_text(sink, d, constraint_pos(shown[k].con), t->step_text[ei]);
    }
}

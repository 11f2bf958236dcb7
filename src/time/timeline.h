/* timeline.h - the timeline as a Simple Temporal Network (Dechter, Meiri &
 * Pearl, 1991) and the availability of every column relative to the moment.
 * Owned by the timeline work (issue "Timeline reasoning"); other analyses
 * and the documents read only the functions below. */
#ifndef KN_TIME_TIMELINE_H
#define KN_TIME_TIMELINE_H

#include <stdbool.h>

#include "../report/diag.h"
#include "../schema/schema.h"
#include "../util/arena.h"
#include "duration.h"

typedef enum kn_verdict {
    KN_VERDICT_UNKNOWN,   /* no timing declared (or not computable) */
    KN_VERDICT_AVAILABLE, /* whole range at or before the moment */
    KN_VERDICT_MAYBE_LATE,/* part of the range after the moment */
    KN_VERDICT_LATE,      /* whole range after the moment */
    KN_VERDICT_UNORDERED, /* no chain of constraints to the moment */
} kn_verdict;

typedef struct kn_timeline kn_timeline;

/* Solves the network of s's events.  Pushes timeline-contradiction for each
 * negative cycle.  Events that are broken, on a contradiction, or tied to
 * the moment only through such events get no range (SPEC §4, independence
 * of findings); the rest are solved as usual.  Without a resolved moment
 * no event has a range, but the columns' derivations (from_target) are
 * still worked out.  Never returns NULL. */
kn_timeline *kn_timeline_solve(kn_arena *a, kn_sink *sink, const kn_schema *s,
                               bool strict_moment);

/* t(event) - t(moment) as an interval (ends may be unbounded).  False when
 * the timeline is contradictory. */
bool kn_timeline_event_range(const kn_timeline *t, const kn_event *e, kn_interval *out);

/* The availability range of a column relative to the moment and its
 * verdict (derived columns included). */
bool kn_timeline_column_range(const kn_timeline *t, const kn_column *c, kn_interval *out);
kn_verdict kn_timeline_column_verdict(const kn_timeline *t, const kn_column *c);

/* --- Additions for the checks, the documents and the tests ------------- */

/* One constraint of a chain, and which of its two bounds the chain uses:
 * upper: t(later) - t(earlier) <= lag.hi; otherwise >= lag.lo. */
typedef struct kn_chain_step {
    const kn_constraint *con;
    bool upper;
} kn_chain_step;

/* A negative cycle of the network: following its steps round the loop puts
 * an event before itself by -weight.  at is the step the diagnostic points
 * at (the constraint declared last); that bound was set aside before the
 * search for further cycles. */
typedef struct kn_contradiction {
    const kn_chain_step *steps;
    size_t n_steps;
    int64_t weight;
    size_t at;
} kn_contradiction;

/* True when the network has a negative cycle (its events have no range). */
bool kn_timeline_contradictory(const kn_timeline *t);

/* The contradictions found (arena memory owned by the timeline). */
size_t kn_timeline_contradictions(const kn_timeline *t, const kn_contradiction **out);

/* False when the search for further contradictions stopped early (after
 * 100 of them, or at its work limit of about 64 x (events + constraints)
 * relaxations after the first search); the last contradiction pushed then
 * carries a note saying so. */
bool kn_timeline_search_complete(const kn_timeline *t);

const kn_event *kn_timeline_moment(const kn_timeline *t);
bool kn_timeline_strict(const kn_timeline *t);

/* The verdict of a range relative to the moment (honours strict_moment);
 * never KN_VERDICT_UNORDERED or KN_VERDICT_UNKNOWN. */
kn_verdict kn_timeline_classify(const kn_timeline *t, kn_interval r);

/* The chain of constraints behind one end of e's range (upper: the end
 * t(e) - t(moment) <= hi, a path from the moment to e; otherwise the lower
 * end, a path from e to the moment), in the order the path runs.  Returns
 * the number of steps (0 for the moment itself or an unbounded end); *out
 * is arena memory. */
size_t kn_timeline_chain(const kn_timeline *t, const kn_event *e, bool upper,
                         const kn_chain_step **out);

/* Adds one note per step of that chain to d, each at the constraint's lag
 * node: "'dispatch' is at most 3d after 'order_placed' (events.dispatch.after)";
 * a chain longer than KN_CHAIN_SHOWN (util/text.h) shows its first and last
 * steps and one note counting the others. */
void kn_timeline_note_chain(const kn_timeline *t, kn_sink *sink, kn_diag *d,
                            const kn_event *e, bool upper);
void kn_timeline_note_step(kn_sink *sink, kn_diag *d, const kn_chain_step *st);

/* For a first_of event (SPEC §3.3): the member whose bound is the event's
 * upper (or lower) end; NULL for any other event or when it has no range.
 * kn_timeline_chain and kn_timeline_note_chain follow that member (the
 * notes say which member decided). */
const kn_event *kn_timeline_first_of_member(const kn_timeline *t, const kn_event *e, bool upper);

/* The words of one step, as in the notes (arena memory). */
char *kn_timeline_step_words(kn_arena *a, const kn_chain_step *st);

/* The arena the timeline lives in (for documents that format into it). */
kn_arena *kn_timeline_arena(const kn_timeline *t);

/* A range in words relative to the named moment, e.g. "between 2h before
 * and 1d 4h after the moment 'dispatch'" (arena memory; the name is written
 * as given: renderers escape). */
char *kn_timeline_range_words(kn_arena *a, kn_interval r, const char *moment);

/* The parts of a column's availability (SPEC §3.5), each relative to the
 * moment; the column's range is the latest of the parts present. */
typedef enum kn_timing_part {
    KN_PART_KNOWN,  /* t(known) + delay + latency + [0, refresh] */
    KN_PART_WINDOW, /* t(anchor) + to + latency + [0, refresh] */
    KN_PART_INPUTS, /* the latest input + delay */
    KN_PART_AS_OF,  /* t(join.as_of) */
    KN_PART_COUNT
} kn_timing_part;

/* The flags come first, side by side (248 bytes a column, not 264). */
typedef struct kn_column_timing {
    bool ordered;  /* reached in derivation order (false: on or behind a cycle) */
    bool computed; /* range known: timing declared, every reference resolved,
                      timeline consistent */
    bool inputs_partial; /* some input has no timing or is set aside: the
                            inputs part holds only when it is late (then
                            open-ended) */
    bool from_target;    /* is the target or derives from it */
    kn_interval range;
    kn_verdict verdict;
    bool has[KN_PART_COUNT];
    kn_interval part[KN_PART_COUNT];
    kn_verdict part_verdict[KN_PART_COUNT];
    kn_interval event[KN_PART_COUNT]; /* t(event) for the known, window
                                         (anchor) and as_of parts */
    kn_interval window_end;           /* t(anchor) + to */
    kn_interval inputs_latest;        /* latest input, without delay */
    const kn_column *latest_hi;       /* input with the latest upper end */
    const kn_column *latest_lo;       /* input with the latest lower end */
    const kn_event *known_lo_by;      /* the known event, or the member of
                                         known.one_of with the earliest */
    const kn_event *known_hi_by;      /* ... and the latest bound */
    const kn_column *target_via;      /* the input leading to the target */
} kn_column_timing;

/* Everything known about c's timing, or NULL when t is NULL or c is not a
 * column of t's schema. */
const kn_column_timing *kn_timeline_column_timing(const kn_timeline *t, const kn_column *c);

#endif

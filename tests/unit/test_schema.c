/* test_schema.c - the schema model as the loader builds it
 * (src/schema/load.c): the key tables, typed values with their positions,
 * resolved references, and calendar intervals relaxed to their bounds. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <stdlib.h>
#include <string.h>

#include "../../src/report/diag_impl.h"
#include "../../src/schema/schema.h"
#include "../../src/schema/shape.h"

#define DAY KN_US_PER_DAY
#define HOUR KN_US_PER_HOUR

typedef struct fx {
    kn_arena *a;
    kn_sink *sink;
    jmp_buf oom;
    kn_load_options lo;
} fx;

static int setup(void **state)
{
    fx *f = calloc(1, sizeof *f);
    f->a = kn_arena_new();
    kn_arena_set_oom(f->a, &f->oom);
    f->sink = kn_sink_new(f->a);
    kn_yaml_limits_default(&f->lo.limits);
    *state = f;
    return 0;
}

static int teardown(void **state)
{
    fx *f = *state;
    kn_arena_free(f->a);
    free(f);
    return 0;
}

static void tables_match_loader(void **state)
{
    (void)state;
    assert_true(kn_shape_selfcheck());
}

static void clean_schema_builds_the_model(void **state)
{
    fx *f = *state;
    kn_schema *s = kn_schema_load(f->a, f->sink, "cases/schema-shape/quiet-clean.knowable.yaml", &f->lo);
    assert_non_null(s);
    assert_true(s->shape_ok);
    assert_string_equal(s->dataset, "loan_returns");
    assert_int_equal(s->n_events, 4);
    assert_int_equal(s->n_columns, 5);

    kn_event *due = kn_schema_event(s, "due_date");
    assert_non_null(due);
    assert_int_equal(due->n_cons, 1);
    assert_ptr_equal(due->cons[0].earlier, kn_schema_event(s, "checkout"));
    assert_ptr_equal(due->cons[0].later, due);
    assert_int_equal(due->cons[0].lag.lo, 14 * DAY);
    assert_int_equal(due->cons[0].lag.hi, 28 * DAY);
    assert_int_equal(due->cons[0].lag.node->pos.line, 13);

    /* [P1D, null]: unbounded above. */
    kn_event *checkout = kn_schema_event(s, "checkout");
    assert_int_equal(checkout->cons[0].lag.hi, KN_TIME_INF);
    /* A year relaxes to its longest: P1Y is at most 366 days. */
    kn_event *ret = kn_schema_event(s, "returned");
    assert_int_equal(ret->cons[0].lag.hi, 366 * DAY);

    kn_column *target = kn_schema_column(s, "returned_late");
    assert_int_equal(target->role, KN_ROLE_TARGET);
    assert_int_equal(target->type, KN_TYPE_BOOLEAN);
    assert_ptr_equal(KN_REF_EVENT(target->known), ret);
    assert_ptr_equal(s->prediction.target.target, target);
    assert_true(ret->used);

    kn_column *loans = kn_schema_column(s, "loans_last_year");
    assert_true(loans->window.present);
    assert_int_equal(loans->window.from.lo, -365 * DAY);
    assert_int_equal(loans->window.to.hi, -1 * DAY);

    kn_source *circ = kn_schema_source(s, "circulation");
    assert_int_equal(circ->kind, KN_SOURCE_INTERNAL);
    assert_int_equal(circ->history, KN_HISTORY_APPEND);
    assert_int_equal(circ->latency.hi, 5 * 60 * KN_US_PER_SEC);
    assert_true(circ->used);
    assert_non_null(circ->field[KN_SF_OWNER]);
    assert_null(circ->field[KN_SF_PROVIDER]);

    kn_column *years = kn_schema_column(s, "tenure_years");
    assert_int_equal(years->n_derived, 1);
    assert_ptr_equal(years->derived_from[0].target, kn_schema_column(s, "member_tenure_days"));
}

static void includes_merge_events_and_sources(void **state)
{
    fx *f = *state;
    kn_schema *s = kn_schema_load(f->a, f->sink, "../examples/parcel-delays.knowable.yaml", &f->lo);
    assert_non_null(s);
    assert_int_equal(s->n_files, 2);
    kn_event *delivered = kn_schema_event(s, "delivered");
    assert_non_null(delivered);
    /* The event is positioned in the register that defines it. */
    assert_non_null(strstr(delivered->key->pos.file, "shared/carrier-register.yaml"));
    kn_source *weather = kn_schema_source(s, "weather_feed");
    assert_int_equal(weather->kind, KN_SOURCE_EXTERNAL);
    assert_int_equal(weather->point_in_time, 1);
    assert_true(weather->has_refresh);
    assert_int_equal(weather->refresh, HOUR);
}

static void errors_keep_a_model(void **state)
{
    fx *f = *state;
    kn_schema *s = kn_schema_load(f->a, f->sink, "cases/unknown-reference/fires-misspelt-names.knowable.yaml", &f->lo);
    assert_non_null(s);
    assert_false(s->shape_ok);
    kn_column *late = kn_schema_column(s, "returned_late");
    assert_null(late->source.target);
    assert_string_equal(late->source.name, "circulaton");
    assert_false(kn_sink_fatal(f->sink));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(tables_match_loader),
        cmocka_unit_test_setup_teardown(clean_schema_builds_the_model, setup, teardown),
        cmocka_unit_test_setup_teardown(includes_merge_events_and_sources, setup, teardown),
        cmocka_unit_test_setup_teardown(errors_keep_a_model, setup, teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

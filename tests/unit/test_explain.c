/* test_explain.c - unit tests of src/report/explain.c: every rule of
 * rules.def has all four texts, the texts have the promised shape, each
 * example is a YAML fragment of the schema format (read with libyaml), and
 * the rules that rest on a publication cite it. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <stdio.h>
#include <string.h>
#include <yaml.h>

#include "../../src/report/diag_impl.h"

/* The rule ids and families, read from the one table of rules. */
static const struct {
    const char *id, *family;
} rules[] = {
#define KN_RULE(e, id, sev, fam, sum) [KN_R_##e] = {id, fam},
#include "../../src/report/rules.def"
#undef KN_RULE
};

/* Reports a problem and counts it, so one run lists every faulty entry. */
static int problems;
#define PROBLEM(...) (print_error(__VA_ARGS__), print_error("\n"), problems++)

static const char *field_name(int f)
{
    static const char *names[] = {"finds", "why", "example", "fix"};
    return names[f];
}

static const char *field(const kn_explain_text *t, int f)
{
    switch (f) {
    case 0:
        return t->finds;
    case 1:
        return t->why;
    case 2:
        return t->example;
    default:
        return t->fix;
    }
}

/* Sentences in a prose text: ends of sentences followed by a space and a
 * capital letter, plus the last one. */
static int sentences(const char *s)
{
    int n = 1;
    for (const char *p = s; p[0] && p[1] && p[2]; p++) {
        if ((p[0] == '.' || p[0] == ')') && p[1] == ' ' && p[2] >= 'A' && p[2] <= 'Z') {
            n += p[0] == '.' || (p > s && p[-1] == '.');
        }
    }
    return n;
}

static void test_every_rule_has_all_texts(void **state)
{
    (void)state;
    problems = 0;
    for (int r = 0; r < KN_RULE_COUNT; r++) {
        const kn_explain_text *t = kn_rule_explain((kn_rule)r);
        if (!t) {
            PROBLEM("%s: no explanation", rules[r].id);
            continue;
        }
        for (int f = 0; f < 4; f++) {
            const char *s = field(t, f);
            if (!s || strlen(s) < 20) {
                PROBLEM("%s: %s missing or too short", rules[r].id, field_name(f));
            }
        }
    }
    assert_int_equal(problems, 0);
}

static void test_out_of_range_is_null(void **state)
{
    (void)state;
    assert_null(kn_rule_explain(KN_RULE_COUNT));
    assert_null(kn_rule_explain((kn_rule)-1));
}

static void test_prose_shape(void **state)
{
    (void)state;
    /* finds 1-3 sentences, why 2-4, fix 1-3; each ends with a full stop. */
    static const int lo[] = {1, 2, 0, 1}, hi[] = {3, 4, 0, 3};
    problems = 0;
    for (int r = 0; r < KN_RULE_COUNT; r++) {
        const kn_explain_text *t = kn_rule_explain((kn_rule)r);
        for (int f = 0; f < 4; f++) {
            if (f == 2) {
                continue;
            }
            const char *s = field(t, f);
            size_t len = strlen(s);
            if (len == 0 || s[len - 1] != '.') {
                PROBLEM("%s: %s does not end with a full stop", rules[r].id, field_name(f));
            }
            if (strchr(s, '\n') || strchr(s, '\t') || strstr(s, "  ")) {
                PROBLEM("%s: %s has a line break, tab or double space", rules[r].id,
                         field_name(f));
            }
            int n = sentences(s);
            if (n < lo[f] || n > hi[f]) {
                PROBLEM("%s: %s has %d sentences", rules[r].id, field_name(f), n);
            }
        }
    }
    assert_int_equal(problems, 0);
}

static void test_examples_are_distinct(void **state)
{
    (void)state;
    problems = 0;
    for (int a = 0; a < KN_RULE_COUNT; a++) {
        for (int b = a + 1; b < KN_RULE_COUNT; b++) {
            if (strcmp(kn_rule_explain((kn_rule)a)->example,
                       kn_rule_explain((kn_rule)b)->example) == 0) {
                PROBLEM("%s and %s share an example", rules[a].id, rules[b].id);
            }
        }
    }
    assert_int_equal(problems, 0);
}

/* Reads text with libyaml; true when it is well-formed.  Stores in *bad the
 * first top-level key that is not a key of the schema's top level (§3.1),
 * or NULL. */
static bool read_yaml(const char *text, char *bad, size_t bad_size)
{
    static const char *top_keys[] = {"knowable", "dataset", "description", "include",
                                     "prediction", "events", "sources", "columns",
                                     "pipeline", "split"};
    yaml_parser_t parser;
    yaml_event_t event;
    bool ok = true;
    int depth = 0;
    bool expect_key = false;

    bad[0] = '\0';
    assert_true(yaml_parser_initialize(&parser));
    yaml_parser_set_input_string(&parser, (const unsigned char *)text, strlen(text));
    for (;;) {
        if (!yaml_parser_parse(&parser, &event)) {
            ok = false;
            break;
        }
        yaml_event_type_t type = event.type;
        if (depth == 1 && (type == YAML_SCALAR_EVENT || type == YAML_MAPPING_START_EVENT ||
                           type == YAML_SEQUENCE_START_EVENT)) {
            if (expect_key && type == YAML_SCALAR_EVENT && !bad[0]) {
                const char *k = (const char *)event.data.scalar.value;
                bool known = false;
                for (size_t i = 0; i < sizeof top_keys / sizeof top_keys[0]; i++) {
                    known = known || strcmp(k, top_keys[i]) == 0;
                }
                if (!known) {
                    snprintf(bad, bad_size, "%s", k);
                }
            }
            expect_key = !expect_key;
        }
        if (type == YAML_MAPPING_START_EVENT || type == YAML_SEQUENCE_START_EVENT) {
            if (depth == 0 && type == YAML_MAPPING_START_EVENT) {
                expect_key = true;
            }
            depth++;
        } else if (type == YAML_MAPPING_END_EVENT || type == YAML_SEQUENCE_END_EVENT) {
            depth--;
        }
        yaml_event_delete(&event);
        if (type == YAML_STREAM_END_EVENT) {
            break;
        }
    }
    yaml_parser_delete(&parser);
    return ok;
}

static void test_examples_are_schema_fragments(void **state)
{
    (void)state;
    problems = 0;
    for (int r = 0; r < KN_RULE_COUNT; r++) {
        const char *ex = kn_rule_explain((kn_rule)r)->example;
        size_t len = strlen(ex);
        if (len == 0 || ex[len - 1] != '\n' || strchr(ex, '\t')) {
            PROBLEM("%s: example must end with a newline and have no tab", rules[r].id);
        }
        char bad[64];
        bool ok = read_yaml(ex, bad, sizeof bad);
        if (r == KN_R_YAML_SYNTAX) {
            if (ok) {
                PROBLEM("yaml-syntax: the example must be YAML libyaml refuses");
            }
            continue;
        }
        if (!ok) {
            PROBLEM("%s: the example is not well-formed YAML", rules[r].id);
        }
        if (bad[0]) {
            PROBLEM("%s: the example has top-level key '%s'", rules[r].id, bad);
        }
    }
    assert_int_equal(problems, 0);
}

static bool mentions(kn_rule r, const char *what)
{
    const kn_explain_text *t = kn_rule_explain(r);
    return strstr(t->finds, what) || strstr(t->why, what) || strstr(t->fix, what);
}

static void test_citations(void **state)
{
    (void)state;
    assert_true(mentions(KN_R_SPLIT_GAP_SHORT, "López de Prado, 2018"));
    assert_true(mentions(KN_R_SPLIT_GAP_SHORT, "Advances in Financial Machine Learning"));
    assert_true(mentions(KN_R_SPLIT_GAP_SHORT, "purging"));
    assert_true(mentions(KN_R_SPLIT_GAP_SHORT, "embargo"));
    assert_true(mentions(KN_R_TIMELINE_CONTRADICTION, "Dechter, Meiri & Pearl, 1991"));
    assert_true(mentions(KN_R_SMALL_QUASI_IDENTIFIER_GROUPS, "k-anonymous"));
    assert_true(mentions(KN_R_SMALL_QUASI_IDENTIFIER_GROUPS, "Sweeney, 2002"));
    assert_true(mentions(KN_R_LONE_FEATURE_SEPARATES, "ROC AUC"));
    assert_true(mentions(KN_R_LONE_FEATURE_SEPARATES, "Mann-Whitney U"));
    assert_true(mentions(KN_R_LONE_FEATURE_SEPARATES, "uncertainty coefficient"));
    assert_true(mentions(KN_R_CSV_MALFORMED, "RFC 4180"));
}

static void test_timeline_rules_name_the_network(void **state)
{
    (void)state;
    problems = 0;
    for (int r = 0; r < KN_RULE_COUNT; r++) {
        if (strcmp(rules[r].family, "timeline") != 0 || r == KN_R_BUILT_FROM_TARGET) {
            continue;
        }
        if (!mentions((kn_rule)r, "Simple Temporal Network (Dechter, Meiri & Pearl, 1991)") &&
            !mentions((kn_rule)r, "Simple Temporal Network, Dechter, Meiri & Pearl, 1991")) {
            PROBLEM("%s: does not name the Simple Temporal Network", rules[r].id);
        }
    }
    assert_int_equal(problems, 0);
}

static void test_anonymization_rules_defer_to_law(void **state)
{
    (void)state;
    static const kn_rule anon[] = {KN_R_REVERSIBLE_ANONYMIZATION,
                                   KN_R_SMALL_QUASI_IDENTIFIER_GROUPS};
    for (size_t i = 0; i < sizeof anon / sizeof anon[0]; i++) {
        assert_true(mentions(anon[i], "aid"));
        assert_true(mentions(anon[i], "applicable law"));
        assert_true(mentions(anon[i], "privacy practice"));
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_every_rule_has_all_texts),
        cmocka_unit_test(test_out_of_range_is_null),
        cmocka_unit_test(test_prose_shape),
        cmocka_unit_test(test_examples_are_distinct),
        cmocka_unit_test(test_examples_are_schema_fragments),
        cmocka_unit_test(test_citations),
        cmocka_unit_test(test_timeline_rules_name_the_network),
        cmocka_unit_test(test_anonymization_rules_defer_to_law),
    };
    return cmocka_run_group_tests_name("explain", tests, NULL, NULL);
}

/* test_docs.c - unit tests of the documents in src/docs/: the timeline
 * picture (kn_timeline_report with an SVG stream) and the schema draft
 * (kn_init), each writing into memory through open_memstream. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include <cmocka.h>

#include <knowable/knowable.h>

typedef struct capture {
    char *buf;
    size_t len;
    FILE *f;
} capture;

static void cap_open(capture *c)
{
    c->buf = NULL;
    c->len = 0;
    c->f = open_memstream(&c->buf, &c->len);
    assert_non_null(c->f);
}

static char *cap_close(capture *c)
{
    fclose(c->f);
    return c->buf;
}

/* Writes text to a fresh temporary file and returns its path (static buffer per slot). */
static const char *temp_file(int slot, const char *suffix, const char *text, size_t len)
{
    static char paths[4][64];
    snprintf(paths[slot], sizeof paths[slot], "/tmp/kn-test-docs-%ld-%d%s", (long)getpid(), slot,
             suffix);
    FILE *f = fopen(paths[slot], "wb");
    assert_non_null(f);
    assert_int_equal(fwrite(text, 1, len, f), len);
    fclose(f);
    return paths[slot];
}

static kn_status run_timeline(const char *schema, char **text, char **svg)
{
    kn_options o;
    kn_options_init(&o);
    char pic[64];
    snprintf(pic, sizeof pic, "/tmp/kn-test-docs-%ld-pic.svg", (long)getpid());
    o.svg = pic;
    capture out, err;
    cap_open(&out);
    cap_open(&err);
    kn_status st = kn_timeline_report(&o, schema, out.f, err.f);
    *text = cap_close(&out);
    free(cap_close(&err));
    FILE *f = fopen(pic, "rb");
    *svg = NULL;
    if (f) {
        capture c;
        cap_open(&c);
        int ch;
        while ((ch = fgetc(f)) != EOF) {
            fputc(ch, c.f);
        }
        fclose(f);
        *svg = cap_close(&c);
        unlink(pic);
    } else {
        *svg = strdup("");
    }
    return st;
}

static kn_status run_init(const char *csv, long long max_rows, char **draft, char **errs)
{
    kn_options o;
    kn_options_init(&o);
    o.max_rows = max_rows;
    capture out, err;
    cap_open(&out);
    cap_open(&err);
    kn_status st = kn_init(&o, csv, out.f, err.f);
    *draft = cap_close(&out);
    *errs = cap_close(&err);
    return st;
}

static const char demo_schema[] =
    "knowable: 1\n"
    "dataset: \"bakery <&> 'loaves'\"\n"
    "prediction: {moment: \"<order>\", target: sold_out}\n"
    "events:\n"
    "  \"<order>\": {}\n"
    "  baked:\n"
    "    before: {\"<order>\": [PT1H, PT12H]}\n"
    "  closing:\n"
    "    after: {\"<order>\": [PT1H, P1D]}\n"
    "columns:\n"
    "  sold_out: {role: target, known: closing}\n"
    "  \"oven\\ttemp\\u0007\": {known: baked}\n"
    "  \"takings & tips\": {known: closing}\n"
    "  unset: {}\n";

/* ---- timeline picture ------------------------------------------------------ */

static void test_svg_written_and_escaped(void **state)
{
    (void)state;
    const char *p = temp_file(0, ".knowable.yaml", demo_schema, sizeof demo_schema - 1);
    char *text, *svg;
    assert_int_equal(run_timeline(p, &text, &svg), KN_EXIT_OK);
    assert_non_null(strstr(svg, "<svg xmlns=\"http://www.w3.org/2000/svg\" version=\"1.1\""));
    assert_non_null(strstr(svg, "Timeline of bakery &lt;&amp;&gt; &apos;loaves&apos;"));
    assert_non_null(strstr(svg, "&lt;order&gt;"));
    assert_null(strstr(svg, "<order>"));
    assert_non_null(strstr(svg, "takings &amp; tips"));
    /* The tab shows as a space; the bell is dropped, never written raw. */
    assert_non_null(strstr(svg, "oven temp"));
    assert_null(strchr(svg, '\a'));
    assert_null(strchr(svg, '\t'));
    assert_non_null(strstr(svg, "</svg>\n"));
    free(text);
    free(svg);
    unlink(p);
}

static void test_svg_moment_line_and_groups(void **state)
{
    (void)state;
    const char *p = temp_file(0, ".knowable.yaml", demo_schema, sizeof demo_schema - 1);
    char *text, *svg;
    assert_int_equal(run_timeline(p, &text, &svg), KN_EXIT_OK);
    assert_non_null(strstr(svg, "<line class=\"moment\""));
    assert_non_null(strstr(svg, "class=\"columns-available\""));
    assert_non_null(strstr(svg, "class=\"columns-late\""));
    assert_non_null(strstr(svg, "class=\"columns-not-feature\""));
    assert_non_null(strstr(svg, "class=\"columns-no-timing\""));
    assert_null(strstr(svg, "class=\"columns-maybe-late\""));
    assert_null(strstr(svg, "class=\"columns-not-placed\""));
    /* Late first, then available, then what is not a feature, then what has no timing. */
    assert_true(strstr(svg, "columns-late") < strstr(svg, "columns-available"));
    assert_true(strstr(svg, "columns-available") < strstr(svg, "columns-not-feature"));
    assert_true(strstr(svg, "columns-not-feature") < strstr(svg, "columns-no-timing"));
    /* The target is late by design and is no finding; the rules fired are shown. */
    assert_non_null(strstr(svg, ">the target</text>"));
    assert_non_null(strstr(svg, "class=\"rule\" fill=\"#1a1a1a\" font-weight=\"bold\">after-moment (error)</text>"));
    assert_non_null(strstr(svg, ">missing-known (warning)</text>"));
    /* The text report groups the same way. */
    assert_non_null(strstr(text, "Features late in every case"));
    assert_non_null(strstr(text, "Columns with no timing"));
    free(text);
    free(svg);
    unlink(p);
}

static void test_svg_deterministic(void **state)
{
    (void)state;
    const char *p = temp_file(0, ".knowable.yaml", demo_schema, sizeof demo_schema - 1);
    char *t1, *s1, *t2, *s2;
    run_timeline(p, &t1, &s1);
    run_timeline(p, &t2, &s2);
    assert_string_equal(s1, s2);
    free(t1), free(s1), free(t2), free(s2);
    unlink(p);
}

static void test_svg_axis_ticks(void **state)
{
    (void)state;
    const char *p = temp_file(0, ".knowable.yaml", demo_schema, sizeof demo_schema - 1);
    char *text, *svg;
    run_timeline(p, &text, &svg);
    /* Ranges run from 12h before to 1d after: the axis reaches -1d and +1d. */
    assert_non_null(strstr(svg, ">-1d</text>"));
    assert_non_null(strstr(svg, ">+1d</text>"));
    assert_non_null(strstr(svg, ">-1h</text>"));
    assert_null(strstr(svg, ">+7d</text>"));
    free(text);
    free(svg);
    unlink(p);
}

/* ---- schema draft ------------------------------------------------------------ */

static void test_init_types(void **state)
{
    (void)state;
    static const char csv[] =
        "n,flag,day,stamp,kind,note\n"
        "1.5,yes,2026-01-02,2026-01-02T10:00:00Z,a,the first of many words here\n"
        "2,no,2026-01-03,2026-01-03 11:30,b,another long free text that differs\n"
        "NA,true,2026-01-04,2026-01-04T12:00:00+01:00,a,a third remark, quite unlike\n";
    const char *p = temp_file(1, ".csv", csv, sizeof csv - 1);
    char *draft, *err;
    assert_int_equal(run_init(p, 0, &draft, &err), KN_EXIT_OK);
    assert_non_null(strstr(draft, "  \"n\":\n    type: number\n"));
    assert_non_null(strstr(draft, "  \"day\":\n    role: timestamp\n    type: date"));
    assert_non_null(strstr(draft, "  \"stamp\":\n    role: timestamp\n    type: timestamp"));
    assert_non_null(strstr(draft, "  \"kind\":\n    type: category\n"));
    assert_non_null(strstr(draft, "  \"flag\":\n    role: target"));
    assert_non_null(strstr(draft, "    type: boolean\n"));
    free(draft);
    free(err);
    unlink(p);
}

static void test_init_names_quoted(void **state)
{
    (void)state;
    static const char csv[] = "\"a \"\"b\"\"\",\"x: y\",\"#c\",\"back\\slash\",\"nl\nhere\"\n1,2,3,4,5\n";
    const char *p = temp_file(1, ".csv", csv, sizeof csv - 1);
    char *draft, *err;
    assert_int_equal(run_init(p, 0, &draft, &err), KN_EXIT_OK);
    assert_non_null(strstr(draft, "  \"a \\\"b\\\"\":\n"));
    assert_non_null(strstr(draft, "  \"x: y\":\n"));
    assert_non_null(strstr(draft, "  \"#c\":\n"));
    assert_non_null(strstr(draft, "  \"back\\\\slash\":\n"));
    assert_non_null(strstr(draft, "  \"nl\\nhere\":\n"));
    free(draft);
    free(err);
    unlink(p);
}

static void test_init_empty_and_repeated(void **state)
{
    (void)state;
    static const char csv[] = "a,,a,b\n1,2,3,4\n";
    const char *p = temp_file(1, ".csv", csv, sizeof csv - 1);
    char *draft, *err;
    assert_int_equal(run_init(p, 0, &draft, &err), KN_EXIT_OK);
    assert_non_null(strstr(draft, "# column 2 of the header has no name"));
    assert_non_null(strstr(draft, "# column 3 of the header repeats the name \"a\" of column 1"));
    /* One entry for a. */
    const char *first = strstr(draft, "  \"a\":\n");
    assert_non_null(first);
    assert_null(strstr(first + 1, "  \"a\":\n"));
    free(draft);
    free(err);
    unlink(p);
}

static void test_init_identifiers(void **state)
{
    (void)state;
    char csv[4096];
    size_t n = (size_t)snprintf(csv, sizeof csv, "loan_no,ticket,branch,amount,returned\n");
    for (int i = 0; i < 40; i++) {
        n += (size_t)snprintf(csv + n, sizeof csv - n, "%d,S%05d,%s,%d.5,%s\n", i % 3, 7 * i,
                              i % 2 ? "north" : "south", i, i % 3 ? "yes" : "no");
    }
    const char *p = temp_file(1, ".csv", csv, n);
    char *draft, *err;
    assert_int_equal(run_init(p, 0, &draft, &err), KN_EXIT_OK);
    /* By name (the rulebook's pattern) even with few values, and by uniqueness. */
    assert_non_null(strstr(draft, "  \"loan_no\":\n    role: identifier"));
    assert_non_null(strstr(draft, "  \"ticket\":\n    role: identifier  # nearly every"));
    assert_non_null(strstr(draft, "  \"branch\":\n    type: category"));
    /* Unique measurements are not identifiers. */
    assert_non_null(strstr(draft, "  \"amount\":\n    type: number"));
    free(draft);
    free(err);
    unlink(p);
}

static void test_init_max_rows(void **state)
{
    (void)state;
    static const char csv[] = "v\n1\n2\nthree\n";
    const char *p = temp_file(1, ".csv", csv, sizeof csv - 1);
    char *draft, *err;
    assert_int_equal(run_init(p, 2, &draft, &err), KN_EXIT_OK);
    assert_non_null(strstr(draft, "first 2 data records (--max-rows)"));
    /* The third value (not a number) was not read. */
    assert_non_null(strstr(draft, "  \"v\":\n"));
    assert_non_null(strstr(draft, "type: number"));
    free(draft);
    free(err);
    unlink(p);
}

static void test_init_unreadable(void **state)
{
    (void)state;
    char *draft, *err;
    assert_int_equal(run_init("/nonexistent/knowable/none.csv", 0, &draft, &err), KN_EXIT_FAILED);
    assert_non_null(strstr(err, "cannot read"));
    free(draft);
    free(err);
    const char *p = temp_file(1, ".csv", "", 0);
    assert_int_equal(run_init(p, 0, &draft, &err), KN_EXIT_FAILED);
    assert_non_null(strstr(err, "error"));
    free(draft);
    free(err);
    unlink(p);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_svg_written_and_escaped),
        cmocka_unit_test(test_svg_moment_line_and_groups),
        cmocka_unit_test(test_svg_deterministic),
        cmocka_unit_test(test_svg_axis_ticks),
        cmocka_unit_test(test_init_types),
        cmocka_unit_test(test_init_names_quoted),
        cmocka_unit_test(test_init_empty_and_repeated),
        cmocka_unit_test(test_init_identifiers),
        cmocka_unit_test(test_init_max_rows),
        cmocka_unit_test(test_init_unreadable),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

/* test_text.c - edit distance, suggestions and the escaping of input text
 * for terminals, JSON and XML (src/util/text.c). */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include <cmocka.h>

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "../../src/util/text.h"

static void edit_distance_counts_edits(void **state)
{
    (void)state;
    assert_int_equal(kn_edit_distance("known", "known", 3), 0);
    assert_int_equal(kn_edit_distance("knwon", "known", 3), 1); /* one transposition */
    assert_int_equal(kn_edit_distance("kown", "known", 3), 1);
    assert_int_equal(kn_edit_distance("kitten", "sitting", 5), 3);
    /* Beyond the limit the answer is limit + 1, whatever the real distance. */
    assert_int_equal(kn_edit_distance("a", "abcdefgh", 2), 3);
}

static void suggest_picks_the_closest(void **state)
{
    (void)state;
    const char *keys[] = {"role", "type", "known", "delay", "source", "join"};
    assert_string_equal(kn_suggest("knwn", keys, 6), "known");
    assert_string_equal(kn_suggest("sorce", keys, 6), "source");
    assert_null(kn_suggest("completely_else", keys, 6));
    assert_null(kn_suggest("known", keys, 6)); /* an exact match needs no suggestion */
}

static char *capture(void (*fn)(FILE *, const char *, size_t), const char *s, size_t len)
{
    static char buf[4096];
    FILE *f = fmemopen(buf, sizeof buf, "w");
    assert_non_null(f);
    fn(f, s, len);
    fclose(f);
    return buf;
}

static void terminal_escapes_controls(void **state)
{
    (void)state;
    const char evil[] = "ok\x1b[31mred\x07\n\x9b";
    assert_string_equal(capture(kn_fput_term, evil, sizeof evil - 1), "ok\\e[31mred\\x07\\n\\x9b");
    /* Valid UTF-8 passes; a C1 control written as UTF-8 (U+009B) does not. */
    assert_string_equal(capture(kn_fput_term, "caf\xc3\xa9", 5), "caf\xc3\xa9");
    assert_string_equal(capture(kn_fput_term, "\xc2\x9b", 2), "\\xc2\\x9b");
}

static void json_escapes_and_replaces(void **state)
{
    (void)state;
    assert_string_equal(capture(kn_fput_json, "a\"b\\c\n\x01", 7), "a\\\"b\\\\c\\n\\u0001");
    assert_string_equal(capture(kn_fput_json, "\xff", 1), "\\ufffd");
    /* An overlong encoding of '/' and a lone surrogate are invalid. */
    assert_string_equal(capture(kn_fput_json, "\xc0\xaf", 2), "\\ufffd\\ufffd");
    assert_string_equal(capture(kn_fput_json, "\xed\xa0\x80", 3), "\\ufffd\\ufffd\\ufffd");
}

static void xml_escapes_markup(void **state)
{
    (void)state;
    assert_string_equal(capture(kn_fput_xml, "<a href='x'>&\"", 14), "&lt;a href=&apos;x&apos;&gt;&amp;&quot;");
    assert_string_equal(capture(kn_fput_xml, "a\x01" "b", 3), "ab");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(edit_distance_counts_edits),
        cmocka_unit_test(suggest_picks_the_closest),
        cmocka_unit_test(terminal_escapes_controls),
        cmocka_unit_test(json_escapes_and_replaces),
        cmocka_unit_test(xml_escapes_markup),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

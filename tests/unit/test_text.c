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

/* The escaper passes printable ASCII eight bytes at a time: every byte
 * that is not printable ASCII must still be caught wherever it sits in the
 * word, and printable text must come out unchanged. */
static void terminal_escape_word_at_a_time(void **state)
{
    (void)state;
    kn_arena *a = kn_arena_new();
    static const unsigned char odd[] = {0x00, 0x01, 0x1b, 0x1f, 0x7f, 0x80, 0x9b, 0xff};
    char in[40], plain[40];
    for (size_t len = 1; len < sizeof in; len++) {
        for (size_t i = 0; i < len; i++) {
            plain[i] = (char)(0x20 + (i * 7) % 0x5f); /* printable, includes ' ' and '~' */
        }
        assert_string_equal(kn_escape_term(a, plain, len), kn_strndup(a, plain, len));
        for (size_t at = 0; at < len; at++) {
            for (size_t k = 0; k < sizeof odd; k++) {
                memcpy(in, plain, len);
                in[at] = (char)odd[k];
                char *out = kn_escape_term(a, in, len);
                /* the odd byte is replaced by an escape, never copied raw */
                assert_null(memchr(out, odd[k], strlen(out)));
                assert_true(strlen(out) > len);
            }
        }
    }
    kn_arena_free(a);
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
        cmocka_unit_test(terminal_escape_word_at_a_time),
        cmocka_unit_test(json_escapes_and_replaces),
        cmocka_unit_test(xml_escapes_markup),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}

/* text.h - text helpers shared by the stages: edit distance for "did you
 * mean" suggestions, and escaping for terminals, JSON, XML and Markdown. */
#ifndef KN_UTIL_TEXT_H
#define KN_UTIL_TEXT_H

#include <stdbool.h>
#include <stddef.h>
#include <stdio.h>

#include "arena.h"

/* A diagnostic shows at most this many links of a chain (constraints,
 * derivations) as notes: the first and last KN_CHAIN_SHOWN / 2, with one
 * note between them saying how many were left out.  A finding's output then
 * stays bounded whatever the length of the chain behind it. */
#define KN_CHAIN_SHOWN 16

/* Edit distance (optimal string alignment: insertions, deletions,
 * substitutions and adjacent transpositions), giving up (returning limit + 1) once it exceeds
 * limit; inputs longer than 256 bytes are never close. */
size_t kn_edit_distance(const char *a, const char *b, size_t limit);

/* The closest of n candidates to word, or NULL when none is close enough
 * (distance at most 1 for words of up to 3 bytes, else max(2, strlen(word) / 3)
 * but never more than KN_SUGGEST_MAX_EDITS; never for an exact match).  A
 * length filter and a bag-distance bound skip most candidates in
 * O(strlen(candidate)); the edit distance runs in a band of the limit.
 * kn_suggest_within charges its work (about one unit per byte compared)
 * to *budget and, when the budget runs out, sets it to 0 and returns the
 * best of the candidates compared so far; kn_suggest gives each call
 * KN_SUGGEST_BUDGET. */
#define KN_SUGGEST_MAX_EDITS 8
#define KN_SUGGEST_BUDGET ((size_t)4 << 20)
const char *kn_suggest(const char *word, const char *const *candidates, size_t n);
const char *kn_suggest_within(const char *word, const char *const *candidates, size_t n,
                              size_t *budget);

/* Writes s (len bytes) for a terminal: printable ASCII and valid UTF-8 as
 * they are; control characters, DEL, C1 controls and invalid UTF-8 bytes as
 * \xNN (\n \t \r \e spelt so), a backslash as is. */
void kn_fput_term(FILE *f, const char *s, size_t len);
/* The same, handed piece by piece to emit (a renderer's own buffer). */
typedef void (*kn_emit_fn)(void *ctx, const char *s, size_t n);
void kn_term_escape_to(const char *s, size_t len, kn_emit_fn emit, void *ctx);
/* The same into arena memory. */
char *kn_escape_term(kn_arena *a, const char *s, size_t len);

/* Writes s as the inside of a JSON string: quotes, backslashes, control
 * characters, C1 controls, bidirectional controls and the line and
 * paragraph separators escaped (\u202e); invalid UTF-8 replaced by U+FFFD. */
void kn_fput_json(FILE *f, const char *s, size_t len);
/* Writes "s" (with the quotes). */
void kn_fput_json_str(FILE *f, const char *s);

/* Writes s escaped for XML text and attribute values (&, <, >, ", '),
 * control characters other than tab/newline dropped, invalid UTF-8 replaced. */
void kn_fput_xml(FILE *f, const char *s, size_t len);

/* Writes s for Markdown table cells: | \ ` * _ [ ] < > escaped, newlines as
 * spaces, control characters escaped as for terminals. */
void kn_fput_markdown(FILE *f, const char *s, size_t len);

/* Length of the valid UTF-8 sequence at s (1..4), or 0 when invalid. */
size_t kn_utf8_valid_seq(const unsigned char *s, size_t len);

#endif

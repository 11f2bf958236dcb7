/* lsp.h - the inside of the language server (knowable lsp, SPEC §5.2):
 * the documents the editor has open, the last analysis of each schema
 * among them, and the requests answered from it.  server.c speaks the
 * protocol; doc.c keeps the documents and converts positions; features.c
 * answers hover, definition, completion and code actions. */
#ifndef KN_LSP_LSP_H
#define KN_LSP_LSP_H

#include <knowable/knowable.h>

#include <jansson.h>
#include <stdbool.h>
#include <stddef.h>

#include "../api/run.h"
#include "../report/view.h"

/* One document the editor has open. */
typedef struct kn_doc {
    char *uri;
    char *path; /* the file the URI names (NULL: not a file: URI) */
    char *real; /* its real path (the loader's key for the overlay) */
    char *text; /* its current text (the editor's buffer) */
    size_t len;
    size_t *lines; /* byte offset of each line start */
    size_t n_lines;
    /* The last analysis of this document as a schema (NULL: none, or it is
     * a register): the run's arena holds the model and the findings. */
    kn_arena *arena;
    kn_run *run;
    kn_unit *unit;
    kn_options opt;
    const kn_view *view;
    size_t n_view;
    /* The real paths of the other files the loader asked for (its
     * includes, also those it could not read), in the run's arena. */
    struct kn_dep *deps;
    /* The names of the events, sources and columns of the last analysis
     * that loaded a schema, kept while the text does not parse (someone is
     * typing "derived_from: [" and the list is not closed yet): completion
     * offers them.  One malloc block, the pointers then the bytes; NULL
     * while the current analysis has a schema of its own. */
    char **kept;
    size_t n_kept[3]; /* events, sources, columns */
    /* The rulebook it was last judged under, kept from one change to the
     * next in an arena of its own while its files stay as they were
     * (NULL: none kept). */
    kn_arena *rb_arena;
    kn_rulebook *rulebook;
    const char *rb_key;                  /* the discovered file's real path, "" for none */
    const struct kn_rb_stamp *rb_stamps; /* of each of rulebook->files */
    struct kn_doc *next;
} kn_doc;

typedef struct kn_server {
    const kn_options *opt;
    FILE *out, *err;
    kn_doc *docs;
    bool initialized, shut_down;
    kn_doc *loading;      /* the schema whose main file the loader reads next */
    kn_doc *checking;     /* the schema being analysed */
    struct kn_sent *sent; /* each URI given diagnostics last time, with the
                             list sent (malloc) */
    size_t n_sent;
    const char *trigger; /* the URI whose open, change or save is being
                            answered: published even when unchanged */
    kn_doc *disk; /* files the model points into that are not open, as read
                     from disk while one message is answered */
} kn_server;

/* --- doc.c --------------------------------------------------------------- */

/* The path of a file: URI (percent-decoded), or NULL. */
char *kn_uri_to_path(const char *uri);
/* A file: URI for path (malloc). */
char *kn_path_to_uri(const char *path);

/* The document opened under uri, spelt as it was opened. */
kn_doc *kn_doc_find(kn_server *s, const char *uri);
/* The same, or else the open document whose file uri names in another
 * spelling (file://localhost/, %-escapes where none are needed). */
kn_doc *kn_doc_named(kn_server *s, const char *uri);
/* Opens (or replaces) a document with text. */
kn_doc *kn_doc_open(kn_server *s, const char *uri, const char *text, size_t len);
void kn_doc_set_text(kn_doc *d, const char *text, size_t len);
void kn_doc_close(kn_server *s, kn_doc *d);
/* Frees the last analysis of d. */
void kn_lsp_drop_analysis(kn_doc *d);
/* Keeps the names of sc in d->kept (for completion), or drops them. */
void kn_lsp_keep_names(kn_doc *d, const kn_schema *sc);
void kn_lsp_drop_kept(kn_doc *d);
/* Frees the rulebook kept for d. */
void kn_lsp_drop_rulebook(kn_doc *d);
/* The document whose real path is real, or NULL. */
kn_doc *kn_doc_by_real(kn_server *s, const char *real);
/* The document a display path of the model names (the schema's own path
 * or an include), or NULL. */
kn_doc *kn_doc_by_file(kn_server *s, const char *file);

/* The bytes of path (malloc, NUL-terminated, in *text and *len); false
 * when it cannot be read. */
bool kn_lsp_read_file(const char *path, char **text, size_t *len);
/* The text a display path of the model names: its open document, else the
 * file as on disk (kept until kn_lsp_forget_files); NULL when unreadable. */
const kn_doc *kn_doc_text(kn_server *s, const char *file);
/* Drops the files kn_doc_text read from disk. */
void kn_lsp_forget_files(kn_server *s);

/* Byte offset of an LSP position (UTF-16 units) in d's text, clamped to
 * the end of its line (before the line end) and of the text. */
size_t kn_doc_offset(const kn_doc *d, long line, long character);
/* The LSP position of a byte offset: line and UTF-16 character. */
void kn_doc_position(const kn_doc *d, size_t offset, long *line, long *character);
/* An LSP range for a model position: its token (a plain or quoted scalar,
 * or one character) when the text is at hand, else an empty range. */
json_t *kn_range_at(kn_server *s, const kn_pos *p);
/* The same as numbers: start line, character, end line, character. */
void kn_range_of(kn_server *s, const kn_pos *p, long r[4]);
/* The byte length of the YAML token at offset in text. */
size_t kn_token_len(const char *text, size_t len, size_t offset);
/* {"uri", "range"} for a model position. */
json_t *kn_location_at(kn_server *s, const kn_pos *p);
/* The URI of a display path of the model (malloc). */
char *kn_file_uri(kn_server *s, const char *file);

/* --- server.c ------------------------------------------------------------ */

/* The analysis (document and unit) that covers doc: its own when it is a
 * schema, else that of an open schema including it.  NULL when none. */
kn_doc *kn_model_for(kn_server *s, kn_doc *doc);

/* --- features.c ---------------------------------------------------------- */

json_t *kn_lsp_hover(kn_server *s, kn_doc *d, long line, long character);
json_t *kn_lsp_definition(kn_server *s, kn_doc *d, long line, long character);
json_t *kn_lsp_completion(kn_server *s, kn_doc *d, long line, long character);
json_t *kn_lsp_code_actions(kn_server *s, kn_doc *d, long l0, long c0, long l1, long c1);

#endif

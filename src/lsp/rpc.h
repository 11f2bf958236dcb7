/* rpc.h - JSON-RPC framing of the Language Server Protocol: messages are
 * a header block ("Content-Length: N", other headers ignored, then an empty
 * line, each line ending in CRLF or LF) and a body of exactly N bytes.
 * The reader bounds everything it keeps: a header line, the number of
 * header lines and the body. */
#ifndef KN_LSP_RPC_H
#define KN_LSP_RPC_H

#include <stddef.h>
#include <stdio.h>

/* The most a message's body may hold: a schema may be 8 MiB, and JSON
 * escapes can double it. */
#define KN_RPC_MAX_BODY ((size_t)32 << 20)

typedef enum kn_rpc_result {
    KN_RPC_MESSAGE,    /* *body holds *len bytes (malloc, NUL-terminated) */
    KN_RPC_EOF,        /* the stream ended (also inside a message) */
    KN_RPC_TOO_LARGE,  /* Content-Length above max: *len is the length
                          announced; the caller answers, then calls
                          kn_rpc_skip to pass over the body */
    KN_RPC_BAD_HEADER, /* a header block without a usable Content-Length,
                          or a line too long: skipped */
} kn_rpc_result;

kn_rpc_result kn_rpc_read(FILE *in, size_t max, char **body, size_t *len);

/* Reads and drops n bytes; false at the end of the stream. */
int kn_rpc_skip(FILE *in, size_t n);

/* Writes one message with its Content-Length header and flushes. */
void kn_rpc_write(FILE *out, const char *body, size_t len);

/* The same for a body given in n parts, written one after the other (a
 * large body need not be copied into one buffer first). */
void kn_rpc_write_parts(FILE *out, const char *const *parts, const size_t *lens, size_t n);

#endif

/* fuzz_lsp.c - libFuzzer harness for the language server's message reader
 * and everything behind it (SPEC §9: the server bounds a message's size and
 * survives invalid JSON, unknown methods and out-of-order requests).  The
 * input is the byte stream an editor would send: first the framing alone
 * is read message by message (every body within the bound, NUL-terminated,
 * of the length announced), then the whole server runs on it, answering
 * into /dev/null. */
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <knowable/knowable.h>

#include "../../src/lsp/rpc.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    if (size == 0) {
        return 0;
    }
    /* The framing: a small bound so that "too large" is reached too. */
    FILE *in = fmemopen((void *)(uintptr_t)data, size, "rb");
    if (!in) {
        return 0;
    }
    for (size_t guard = 0; guard <= size; guard++) {
        char *body = NULL;
        size_t len = 0;
        kn_rpc_result r = kn_rpc_read(in, 256, &body, &len);
        if (r == KN_RPC_EOF) {
            break;
        }
        if (r == KN_RPC_MESSAGE) {
            if (len > 256 || body[len] != '\0') {
                abort();
            }
            free(body);
        } else if (r == KN_RPC_TOO_LARGE) {
            if (len <= 256) {
                abort();
            }
            if (!kn_rpc_skip(in, len)) {
                break;
            }
        }
    }
    fclose(in);

    /* The server itself. */
    in = fmemopen((void *)(uintptr_t)data, size, "rb");
    FILE *sink = fopen("/dev/null", "w");
    if (in && sink) {
        kn_options o;
        kn_options_init(&o);
        o.today = "2026-06-01";
        kn_status st = kn_lsp(&o, in, sink, sink);
        if (st != KN_EXIT_OK && st != KN_EXIT_FINDINGS) {
            abort(); /* 0 or 1: the server never fails on its input */
        }
    }
    if (in) {
        fclose(in);
    }
    if (sink) {
        fclose(sink);
    }
    return 0;
}

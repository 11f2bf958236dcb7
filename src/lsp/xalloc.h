/* xalloc.h - the server's own memory (documents, buffers): out of memory
 * ends the server with exit 2 and a message (SPEC §9). */
#ifndef KN_LSP_XALLOC_H
#define KN_LSP_XALLOC_H

#include <stddef.h>

void *kn_lsp_xmalloc(size_t n);
char *kn_lsp_xstrndup(const char *s, size_t n);

#endif

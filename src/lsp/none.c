/* none.c - `knowable lsp` in a build without jansson (meson -Dlsp=disabled,
 * or libjansson-dev missing): says so and fails. */
#include <knowable/knowable.h>

kn_status kn_lsp(const kn_options *o, FILE *in, FILE *out, FILE *err)
{
    (void)o;
    (void)in;
    (void)out;
    fputs("knowable lsp: this knowable was built without the language server (it needs jansson: install "
          "libjansson-dev and build again)\n",
          err);
    return KN_EXIT_FAILED;
}

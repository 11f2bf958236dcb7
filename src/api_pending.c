/* api_pending.c - commands whose stages have not landed yet.  Each says so
 * plainly and fails with exit status 2; each is removed when its stage
 * lands (see the open issues). */
#include <knowable/knowable.h>

static kn_status pending(const char *what, FILE *err)
{
    fprintf(err, "knowable: '%s' is not available in this build yet\n", what);
    return KN_EXIT_FAILED;
}

kn_status kn_init(const kn_options *o, const char *csv, FILE *out, FILE *err)
{
    (void)o, (void)csv, (void)out;
    return pending("init", err);
}

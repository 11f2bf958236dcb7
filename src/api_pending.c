/* api_pending.c - commands whose stages have not landed yet.  Each says so
 * plainly and fails with exit status 2; each is removed when its stage
 * lands (see the open issues).  None is pending now: every command of
 * SPEC §5 has its stage; the file stays as the place for the next one. */
#include <knowable/knowable.h>

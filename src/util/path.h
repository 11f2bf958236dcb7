/* path.h - folders and paths shared by the loader, the rulebook discovery
 * and the renderers: the default root of a schema (SPEC §9) and the
 * spelling of a path for messages.  Every result is arena memory. */
#ifndef KN_UTIL_PATH_H
#define KN_UTIL_PATH_H

#include <stdbool.h>

#include "arena.h"

/* The resolved path (realpath) in arena memory, NULL when it does not
 * resolve.  Never heap memory: an arena allocation that runs out of memory
 * jumps, and a heap result held across it would leak. */
char *kn_path_real(kn_arena *a, const char *path);

/* The real folder of the project a schema lies in: the nearest folder
 * upwards from the schema's own folder that holds .git (a folder or a
 * file, as in a worktree), else the schema's own folder.  NULL when the
 * schema's folder does not resolve (see kn_path_real_dir). */
char *kn_path_default_root(kn_arena *a, const char *schema_path);

/* The real folder a file lies in, whether or not the file exists (a name
 * given with --stdin-name need not): the folder of the resolved file,
 * else the resolved folder part of path.  NULL when neither resolves. */
char *kn_path_real_dir(kn_arena *a, const char *path);

/* Whether the real folder dir holds .git. */
bool kn_path_is_project(kn_arena *a, const char *dir);

/* A path without "." components, repeated slashes and "x/.." pairs, for
 * printing: "teams/fraud/../../.knowable-rules.yaml" becomes
 * ".knowable-rules.yaml".  Leading ".." of a relative path are kept; an
 * empty result is ".".  Only for display: the folders are not consulted,
 * so callers that open files use the path as it was built. */
char *kn_path_tidy(kn_arena *a, const char *path);

#endif

/* pos.h - a position in an input file, the bottom of every layer: the YAML
 * tree, the model, the diagnostics and the renderers all carry it. */
#ifndef KN_UTIL_POS_H
#define KN_UTIL_POS_H

#include <stddef.h>
#include <stdint.h>

/* 1-based line and column, 0-based byte offset.  file is the path as the
 * user gave it (display form); line 0 means "the whole file" (rendered as
 * FILE: without line and column). */
typedef struct kn_pos {
    const char *file;
    uint32_t line, col;
    size_t offset;
} kn_pos;

#endif

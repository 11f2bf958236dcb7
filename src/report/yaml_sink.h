/* yaml_sink.h - what the YAML reader finds, turned into diagnostics:
 * yaml-syntax (which marks the sink fatal: exit 2) and duplicate-key. */
#ifndef KN_REPORT_YAML_SINK_H
#define KN_REPORT_YAML_SINK_H

#include "../yaml/tree.h"
#include "diag.h"

/* A reporter that pushes into s (valid while s lives). */
kn_yaml_reporter kn_sink_yaml_reporter(kn_sink *s);

#endif

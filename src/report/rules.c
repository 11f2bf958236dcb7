/* rules.c - the runtime rule table, expanded from rules.def. */
#include <string.h>

#include "diag.h"

static const kn_rule_info table[KN_RULE_COUNT] = {
#define KN_RULE(e, id, sev, fam, sum) [KN_R_##e] = {id, KN_SEV_##sev, fam, sum},
#include "rules.def"
#undef KN_RULE
};

const kn_rule_info *kn_rule_get(kn_rule r)
{
    return &table[r];
}

bool kn_rule_find(const char *id, size_t len, kn_rule *out)
{
    for (size_t i = 0; i < KN_RULE_COUNT; i++) {
        if (strlen(table[i].id) == len && memcmp(table[i].id, id, len) == 0) {
            *out = (kn_rule)i;
            return true;
        }
    }
    return false;
}

const char *kn_severity_name(kn_severity s)
{
    switch (s) {
    case KN_SEV_ERROR:
        return "error";
    case KN_SEV_WARNING:
        return "warning";
    case KN_SEV_NOTE:
        return "note";
    case KN_SEV_OFF:
        break;
    }
    return "off";
}

bool kn_rule_is_schema(kn_rule r)
{
    return strcmp(kn_rule_get(r)->family, "schema") == 0;
}

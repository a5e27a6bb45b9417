/* text.c — small helpers of the text reports: plurals and units, so that
 * every number printed carries its unit the same way in every command. */
#include "cli.h"

#include <string.h>

const char *cli_plural(size_t n, const char *one, const char *many)
{
    return n == 1 ? one : many;
}

const char *cli_rate_unit(unsigned dimensions)
{
    return dimensions == 2 ? "bit/complex symbol" : "bit/symbol";
}

const char *cli_unit_suffix(const char *unit, char *buf, size_t cap)
{
    if (!unit || !unit[0])
        return "";
    snprintf(buf, cap, " %s", unit);
    return buf;
}

const char *cli_param_unit(const qc_model_type *type, size_t i, const char *level_unit)
{
    const char *u = type->params[i].unit;
    if (u && strcmp(u, "level units") == 0 && level_unit && level_unit[0])
        return level_unit;
    return u ? u : "";
}

/* opt.c: table-driven option parsing shared by all subcommands. */
#include "harness/base/opt.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

int opt_to_double(const char *s, double *out)
{
    char *end;
    errno = 0;
    double v = strtod(s, &end);
    if (end == s || *end || errno == ERANGE || !isfinite(v)) return -1;
    *out = v;
    return 0;
}

int opt_to_long(const char *s, long *out)
{
    char *end;
    errno = 0;
    long v = strtol(s, &end, 10);
    if (end == s || *end || errno == ERANGE) return -1;
    *out = v;
    return 0;
}

int opt_scan_number(const char *s, double *v, size_t *num_len, size_t *unit_len)
{
    char *end = (char *)s;
    errno = 0;
    if (isdigit((unsigned char)*s) || *s == '-' || *s == '+' || *s == '.') *v = strtod(s, &end);
    if (end == s || errno == ERANGE || !isfinite(*v)) return -1;
    size_t u = 0;
    while (isalpha((unsigned char)end[u]) || end[u] == '/' || end[u] == '%') u++;
    *num_len = (size_t)(end - s);
    *unit_len = u;
    return 0;
}

/* The options that take a quantity: the one unit each accepts (a bare
 * number is in that unit), and how a refusal names it. */
static const struct {
    enum opt_kind kind;
    const char *unit, *what, *example;
} opt_units[] = {
    {OPT_METRES, "m", "a length in metres", "3 or 3m"},
    {OPT_SECONDS, "s", "a time in seconds", "30 or 30s"},
    {OPT_SPEED, "m/s", "a speed in metres per second", "70 or 70m/s"},
    {OPT_DEGREES, "deg", "an angle in degrees", "45 or 45deg"},
};

/* A whole string as a number with no unit or exactly `unit`. */
static int opt_to_unit(const char *s, const char *unit, double *out)
{
    double v;
    size_t n, u;
    if (opt_scan_number(s, &v, &n, &u) || s[n + u] || (u && (u != strlen(unit) || memcmp(s + n, unit, u))))
        return -1;
    *out = v;
    return 0;
}

static int opt_to_u64(const char *s, unsigned long long *out)
{
    char *end;
    errno = 0;
    if (*s == '-') return -1;
    unsigned long long v = strtoull(s, &end, 10);
    if (end == s || *end || errno == ERANGE) return -1;
    *out = v;
    return 0;
}

static const struct opt *opt_find(const struct opt *table, const char *name, size_t len)
{
    for (const struct opt *o = table; o->name; o++)
        if (strlen(o->name) == len && !strncmp(o->name, name, len)) return o;
    return NULL;
}

static int opt_store(const char *cmd, const struct opt *o, const char *val, struct err *e)
{
    switch (o->kind) {
    case OPT_FLAG: *(int *)o->dest = 1; return 0;
    case OPT_STR: *(const char **)o->dest = val; return 0;
    case OPT_INT:
        if (opt_to_long(val, (long *)o->dest))
            return err_set(e, "revisit %s: option '%s' expects a whole number, got '%s'", cmd, o->name, val);
        return 0;
    case OPT_COUNT: {
        long v;
        if (opt_to_long(val, &v) || v < 1)
            return err_set(e, "revisit %s: option '%s' expects a whole number 1 or more, got '%s'", cmd, o->name, val);
        *(long *)o->dest = v;
        return 0;
    }
    case OPT_DOUBLE:
        if (opt_to_double(val, (double *)o->dest))
            return err_set(e, "revisit %s: option '%s' expects a number, got '%s'", cmd, o->name, val);
        return 0;
    case OPT_METRES:
    case OPT_SECONDS:
    case OPT_SPEED:
    case OPT_DEGREES: {
        size_t k = 0;
        while (opt_units[k].kind != o->kind) k++;
        if (opt_to_unit(val, opt_units[k].unit, (double *)o->dest))
            return err_set(e, "revisit %s: option '%s' expects %s such as %s, got '%s'", cmd, o->name,
                           opt_units[k].what, opt_units[k].example, val);
        return 0;
    }
    case OPT_U64:
        if (opt_to_u64(val, (unsigned long long *)o->dest))
            return err_set(e, "revisit %s: option '%s' expects a non-negative whole number, got '%s'", cmd, o->name, val);
        return 0;
    case OPT_LIST: {
        struct opt_list *l = o->dest;
        if (l->n >= OPT_LIST_MAX)
            return err_set(e, "revisit %s: option '%s' given more than %d times", cmd, o->name, OPT_LIST_MAX);
        l->v[l->n++] = val;
        return 0;
    }
    }
    return err_set(e, "revisit %s: internal: bad option kind", cmd);
}

int opt_parse(const char *cmd, int argc, char **argv, const struct opt *table,
              struct opt_args *args, struct err *e)
{
    memset(args, 0, sizeof *args);
    int only_pos = 0;
    for (int k = 1; k < argc; k++) {
        const char *a = argv[k];
        if (!only_pos && (!strcmp(a, "--help") || !strcmp(a, "-h"))) { args->help = 1; continue; }
        if (!only_pos && !strcmp(a, "--")) { only_pos = 1; continue; }
        if (only_pos || a[0] != '-' || a[1] == 0) {
            if (args->n >= (int)(sizeof args->v / sizeof args->v[0]))
                return err_set(e, "revisit %s: too many arguments", cmd);
            args->v[args->n++] = a;
            continue;
        }
        const char *eq = strchr(a, '=');
        size_t len = eq ? (size_t)(eq - a) : strlen(a);
        const struct opt *o = opt_find(table, a, len);
        if (!o)
            return err_set(e, "revisit %s: unknown option '%.*s' (see 'revisit %s --help')",
                           cmd, (int)len, a, cmd);
        const char *val = NULL;
        if (o->kind == OPT_FLAG) {
            if (eq) return err_set(e, "revisit %s: option '%s' takes no value", cmd, o->name);
        } else if (eq) {
            val = eq + 1;
        } else {
            if (k + 1 >= argc)
                return err_set(e, "revisit %s: option '%s' expects %s", cmd, o->name,
                               o->metavar ? o->metavar : "a value");
            val = argv[++k];
        }
        if (opt_store(cmd, o, val, e)) return -1;
    }
    return 0;
}

void opt_print_help(FILE *f, const struct opt *table)
{
    fprintf(f, "options:\n");
    for (const struct opt *o = table; o->name; o++) {
        char left[64];
        snprintf(left, sizeof left, "%s%s%s", o->name, o->metavar ? " " : "",
                 o->metavar ? o->metavar : "");
        fprintf(f, "  %-26s %s\n", left, o->help);
    }
    fprintf(f, "  %-26s %s\n", "-h, --help", "show this help");
}

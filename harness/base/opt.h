/* opt.h: the one option parser every subcommand uses.
 *
 * A command declares a NULL-terminated table; opt_parse fills the targets,
 * collects positional arguments, and on a bad option writes
 *     revisit eval: option '--top-k' expects a whole number, got 'x'
 * into the error record.  `--help`/`-h` sets *help (always recognised).
 *
 *     const char *out = NULL; int quiet = 0;
 *     const struct opt opts[] = {
 *         {"--out", OPT_STR, &out, "DIR", "where to write"},
 *         {"--quiet", OPT_FLAG, &quiet, NULL, "no progress bar"},
 *         {0}};
 */
#ifndef RV_OPT_H
#define RV_OPT_H

#include <stdio.h>
#include "harness/base/err.h"

enum opt_kind {
    OPT_FLAG,    /* int: set to 1 */
    OPT_STR,     /* const char *: the argument */
    OPT_INT,     /* long */
    OPT_COUNT,   /* long: a whole number 1 or more (threads, memory, counts); so 0 can mean "not given" */
    OPT_DOUBLE,  /* double */
    OPT_U64,     /* unsigned long long (seeds) */
    OPT_METRES,  /* double: a length, "3" or "3m" (units as in chains) */
    OPT_SECONDS, /* double: a time, "30" or "30s" */
    OPT_SPEED,   /* double: a speed, "70" or "70m/s" */
    OPT_DEGREES, /* double: an angle, "45" or "45deg" */
    OPT_LIST     /* struct opt_list: repeatable string option */
};

#define OPT_LIST_MAX 64
struct opt_list {
    int n;
    const char *v[OPT_LIST_MAX];
};

struct opt {
    const char *name;     /* "--out" */
    enum opt_kind kind;
    void *dest;
    const char *metavar;  /* "DIR"; NULL for flags */
    const char *help;     /* one line */
};

struct opt_args {
    int n;
    const char *v[64];    /* positional arguments in order */
    int help;             /* --help given */
};

/* Parse argv[1..argc-1] (argv[0] is the command name). 0 or -1 with e set. */
int opt_parse(const char *cmd, int argc, char **argv, const struct opt *table,
              struct opt_args *args, struct err *e);

/* Print "options:" and one line per table row. */
void opt_print_help(FILE *f, const struct opt *table);

/* The number at the start of s and the unit letters right after it, as
 * chains and length/time options write them ("40m", "90deg", "2m/s",
 * "30s"): *num_len bytes of number, then *unit_len bytes of unit (letters,
 * '/', '%').  0, or -1 when s does not start like a finite number (a digit,
 * sign or point; so no "inf" or "nan"). */
int opt_scan_number(const char *s, double *v, size_t *num_len, size_t *unit_len);

/* Parse a whole string as a number; 0 on success. */
int opt_to_double(const char *s, double *out);
int opt_to_long(const char *s, long *out);

#endif

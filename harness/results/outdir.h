/* outdir.h: a results folder written whole or not at all.
 *
 * A command that fills an --out folder with several files writes them into
 * a fresh folder beside it, OUT.part-PID, and renames that over OUT only
 * when every file is written; an older OUT (allowed with --replace) is moved
 * aside first and removed after. A run that fails part-way leaves OUT as it
 * was, so result.json and queries.csv always come from one run.
 *
 *     char tmp[4200];
 *     if (results_out_begin(out, tmp, sizeof tmp, e)) return -1;
 *     ... write into tmp ...
 *     if (failed) { results_out_fail(tmp, out, e); return -1; }
 *     if (results_out_commit(tmp, out, e)) return -1;   // tmp removed on failure too
 */
#ifndef RV_RESULTS_OUTDIR_H
#define RV_RESULTS_OUTDIR_H

#include <stddef.h>
#include "harness/base/err.h"

/* Create the empty folder OUT.part-PID (removing a leftover one) and put
 * its path in tmp (size n). 0 or -1. */
int results_out_begin(const char *out, char *tmp, size_t n, struct err *e);

/* Move tmp into place as out (out, when it exists, is replaced whole).
 * 0, or -1 with e set, tmp removed and out left as it was. */
int results_out_commit(const char *tmp, const char *out, struct err *e);

/* Remove tmp and what it holds. */
void results_out_abort(const char *tmp);

/* results_out_abort, and in e's message the temporary folder's name is
 * replaced by out's, so the error names the folder the user gave. */
void results_out_fail(const char *tmp, const char *out, struct err *e);

#endif

/* pool.h: run n independent tasks on a few threads.
 *
 * Tasks are handed out in index order from a shared counter; each task must
 * write only its own outputs (slot `task`), so results never depend on the
 * thread count or on scheduling.  fn returns 0 or -1; the first failure stops
 * handing out new tasks and pool_run returns -1 with the failing task's
 * message in e (the lowest failing index when several fail).
 *
 *     static int work(void *ctx, size_t task, int worker, struct err *e);
 *     if (pool_run(n, jobs, work, &ctx, e)) ...
 */
#ifndef RV_POOL_H
#define RV_POOL_H

#include <stddef.h>
#include "harness/base/err.h"

typedef int (*pool_fn)(void *ctx, size_t task, int worker, struct err *e);

/* jobs <= 0 means the number of online cores.  Returns 0 or -1. */
int pool_run(size_t n_tasks, int jobs, pool_fn fn, void *ctx, struct err *e);

/* Threads pool_run would use for jobs (resolves jobs <= 0; at least 1). */
int pool_threads(int jobs);

/* Set by a SIGINT handler (see pool_stop_on_sigint): no new tasks start. */
void pool_request_stop(void);
int pool_stop_requested(void);

#endif

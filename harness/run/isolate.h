/* isolate.h: run untrusted work (a plugin's describe loop) in a child process.
 *
 * isolate_run forks; the child lowers its address-space limit to what it
 * already uses plus mem_limit_bytes (setrlimit RLIMIT_AS), runs fn, and
 * writes its results into `shared`, a MAP_SHARED buffer both processes see.
 * The child reports each unit of work it starts with isolate_beat(); the
 * parent waits at most timeout_s between two beats.  A child that crashes
 * (signal), exits, stops beating, or fails returns -1 here with e naming
 * `who` and the unit in progress:
 *
 *     method 'loops' on scan 5: no progress within 2 s (time-out); the child was stopped
 *     method 'crash' on scan 3: the child died of signal 11 (Segmentation fault)
 *
 *     void *buf = isolate_shared_new(bytes, e);   // zero-filled, or NULL
 *     if (isolate_run(&opt, work, ctx, buf, e)) ...
 *     ... read buf ... isolate_shared_free(buf, bytes);
 *
 * The child runs in a process group of its own; when it ends (or is
 * stopped) the whole group is killed, so processes a plugin started in the
 * child do not outlive the describe step.
 *
 * What it protects: the harness process (its memory, finished results) from
 * a plugin that crashes, hangs or allocates without bound.  What it does
 * not: the child runs with the user's rights, so a malicious plugin can
 * still read and write the user's files (see harness/README.md, "Security").
 */
#ifndef RV_ISOLATE_H
#define RV_ISOLATE_H

#include <stddef.h>
#include "harness/base/err.h"

struct isolate_opts {
    const char *who;          /* "method 'NAME'" for messages */
    const char *unit;         /* "scan" */
    double timeout_s;         /* most seconds between two beats (> 0) */
    size_t mem_limit_bytes;   /* extra address space the child may take; 0 = no limit */
};

struct isolate_ctx;           /* the child's side, handed to fn */

/* Work run in the child.  Returns 0 or -1 with e set (sent to the parent). */
typedef int (*isolate_fn)(void *ctx, void *shared, struct isolate_ctx *ic, struct err *e);

/* Child side: "I am starting unit k". Cannot fail (a broken pipe ends the child). */
void isolate_beat(struct isolate_ctx *ic, size_t k);

void *isolate_shared_new(size_t bytes, struct err *e);
void isolate_shared_free(void *p, size_t bytes);

/* Fork, run fn in the child, wait.  0, or -1 with e set; the child is
 * always reaped before this returns. */
int isolate_run(const struct isolate_opts *o, isolate_fn fn, void *ctx, void *shared,
                struct err *e);

#endif

/* progress.h: a progress bar on stderr with rate and time left.
 *
 * Drawn only when stderr is a terminal and quiet is 0; at most ten times a
 * second.  progress_add is thread-safe.  Nothing here changes any result.
 *
 *     struct progress p; progress_start(&p, "describe", n, quiet);
 *     for (...) progress_add(&p, 1);
 *     progress_end(&p);
 */
#ifndef RV_PROGRESS_H
#define RV_PROGRESS_H

#include <pthread.h>
#include <stddef.h>

struct progress {
    const char *label;
    size_t total, done;
    double t0, last;
    int enabled;
    pthread_mutex_t lock;
};

void progress_start(struct progress *p, const char *label, size_t total, int quiet);
void progress_add(struct progress *p, size_t k);
void progress_end(struct progress *p);
/* Seconds on a monotonic clock. */
double progress_now(void);

#endif

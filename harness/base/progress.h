/* progress.h: progress on stderr with rate and time left.
 *
 * On a terminal a bar is redrawn at most ten times a second.  When stderr
 * is not a terminal (CI, a cluster job's log) a plain line is printed every
 * few seconds instead, and a last line when the work ends, if any line was
 * printed before (so short commands stay silent):
 *     sweep: 3/12 (25%), 0.4/s, 00:22 left, 900 scans described
 *     sweep: 12/12 done in 00:31, 3600 scans described
 * The interval is 5 s, or REVISIT_PROGRESS_SECONDS (a number > 0) when that
 * is set.  quiet = 1 draws nothing.  progress_add and progress_note are
 * thread-safe.  Nothing here changes any result; nothing here can fail.
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
    int enabled;             /* 1 bar on a terminal, 2 plain lines, 0 nothing */
    double every;            /* seconds between plain lines */
    int printed;             /* a plain line was printed */
    const char *note_label;  /* second count shown after the first, or NULL */
    size_t note;
    pthread_mutex_t lock;
};

void progress_start(struct progress *p, const char *label, size_t total, int quiet);
void progress_add(struct progress *p, size_t k);
/* Add k to a second count shown beside the first ("scans described"); the
 * label must outlive p and be the same on every call. */
void progress_note(struct progress *p, const char *label, size_t k);
void progress_end(struct progress *p);
/* Seconds on a monotonic clock. */
double progress_now(void);

#endif

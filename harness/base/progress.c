/* progress.c: progress bar on a terminal, plain lines in a log. */
#include "harness/base/progress.h"

#include <stdio.h>
#include <stdlib.h>
#include <time.h>
#include <unistd.h>

#define PROGRESS_EVERY_S 5.0

double progress_now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* The plain-line interval: REVISIT_PROGRESS_SECONDS when a number > 0. */
static double progress_every(void)
{
    const char *s = getenv("REVISIT_PROGRESS_SECONDS");
    char *end;
    double v = s ? strtod(s, &end) : 0;
    return s && end != s && !*end && v > 0 && v < 1e6 ? v : PROGRESS_EVERY_S;
}

void progress_start(struct progress *p, const char *label, size_t total, int quiet)
{
    p->label = label;
    p->total = total;
    p->done = 0;
    p->t0 = progress_now();
    p->last = p->t0;
    p->enabled = quiet ? 0 : isatty(STDERR_FILENO) ? 1 : 2;
    p->every = progress_every();
    p->printed = 0;
    p->note_label = NULL;
    p->note = 0;
    pthread_mutex_init(&p->lock, NULL);
}

static void progress_draw(const struct progress *p, double now)
{
    const int width = 30;
    double frac = p->total ? (double)p->done / (double)p->total : 1.0;
    int fill = (int)(frac * width + 0.5);
    double el = now - p->t0;
    double rate = el > 0 ? (double)p->done / el : 0;
    double left = rate > 0 ? (double)(p->total - p->done) / rate : 0;
    char bar[64];
    for (int k = 0; k < width; k++) bar[k] = k < fill ? '#' : '.';
    bar[width] = 0;
    fprintf(stderr, "\r%-10s [%s] %zu/%zu  %.1f/s  %02d:%02d left ", p->label, bar,
            p->done, p->total, rate, (int)(left / 60), (int)left % 60);
    fflush(stderr);
}

/* One plain line; last: the closing line with the total time. */
static void progress_line(const struct progress *p, double now, int last)
{
    double el = now - p->t0;
    double rate = el > 0 ? (double)p->done / el : 0;
    double left = rate > 0 && p->total > p->done ? (double)(p->total - p->done) / rate : 0;
    if (last)
        fprintf(stderr, "%s: %zu/%zu done in %02d:%02d", p->label, p->done, p->total,
                (int)(el / 60), (int)el % 60);
    else
        fprintf(stderr, "%s: %zu/%zu (%.0f%%), %.1f/s, %02d:%02d left", p->label, p->done, p->total,
                p->total ? 100.0 * (double)p->done / (double)p->total : 100.0, rate,
                (int)(left / 60), (int)left % 60);
    if (p->note_label) fprintf(stderr, ", %zu %s", p->note, p->note_label);
    fputc('\n', stderr);
    fflush(stderr);
}

/* Draw what is due; the caller holds the lock. */
static void progress_tick(struct progress *p)
{
    double now = progress_now();
    if (p->enabled == 1 && (now - p->last > 0.1 || p->done == p->total)) {
        p->last = now;
        progress_draw(p, now);
    } else if (p->enabled == 2 && now - p->last >= p->every) {
        p->last = now;
        p->printed = 1;
        progress_line(p, now, 0);
    }
}

void progress_add(struct progress *p, size_t k)
{
    pthread_mutex_lock(&p->lock);
    p->done += k;
    if (p->enabled) progress_tick(p);
    pthread_mutex_unlock(&p->lock);
}

void progress_note(struct progress *p, const char *label, size_t k)
{
    pthread_mutex_lock(&p->lock);
    p->note_label = label;
    p->note += k;
    pthread_mutex_unlock(&p->lock);
}

void progress_end(struct progress *p)
{
    if (p->enabled == 1) {
        progress_draw(p, progress_now());
        fputc('\n', stderr);
    } else if (p->enabled == 2 && p->printed) {
        progress_line(p, progress_now(), 1);
    }
    pthread_mutex_destroy(&p->lock);
}

/* progress.c: terminal progress bar with rate and time left. */
#include "harness/base/progress.h"

#include <stdio.h>
#include <time.h>
#include <unistd.h>

double progress_now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

void progress_start(struct progress *p, const char *label, size_t total, int quiet)
{
    p->label = label;
    p->total = total;
    p->done = 0;
    p->t0 = progress_now();
    p->last = 0;
    p->enabled = !quiet && isatty(STDERR_FILENO);
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

void progress_add(struct progress *p, size_t k)
{
    pthread_mutex_lock(&p->lock);
    p->done += k;
    if (p->enabled) {
        double now = progress_now();
        if (now - p->last > 0.1 || p->done == p->total) {
            p->last = now;
            progress_draw(p, now);
        }
    }
    pthread_mutex_unlock(&p->lock);
}

void progress_end(struct progress *p)
{
    if (p->enabled) {
        progress_draw(p, progress_now());
        fputc('\n', stderr);
    }
    pthread_mutex_destroy(&p->lock);
}

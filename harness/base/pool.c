/* pool.c: a fixed set of pthreads pulling task indices from an atomic counter. */
#include "harness/base/pool.h"

#include <pthread.h>
#include <signal.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

/* The one piece of process-wide state: a stop request from a signal handler.
 * It never changes a result, only whether further tasks start. */
static volatile sig_atomic_t pool_stop;

void pool_request_stop(void) { pool_stop = 1; }
int pool_stop_requested(void) { return pool_stop != 0; }

struct pool_ctx {
    size_t n, next;
    pool_fn fn;
    void *ctx;
    pthread_mutex_t lock;
    size_t fail_task;     /* lowest failing task, n if none */
    struct err fail_err;
};

struct pool_worker {
    struct pool_ctx *p;
    int id;
};

static void *pool_main(void *arg)
{
    struct pool_worker *w = arg;
    struct pool_ctx *p = w->p;
    struct err e;
    for (;;) {
        pthread_mutex_lock(&p->lock);
        int stop = p->fail_task < p->n || pool_stop;
        size_t t = p->next;
        if (!stop && t < p->n) p->next++;
        pthread_mutex_unlock(&p->lock);
        if (stop || t >= p->n) break;
        e.msg[0] = 0;
        if (p->fn(p->ctx, t, w->id, &e)) {
            pthread_mutex_lock(&p->lock);
            if (t < p->fail_task) {
                p->fail_task = t;
                p->fail_err = e;
            }
            pthread_mutex_unlock(&p->lock);
        }
    }
    return NULL;
}

int pool_threads(int jobs)
{
    if (jobs <= 0) {
        long c = sysconf(_SC_NPROCESSORS_ONLN);
        jobs = c > 0 ? (int)c : 1;
    }
    return jobs > 256 ? 256 : jobs;
}

int pool_run(size_t n_tasks, int jobs, pool_fn fn, void *ctx, struct err *e)
{
    struct pool_ctx p;
    memset(&p, 0, sizeof p);
    p.n = n_tasks;
    p.fn = fn;
    p.ctx = ctx;
    p.fail_task = n_tasks;
    pthread_mutex_init(&p.lock, NULL);
    int nt = pool_threads(jobs);
    if ((size_t)nt > n_tasks) nt = n_tasks ? (int)n_tasks : 1;
    pthread_t th[256];
    struct pool_worker w[256];
    int started = 0;
    for (int k = 1; k < nt; k++) {
        w[k].p = &p;
        w[k].id = k;
        if (pthread_create(&th[k], NULL, pool_main, &w[k])) break;
        started = k;
    }
    w[0].p = &p;
    w[0].id = 0;
    pool_main(&w[0]);
    for (int k = 1; k <= started; k++) pthread_join(th[k], NULL);
    pthread_mutex_destroy(&p.lock);
    if (p.fail_task < n_tasks) {
        if (e) *e = p.fail_err;
        return -1;
    }
    if (pool_stop && p.next < n_tasks) return err_set(e, "interrupted");
    return 0;
}

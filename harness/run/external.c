/* external.c: run a descriptor method as a child program over a socket pair. */
#include "harness/run/external.h"

#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <poll.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>
#include <sys/socket.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

#include "harness/base/progress.h"

/* Why a wait ended early. */
enum { EXT_OK = 0, EXT_EOF = 1, EXT_TIMEOUT = 2, EXT_IO = 3 };

static void ext_put_u32(unsigned char *b, uint32_t v)
{
    for (int k = 0; k < 4; k++) b[k] = (unsigned char)(v >> (8 * k));
}

static uint32_t ext_get_u32(const unsigned char *b)
{
    return (uint32_t)b[0] | (uint32_t)b[1] << 8 | (uint32_t)b[2] << 16 | (uint32_t)b[3] << 24;
}

/* Wait for fd to become ready for ev until deadline. */
static int ext_wait(int fd, short ev, double deadline)
{
    for (;;) {
        double left = deadline - progress_now();
        if (left <= 0) return EXT_TIMEOUT;
        struct pollfd pf = {fd, ev, 0};
        int r = poll(&pf, 1, (int)(left * 1000) + 1);
        if (r > 0) return EXT_OK;
        if (r == 0) continue;
        if (errno != EINTR) return EXT_IO;
    }
}

static int ext_read(int fd, void *buf, size_t n, double deadline)
{
    unsigned char *p = buf;
    while (n) {
        int w = ext_wait(fd, POLLIN, deadline);
        if (w) return w;
        ssize_t r = recv(fd, p, n, MSG_DONTWAIT);
        if (r == 0) return EXT_EOF;
        if (r < 0) {
            if (errno == EAGAIN || errno == EINTR) continue;
            return errno == ECONNRESET ? EXT_EOF : EXT_IO;
        }
        p += r;
        n -= (size_t)r;
    }
    return EXT_OK;
}

static int ext_write(int fd, const void *buf, size_t n, double deadline)
{
    const unsigned char *p = buf;
    while (n) {
        int w = ext_wait(fd, POLLOUT, deadline);
        if (w) return w;
        ssize_t r = send(fd, p, n, MSG_DONTWAIT | MSG_NOSIGNAL);
        if (r < 0) {
            if (errno == EAGAIN || errno == EINTR) continue;
            return errno == EPIPE || errno == ECONNRESET ? EXT_EOF : EXT_IO;
        }
        p += r;
        n -= (size_t)r;
    }
    return EXT_OK;
}

/* Kill and reap the child; describe how it ended into why. */
static void ext_reap(struct external *x, int force, char *why, size_t n)
{
    snprintf(why, n, "it is still running");
    if (x->fd >= 0) close(x->fd);
    x->fd = -1;
    if (x->pid <= 0) return;
    int st = 0;
    pid_t r = 0;
    for (int k = 0; k < 50 && !force && (r = waitpid(x->pid, &st, WNOHANG)) == 0; k++) {
        struct timespec ts = {0, 10 * 1000 * 1000};
        nanosleep(&ts, NULL);
    }
    if (r == 0) {
        kill(-x->pid, SIGKILL);
        kill(x->pid, SIGKILL);
        r = waitpid(x->pid, &st, 0);
        snprintf(why, n, "it was stopped");
    }
    kill(-x->pid, SIGKILL);  /* what it started ends with it (the group outlives its leader) */
    if (r == x->pid && WIFEXITED(st)) snprintf(why, n, "it exited with status %d", WEXITSTATUS(st));
    else if (r == x->pid && WIFSIGNALED(st) && !force) snprintf(why, n, "it died of signal %d", WTERMSIG(st));
    x->pid = -1;
}

/* Turn a failed wait into the error for "what" and stop the program. */
static int ext_fail(struct external *x, int why, const char *what, struct err *e)
{
    char how[128];
    ext_reap(x, why == EXT_TIMEOUT, how, sizeof how);
    if (why == EXT_TIMEOUT)
        return err_set(e, "external method '%s' (%s): no answer %s within %g s (time-out); it was stopped",
                       x->name, x->prog, what, strstr(what, "hello") ? x->hello_timeout_s : x->timeout_s);
    if (why == EXT_EOF)
        return err_set(e, "external method '%s' (%s): closed its output %s; %s", x->name, x->prog, what, how);
    return err_set(e, "external method '%s' (%s): i/o error %s: %s", x->name, x->prog, what, strerror(errno));
}

static int ext_spawn(struct external *x, const char *const *args, int nargs, struct err *e)
{
    int sv[2];
    if (socketpair(AF_UNIX, SOCK_STREAM | SOCK_CLOEXEC, 0, sv))
        return err_set(e, "external method %s: cannot create a socket pair: %s", x->prog, strerror(errno));
    char *argv[66];
    argv[0] = x->prog;
    for (int k = 0; k < nargs && k < 64; k++) argv[k + 1] = (char *)args[k];
    argv[nargs < 64 ? nargs + 1 : 65] = NULL;
    pid_t pid = fork();
    if (pid < 0) {
        close(sv[0]);
        close(sv[1]);
        return err_set(e, "external method %s: cannot fork: %s", x->prog, strerror(errno));
    }
    if (pid == 0) {
        setpgid(0, 0);
        if (x->mem_bytes) {
            struct rlimit rl = {(rlim_t)x->mem_bytes, (rlim_t)x->mem_bytes};
            if (setrlimit(RLIMIT_AS, &rl)) _exit(126);
        }
        dup2(sv[1], 0);
        dup2(sv[1], 1);
        execv(x->prog, argv);
        _exit(127);
    }
    setpgid(pid, pid);  /* both sides, so the group exists before either goes on */
    close(sv[1]);
    x->pid = pid;
    x->fd = sv[0];
    return 0;
}

/* Read and check the hello frame. */
static int ext_hello(struct external *x, struct err *e)
{
    unsigned char h[16];
    double dl = progress_now() + x->hello_timeout_s;
    int w = ext_read(x->fd, h, sizeof h, dl);
    if (w) return ext_fail(x, w, "before its hello", e);
    uint32_t dim = ext_get_u32(h + 4), dist = ext_get_u32(h + 8), len = ext_get_u32(h + 12);
    if (memcmp(h, "RVH1", 4) || dim == 0 || dim > EXTERNAL_MAX_DIM || dist > RV_DIST_COSINE ||
        len == 0 || len >= sizeof x->name) {
        ext_fail(x, EXT_IO, "", e);
        return err_set(e, "external method %s: bad hello (expected 'RVH1', dimension 1 to %u, distance 0 or 1, "
                       "a name of 1 to 63 bytes; got '%.4s', %u, %u, %u)", x->prog, EXTERNAL_MAX_DIM,
                       (const char *)h, dim, dist, len);
    }
    w = ext_read(x->fd, x->name, len, dl);
    if (w) return ext_fail(x, w, "in its hello", e);
    x->name[len] = 0;
    x->dim = dim;
    x->distance = (enum rv_distance)dist;
    return 0;
}

int external_start(struct external **xp, const char *prog, const char *const *args, int nargs,
                   double timeout_s, struct err *e)
{
    double hello = timeout_s > EXTERNAL_HELLO_S ? timeout_s : EXTERNAL_HELLO_S;
    return external_start_waits(xp, prog, args, nargs, hello, timeout_s, e);
}

int external_start_waits(struct external **xp, const char *prog, const char *const *args, int nargs,
                         double hello_timeout_s, double timeout_s, struct err *e)
{
    struct external_limits lim = {hello_timeout_s, timeout_s, 0};
    return external_start_limits(xp, prog, args, nargs, &lim, e);
}

int external_start_limits(struct external **xp, const char *prog, const char *const *args, int nargs,
                          const struct external_limits *lim, struct err *e)
{
    *xp = NULL;
    struct external *x = calloc(1, sizeof *x);
    if (!x) return err_set(e, "out of memory");
    x->fd = -1;
    x->pid = -1;
    x->timeout_s = lim->scan_s > 0 ? lim->scan_s : EXTERNAL_SCAN_S;
    x->hello_timeout_s = lim->hello_s > 0 ? lim->hello_s : EXTERNAL_HELLO_S;
    x->mem_bytes = lim->mem_bytes;
    snprintf(x->prog, sizeof x->prog, "%s", prog);
    snprintf(x->name, sizeof x->name, "%s", strrchr(prog, '/') ? strrchr(prog, '/') + 1 : prog);
    if (access(prog, X_OK)) {
        free(x);
        return err_set(e, "external method %s: not an executable program", prog);
    }
    if (ext_spawn(x, args, nargs, e) || ext_hello(x, e)) {
        char how[64];
        ext_reap(x, 1, how, sizeof how);
        free(x);
        return -1;
    }
    *xp = x;
    return 0;
}

/* Send one scan frame. */
static int ext_send_scan(struct external *x, const struct rv_scan *s, double dl)
{
    unsigned char h[20];
    memcpy(h, "RVS1", 4);
    ext_put_u32(h + 4, s->index);
    uint64_t bits;
    memcpy(&bits, &s->stamp, 8);
    for (int k = 0; k < 8; k++) h[8 + k] = (unsigned char)(bits >> (8 * k));
    ext_put_u32(h + 16, (uint32_t)s->n);
    int w = ext_write(x->fd, h, sizeof h, dl);
    if (!w && s->n) w = ext_write(x->fd, s->xyzi, s->n * 16, dl);  /* host is little-endian */
    return w;
}

/* An error frame of len bytes: its first bytes become the message, however
 * long the frame says it is and however much of it arrives. */
static int ext_error_frame(struct external *x, uint32_t index, uint32_t len, double dl, const char *what,
                           struct err *e)
{
    char msg[256];
    size_t got = 0, take = len < sizeof msg - 1 ? len : sizeof msg - 1;
    while (got < take && !ext_read(x->fd, msg + got, 1, dl)) got++;
    msg[got] = 0;
    ext_fail(x, EXT_IO, what, e);
    if (got < take)
        return err_set(e, "external method '%s' on scan %u: error frame of %u bytes cut short after %zu: %s",
                       x->name, index, len, got, got ? msg : "(nothing)");
    if (take < len)
        return err_set(e, "external method '%s' on scan %u: %s [error frame of %u bytes, the first %zu shown]",
                       x->name, index, msg, len, take);
    return err_set(e, "external method '%s' on scan %u: %s", x->name, index, msg);
}

int external_describe(struct external *x, const struct rv_scan *s, float *desc, struct err *e)
{
    char what[64];
    snprintf(what, sizeof what, "for scan %u", s->index);
    if (x->fd < 0) return err_set(e, "external method '%s': stopped after an earlier error", x->name);
    if (s->n > UINT32_MAX / 16) return err_set(e, "external method '%s': scan %u too large", x->name, s->index);
    double dl = progress_now() + x->timeout_s;
    int w = ext_send_scan(x, s, dl);
    if (w) return ext_fail(x, w, what, e);
    unsigned char h[12];
    if ((w = ext_read(x->fd, h, 8, dl))) return ext_fail(x, w, what, e);
    if (!memcmp(h, "RVE1", 4)) return ext_error_frame(x, s->index, ext_get_u32(h + 4), dl, what, e);
    if (memcmp(h, "RVD1", 4) || ext_get_u32(h + 4) != s->index) {
        ext_fail(x, EXT_IO, what, e);
        return err_set(e, "external method '%s' on scan %u: answered garbage (expected a descriptor frame "
                       "'RVD1' for scan %u, got bytes %02x %02x %02x %02x, index %u)", x->name, s->index,
                       s->index, h[0], h[1], h[2], h[3], ext_get_u32(h + 4));
    }
    if ((w = ext_read(x->fd, h + 8, 4, dl))) return ext_fail(x, w, what, e);
    uint32_t count = ext_get_u32(h + 8);
    if (count != x->dim) {
        ext_fail(x, EXT_IO, what, e);
        return err_set(e, "external method '%s' on scan %u: descriptor of %u floats, expected %u as its hello "
                       "declared", x->name, s->index, count, x->dim);
    }
    if ((w = ext_read(x->fd, desc, (size_t)count * 4, dl))) return ext_fail(x, w, what, e);
    return 0;
}

void external_stop(struct external *x)
{
    if (!x) return;
    char how[64];
    ext_reap(x, 0, how, sizeof how);
    free(x);
}

/* isolate.c: fork, limit, heartbeat, reap. */
#include "harness/run/isolate.h"

#include <errno.h>
#include <poll.h>
#include <signal.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/mman.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

/* Pipe records, child -> parent:  u8 kind, u64 unit, then for ISO_FAIL a
 * u32 length and that many bytes of message. */
enum { ISO_BEAT = 1, ISO_DONE = 2, ISO_FAIL = 3 };

struct isolate_ctx {
    int fd;
};

static void iso_write_all(int fd, const void *p, size_t n)
{
    const char *c = p;
    while (n) {
        ssize_t w = write(fd, c, n);
        if (w < 0 && errno == EINTR) continue;
        if (w <= 0) _exit(3);
        c += w;
        n -= (size_t)w;
    }
}

static void iso_send(int fd, uint8_t kind, uint64_t unit, const char *msg)
{
    unsigned char head[9];
    head[0] = kind;
    memcpy(head + 1, &unit, 8);
    iso_write_all(fd, head, sizeof head);
    if (kind == ISO_FAIL) {
        uint32_t len = (uint32_t)strlen(msg);
        iso_write_all(fd, &len, 4);
        iso_write_all(fd, msg, len);
    }
}

void isolate_beat(struct isolate_ctx *ic, size_t k)
{
    iso_send(ic->fd, ISO_BEAT, (uint64_t)k, NULL);
}

void *isolate_shared_new(size_t bytes, struct err *e)
{
    void *p = mmap(NULL, bytes ? bytes : 1, PROT_READ | PROT_WRITE, MAP_SHARED | MAP_ANONYMOUS, -1, 0);
    if (p == MAP_FAILED) {
        err_set(e, "cannot map %zu bytes of shared memory: %s", bytes, strerror(errno));
        return NULL;
    }
    return p;
}

void isolate_shared_free(void *p, size_t bytes)
{
    if (p) munmap(p, bytes ? bytes : 1);
}

/* Address space in use now, from /proc/self/statm (pages); 0 if unknown. */
static size_t iso_vm_bytes(void)
{
    FILE *f = fopen("/proc/self/statm", "r");
    unsigned long pages = 0;
    if (f) {
        if (fscanf(f, "%lu", &pages) != 1) pages = 0;
        fclose(f);
    }
    return (size_t)pages * (size_t)sysconf(_SC_PAGESIZE);
}

static void iso_child(const struct isolate_opts *o, isolate_fn fn, void *ctx, void *shared, int fd)
{
    setpgid(0, 0);            /* a group of its own, ended whole by iso_reap */
    signal(SIGINT, SIG_IGN);  /* the parent decides what an interrupt means */
    /* Fatal signals kill the child outright, whatever handlers the host had
     * (a sanitizer's, a crash notice), so the parent can name the signal. */
    static const int fatal[] = {SIGSEGV, SIGBUS, SIGFPE, SIGILL, SIGABRT};
    for (size_t k = 0; k < sizeof fatal / sizeof fatal[0]; k++) signal(fatal[k], SIG_DFL);
    if (o->mem_limit_bytes) {
        struct rlimit rl;
        rl.rlim_cur = rl.rlim_max = (rlim_t)(iso_vm_bytes() + o->mem_limit_bytes);
        setrlimit(RLIMIT_AS, &rl);
    }
    struct isolate_ctx ic = {fd};
    struct err e;
    e.msg[0] = 0;
    if (fn(ctx, shared, &ic, &e)) {
        iso_send(fd, ISO_FAIL, 0, e.msg[0] ? e.msg : "failed without a message");
        _exit(1);
    }
    iso_send(fd, ISO_DONE, 0, NULL);
    _exit(0);
}

/* Read exactly n bytes within the deadline; 1 done, 0 time-out, -1 closed. */
static int iso_read(int fd, void *p, size_t n, double timeout_s)
{
    char *c = p;
    while (n) {
        struct pollfd pf = {fd, POLLIN, 0};
        int r = poll(&pf, 1, (int)(timeout_s * 1000.0 + 0.5));
        if (r < 0 && errno == EINTR) continue;
        if (r == 0) return 0;
        ssize_t got = read(fd, c, n);
        if (got < 0 && errno == EINTR) continue;
        if (got <= 0) return -1;
        c += got;
        n -= (size_t)got;
    }
    return 1;
}

/* Wait for the child; its process group is ended after it, so processes
 * a plugin started do not outlive the describe step. */
static int iso_reap(pid_t pid, int kill_first)
{
    int st = 0;
    if (kill_first) kill(-pid, SIGKILL);
    if (kill_first) kill(pid, SIGKILL);
    while (waitpid(pid, &st, 0) < 0 && errno == EINTR) {}
    kill(-pid, SIGKILL);
    return st;
}

static int iso_died(const struct isolate_opts *o, pid_t pid, int started, uint64_t unit, struct err *e)
{
    int st = iso_reap(pid, 0);
    char where[128] = "";
    if (started) snprintf(where, sizeof where, " on %s %llu", o->unit, (unsigned long long)unit);
    if (WIFSIGNALED(st))
        return err_set(e, "%s%s: the child died of signal %d (%s)", o->who, where,
                       WTERMSIG(st), strsignal(WTERMSIG(st)));
    return err_set(e, "%s%s: the child exited with status %d without finishing", o->who, where,
                   WIFEXITED(st) ? WEXITSTATUS(st) : -1);
}

int isolate_run(const struct isolate_opts *o, isolate_fn fn, void *ctx, void *shared,
                struct err *e)
{
    int fds[2];
    if (pipe(fds)) return err_set(e, "%s: cannot make a pipe: %s", o->who, strerror(errno));
    fflush(NULL);
    pid_t pid = fork();
    if (pid < 0) {
        close(fds[0]);
        close(fds[1]);
        return err_set(e, "%s: cannot start a child process: %s", o->who, strerror(errno));
    }
    if (pid == 0) {
        close(fds[0]);
        iso_child(o, fn, ctx, shared, fds[1]);
    }
    setpgid(pid, pid);
    close(fds[1]);
    int fd = fds[0], rc = -1, started = 0;
    uint64_t unit = 0;
    for (;;) {
        unsigned char head[9];
        int r = iso_read(fd, head, sizeof head, o->timeout_s);
        if (r == 0) {
            iso_reap(pid, 1);
            char where[128] = "";
            if (started) snprintf(where, sizeof where, " on %s %llu", o->unit, (unsigned long long)unit);
            err_set(e, "%s%s: no progress within %g s (time-out); the child was stopped",
                    o->who, where, o->timeout_s);
            break;
        }
        if (r < 0) { iso_died(o, pid, started, unit, e); break; }
        if (head[0] == ISO_BEAT) { memcpy(&unit, head + 1, 8); started = 1; continue; }
        if (head[0] == ISO_DONE) { iso_reap(pid, 0); rc = 0; break; }
        uint32_t len = 0;
        char msg[ERR_MSG_MAX];
        if (head[0] != ISO_FAIL || iso_read(fd, &len, 4, o->timeout_s) != 1 || len >= sizeof msg ||
            iso_read(fd, msg, len, o->timeout_s) != 1) {
            iso_reap(pid, 1);
            err_set(e, "%s: the child sent a malformed report", o->who);
            break;
        }
        msg[len] = 0;
        iso_reap(pid, 0);
        err_set(e, "%s", msg);
        break;
    }
    close(fd);
    return rc;
}

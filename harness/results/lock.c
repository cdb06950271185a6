/* lock.c: the per-shard lock of a sweep folder (see lock.h). */
#include "harness/results/lock.h"

#include <errno.h>
#include <fcntl.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/file.h>
#include <unistd.h>

/* The pid written in the lock file, or 0. */
static long lock_holder(int fd)
{
    char buf[32] = "";
    ssize_t n = pread(fd, buf, sizeof buf - 1, 0);
    if (n <= 0) return 0;
    buf[n] = 0;
    return strtol(buf, NULL, 10);
}

static int lock_busy(const char *path, long pid, int i, int n, struct err *e)
{
    return err_at(e, path, 0, "another sweep (pid %ld) is running shard %d/%d into this folder; wait for it "
                  "to end, or use another --out", pid, i, n);
}

int results_lock(const char *dir, int shard_i, int shard_n, int *fd, struct err *e)
{
    char path[4200];
    *fd = -1;
    int len = snprintf(path, sizeof path, "%s/.lock-%d-of-%d", dir, shard_i, shard_n);
    if (len < 0 || (size_t)len >= sizeof path) return err_at(e, dir, 0, "path too long for the sweep lock");
    int f = open(path, O_RDWR | O_CREAT | O_CLOEXEC, 0644);
    if (f < 0) return err_at(e, path, 0, "cannot open the sweep lock: %s", strerror(errno));
    if (flock(f, LOCK_EX | LOCK_NB)) {
        int saved = errno;
        long pid = lock_holder(f);
        if (saved == EWOULDBLOCK) {
            close(f);
            return lock_busy(path, pid, shard_i, shard_n, e);
        }
        /* no flock here: a live pid in the file holds the lock */
        if (pid > 0 && pid != (long)getpid() && (kill((pid_t)pid, 0) == 0 || errno == EPERM)) {
            close(f);
            return lock_busy(path, pid, shard_i, shard_n, e);
        }
    }
    char text[32];
    int tl = snprintf(text, sizeof text, "%ld\n", (long)getpid());
    if (ftruncate(f, 0) || pwrite(f, text, (size_t)tl, 0) != tl) {
        int saved = errno;
        close(f);
        return err_at(e, path, 0, "cannot write the sweep lock: %s", strerror(saved));
    }
    *fd = f;
    return 0;
}

void results_unlock(int fd)
{
    if (fd >= 0) close(fd);  /* closing drops the flock */
}

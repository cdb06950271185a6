/* supervise.c: run a command as a worker process and exit 0 only when the
 * worker said it finished (see supervise.h). */
#include "harness/cli/supervise.h"

#include <errno.h>
#include <fcntl.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/prctl.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>

#include "harness/cli/cmd.h"

#define SUPERVISE_NO_EXEC 0xff   /* first byte from a child that could not start the program */

/* The worker's pid, for the signal handler (process-wide by nature). */
static volatile sig_atomic_t supervise_pid;

static const int supervise_sigs[] = {SIGINT, SIGTERM, SIGHUP, SIGQUIT};

/* A signal sent by a process (si_code <= 0: kill, sigqueue, tgkill) goes on
 * to the worker; one from the terminal (SI_KERNEL) has reached the worker
 * too, as it is in our process group. */
static void supervise_forward(int sig, siginfo_t *si, void *ctx)
{
    (void)ctx;
    if (si->si_code <= 0 && supervise_pid > 0) kill((pid_t)supervise_pid, sig);
}

/* The child: start the program again as the worker; async-signal-safe only. */
static void supervise_child(char **argv, const int p[2], pid_t parent, const sigset_t *old)
{
    close(p[0]);
    prctl(PR_SET_PDEATHSIG, SIGKILL);
    if (getppid() != parent) _exit(CMD_ERROR);   /* the first process is gone already */
    sigprocmask(SIG_SETMASK, old, NULL);
    execv("/proc/self/exe", argv);
    unsigned char msg[2] = {SUPERVISE_NO_EXEC, (unsigned char)errno};
    ssize_t w = write(p[1], msg, sizeof msg);
    (void)w;
    _exit(CMD_ERROR);
}

/* The exit code of the first process once the worker has ended with
 * status st, having written n bytes b to the pipe. */
static int supervise_verdict(const char *cmd, int st, ssize_t n, const unsigned char *b)
{
    if (n >= 1) return b[0];
    if (WIFSIGNALED(st)) {
        int sig = WTERMSIG(st);
        signal(sig, SIG_DFL);
        sigset_t one;
        sigemptyset(&one);
        sigaddset(&one, sig);
        sigprocmask(SIG_UNBLOCK, &one, NULL);
        raise(sig);                      /* die of it as the worker did */
        return 128 + sig;
    }
    int s = WIFEXITED(st) ? WEXITSTATUS(st) : CMD_ERROR;
    if (s) return s;                     /* failed, and said why */
    fprintf(stderr, "revisit: %s ended with status 0 before it had finished: method code loaded into the "
            "process ended it (by _exit, for one); what it had not finished was not written, so the exit status "
            "is 2 (--isolate names the method)\n", cmd);
    return CMD_ERROR;
}

/* This is the worker when the first process named its pipe: take it (a
 * value that names no pipe is not ours and is dropped). */
static int supervise_worker(int *fd)
{
    const char *w = getenv(SUPERVISE_ENV);
    if (!w) return 0;
    char *end;
    struct stat st;
    long v = strtol(w, &end, 10);
    int ok = end != w && !*end && v > 2 && v < 65536 && !fstat((int)v, &st) && S_ISFIFO(st.st_mode) &&
             fcntl((int)v, F_SETFD, FD_CLOEXEC) == 0;
    unsetenv(SUPERVISE_ENV);
    if (ok) *fd = (int)v;
    return ok;
}

/* Forward the signals of supervise_sigs (and hold them, *old the mask before). */
static void supervise_signals(sigset_t *old)
{
    struct sigaction sa;
    memset(&sa, 0, sizeof sa);
    sa.sa_sigaction = supervise_forward;
    sa.sa_flags = SA_SIGINFO | SA_RESTART;
    sigemptyset(&sa.sa_mask);
    sigset_t block;
    sigemptyset(&block);
    for (size_t k = 0; k < sizeof supervise_sigs / sizeof *supervise_sigs; k++) {
        sigaction(supervise_sigs[k], &sa, NULL);
        sigaddset(&block, supervise_sigs[k]);
    }
    sigprocmask(SIG_BLOCK, &block, old);   /* held until the worker's pid is known, so none is lost */
}

static int supervise_alone(int err)
{
    for (size_t k = 0; k < sizeof supervise_sigs / sizeof *supervise_sigs; k++) signal(supervise_sigs[k], SIG_DFL);
    fprintf(stderr, "revisit: cannot start a worker process (%s); running without the check that the "
            "command finished\n", strerror(err));
    return 0;
}

int supervise_start(char **argv, int *fd, int *rc)
{
    *fd = -1;
    if (supervise_worker(fd)) return 0;
    int p[2];
    char num[16];
    if (pipe(p)) return supervise_alone(errno);
    snprintf(num, sizeof num, "%d", p[1]);
    sigset_t old;
    supervise_signals(&old);
    fcntl(p[0], F_SETFD, FD_CLOEXEC);
    pid_t parent = getpid(), pid = -1;
    if (setenv(SUPERVISE_ENV, num, 1) == 0) {
        fflush(NULL);
        if ((pid = fork()) == 0) supervise_child(argv, p, parent, &old);
    }
    int saved = errno;
    unsetenv(SUPERVISE_ENV);
    close(p[1]);
    supervise_pid = pid;
    sigprocmask(SIG_SETMASK, &old, NULL);
    unsigned char b[2];
    ssize_t n = 0;
    int st = 0;
    if (pid > 0) {
        while (waitpid(pid, &st, 0) < 0 && errno == EINTR) {}
        fcntl(p[0], F_SETFL, O_NONBLOCK);
        n = read(p[0], b, sizeof b);
        if (n == 2 && b[0] == SUPERVISE_NO_EXEC) saved = b[1];
    }
    close(p[0]);
    supervise_pid = 0;
    if (pid < 0 || (n == 2 && b[0] == SUPERVISE_NO_EXEC)) return supervise_alone(saved);
    *rc = supervise_verdict(argv[1], st, n, b);
    return 1;
}

void supervise_done(int fd, int rc)
{
    if (fd < 0) return;
    unsigned char b = (unsigned char)rc;
    ssize_t w = write(fd, &b, 1);
    (void)w;
    close(fd);
}

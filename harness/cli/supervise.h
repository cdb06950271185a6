/* supervise.h: a command that runs method code in this process runs as a
 * worker process, and the process the caller started only waits for it,
 * so that a worker which ends without saying it finished can never pass
 * for a success.
 *
 * A plugin loaded in-process can end the process past every handler
 * (_exit, _Exit, the exit_group system call).  So for the commands marked
 * in the command table (eval, sweep, methods) main calls supervise_start:
 * it starts the program again (/proc/self/exe, same arguments) with the
 * write end of a pipe named in REVISIT_WORKER_FD; the worker runs the
 * command and, as its last act, writes its exit code there
 * (supervise_done).  The first process then exits:
 *
 *     worker wrote code C                      C
 *     worker ended with status S != 0, silent  S (the worker said why)
 *     worker ended with status 0, silent       2, with a message
 *     worker died of signal G                  of signal G too
 *
 * Signals another process sends to the first process (kill, timeout) are
 * passed on to the worker; those from the terminal reach both already.
 * The worker dies with the first process (PR_SET_PDEATHSIG), so a kill -9
 * stops the run as before.  Not thread-safe: call before any thread starts.
 *
 *     int fd, rc;
 *     if (supervise_start(argv, &fd, &rc)) return rc;   // the first process: done
 *     rc = run_the_command(...);                        // the worker (or unsupervised)
 *     supervise_done(fd, rc);
 */
#ifndef RV_SUPERVISE_H
#define RV_SUPERVISE_H

/* The environment variable that names the worker's end of the pipe. */
#define SUPERVISE_ENV "REVISIT_WORKER_FD"

/* 1: this was the first process, the worker has ended, *rc is the exit
 * code to return.  0: go on and run the command here; *fd is the pipe to
 * report to (-1 when none: a worker could not be started, which is said on
 * stderr, and the command runs unsupervised).  Cannot fail otherwise. */
int supervise_start(char **argv, int *fd, int *rc);
/* Report rc as the command's exit code to the first process (fd -1: nothing). */
void supervise_done(int fd, int rc);

#endif

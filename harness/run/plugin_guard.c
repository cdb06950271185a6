/* plugin_guard.c: name the in-process method when the process ends under it.
 *
 * While a plugin loaded into this process is open, its name sits in a slot
 * of a small process-wide table. Two checks read it:
 *   - an exit handler: a plugin that calls exit() (even exit(0)) ends the
 *     process before any result is written; the handler prints the methods
 *     that were open and turns the status into 2, so no caller takes it for
 *     success;
 *   - fatal-signal handlers (SEGV, BUS, FPE, ILL, ABRT): print the same
 *     names, then die of the signal.
 * Process-wide by nature (an exit or signal handler takes no context); the
 * table holds names only and is never part of any result.
 */
#include "harness/run/plugin_host.h"

#include <pthread.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#define PLUGIN_GUARD_SLOTS 64

static char plugin_guard_text[PLUGIN_GUARD_SLOTS][4200];
static volatile sig_atomic_t plugin_guard_len[PLUGIN_GUARD_SLOTS];
static pthread_mutex_t plugin_guard_lock = PTHREAD_MUTEX_INITIALIZER;
static pthread_once_t plugin_guard_once = PTHREAD_ONCE_INIT;

/* write(2) of a NUL-terminated text; async-signal-safe. */
static void plugin_guard_say(const char *s)
{
    ssize_t w = write(2, s, strlen(s));
    (void)w;
}

/* "method 'A' (PATH), method 'B' (PATH)" of the open slots; async-signal-safe. */
static int plugin_guard_names(void)
{
    int n = 0;
    for (int k = 0; k < PLUGIN_GUARD_SLOTS; k++) {
        if (plugin_guard_len[k] <= 0) continue;
        if (n++) plugin_guard_say(", ");
        ssize_t w = write(2, plugin_guard_text[k], (size_t)plugin_guard_len[k]);
        (void)w;
    }
    return n;
}

static void plugin_guard_atexit(void)
{
    int any = 0;
    for (int k = 0; k < PLUGIN_GUARD_SLOTS && !any; k++) any = plugin_guard_len[k] > 0;
    if (!any) return;
    plugin_guard_say("revisit: ");
    plugin_guard_names();
    plugin_guard_say(" ended the process (exit) while it was running; the run did not finish and no "
                     "result was written for it\n");
    _exit(2);
}

static void plugin_guard_signal(int sig)
{
    static const struct { int sig; const char *name; } names[] = {
        {SIGSEGV, "SIGSEGV"}, {SIGBUS, "SIGBUS"}, {SIGFPE, "SIGFPE"}, {SIGILL, "SIGILL"}, {SIGABRT, "SIGABRT"}};
    const char *name = "a fatal signal";
    for (size_t k = 0; k < sizeof names / sizeof *names; k++) if (names[k].sig == sig) name = names[k].name;
    plugin_guard_say("revisit: ");
    if (!plugin_guard_names()) plugin_guard_say("the process");
    plugin_guard_say(" crashed with a fatal signal (");
    plugin_guard_say(name);
    plugin_guard_say(") while running; the run stopped and nothing half-written was kept\n");
    signal(sig, SIG_DFL);
    raise(sig);
}

static void plugin_guard_install_exit(void)
{
    atexit(plugin_guard_atexit);
}

int plugin_guard_enter(const char *name, const char *path)
{
    pthread_once(&plugin_guard_once, plugin_guard_install_exit);
    pthread_mutex_lock(&plugin_guard_lock);
    int slot = 0;
    for (int k = 0; k < PLUGIN_GUARD_SLOTS && !slot; k++) {
        if (plugin_guard_len[k] > 0) continue;
        int n = snprintf(plugin_guard_text[k], sizeof plugin_guard_text[k], "method '%s' (%s)", name, path);
        if (n < 0) break;
        if (n >= (int)sizeof plugin_guard_text[k]) n = (int)sizeof plugin_guard_text[k] - 1;  /* names are bounded */
        plugin_guard_len[k] = n;
        slot = k + 1;
    }
    pthread_mutex_unlock(&plugin_guard_lock);
    return slot;
}

void plugin_guard_leave(int slot)
{
    if (slot <= 0 || slot > PLUGIN_GUARD_SLOTS) return;
    pthread_mutex_lock(&plugin_guard_lock);
    plugin_guard_len[slot - 1] = 0;
    pthread_mutex_unlock(&plugin_guard_lock);
}

void plugin_crash_notice(void)
{
    static const int sigs[] = {SIGSEGV, SIGBUS, SIGFPE, SIGILL, SIGABRT};
    for (size_t k = 0; k < sizeof sigs / sizeof *sigs; k++) {
        struct sigaction sa;
        memset(&sa, 0, sizeof sa);
        sa.sa_handler = plugin_guard_signal;
        sigemptyset(&sa.sa_mask);
        sigaction(sigs[k], &sa, NULL);
    }
}

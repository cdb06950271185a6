/* external.h: descriptor methods as separate programs, in any language.
 *
 * The host starts the program with its settings as arguments ("key=value"),
 * connected by one socket pair as its stdin and stdout (stderr is left to
 * the terminal), and speaks the binary protocol documented byte by byte in
 * DEVELOPERS.md "External program protocol".  All integers and floats are
 * little-endian.
 *
 *   program -> host  hello      "RVH1" u32 dim, u32 distance (0 L2, 1 cosine),
 *                               u32 name_len, name bytes
 *   host -> program  scan       "RVS1" u32 index, f64 stamp, u32 n, n x 4 f32 (x y z i)
 *   program -> host  descriptor "RVD1" u32 index, u32 count, count x f32
 *                 or error      "RVE1" u32 len, len bytes of message
 *   host closes the socket at the end; the program exits 0.
 *
 * The hello must come within hello_timeout_s (a program may take a while to
 * start), each answer within timeout_s; a
 * program that exits, hangs or answers garbage is stopped and the error
 * names it, the scan, and what was wrong.
 *
 *     struct external *x;
 *     if (external_start(&x, "./range_height.py", args, nargs, 10, e)) return -1;
 *     if (external_describe(x, &scan, desc, e)) ...
 *     external_stop(x);
 *
 * One program answers one scan at a time: not thread-safe.
 */
#ifndef RV_EXTERNAL_H
#define RV_EXTERNAL_H

#include <stdint.h>
#include <sys/types.h>
#include "harness/base/err.h"
#include "harness/revisit_plugin.h"

#define EXTERNAL_MAX_DIM (1u << 22)
#define EXTERNAL_HELLO_S 10.0   /* default wait for the hello */
#define EXTERNAL_SCAN_S 10.0    /* default wait for each answer */

struct external {
    pid_t pid;
    int fd;                 /* host end of the socket pair */
    char prog[4096];
    char name[64];          /* from the hello */
    uint32_t dim;
    enum rv_distance distance;  /* RV_DIST_L2 or RV_DIST_COSINE */
    double timeout_s;       /* per scan */
    double hello_timeout_s; /* for the hello */
    size_t mem_bytes;       /* RLIMIT_AS of the program, 0 = none */
};

/* What a program may take: the waits, and the address space it may use
 * (setrlimit RLIMIT_AS before exec; 0 = no limit). The program runs in a
 * process group of its own, ended whole (SIGKILL) when it is stopped, so
 * children it starts do not outlive it. */
struct external_limits {
    double hello_s;         /* wait for the hello (0: EXTERNAL_HELLO_S) */
    double scan_s;          /* wait for each answer (0: EXTERNAL_SCAN_S) */
    size_t mem_bytes;
};

/* Start prog under lim, read and check its hello.  0, or -1 with e set
 * (nothing left running). */
int external_start_limits(struct external **x, const char *prog, const char *const *args, int nargs,
                          const struct external_limits *lim, struct err *e);

/* Start prog, read and check its hello, no memory limit.  0, or -1 with e
 * set (nothing left running). */
int external_start(struct external **x, const char *prog, const char *const *args, int nargs,
                   double timeout_s, struct err *e);
/* The same with the hello wait given apart (external_start waits the larger
 * of timeout_s and EXTERNAL_HELLO_S for it). */
int external_start_waits(struct external **x, const char *prog, const char *const *args, int nargs,
                         double hello_timeout_s, double timeout_s, struct err *e);

/* Send one scan, read dim floats into desc.  0 or -1 (the program is then
 * stopped; later calls fail at once). */
int external_describe(struct external *x, const struct rv_scan *s, float *desc, struct err *e);

/* Close the socket, wait half a second for the exit, then kill; the
 * program's process group is ended either way.  Accepts NULL. */
void external_stop(struct external *x);

#endif

/* test_poses_refusals.c: layout detection and every refusal of the pose-file
 * reader and writer, one file each, checking file, line and expectation. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "harness/io/poses_io.h"
#include "tests/check.h"

static void put(const char *path, const char *text)
{
    FILE *f = fopen(path, "w");
    fputs(text, f);
    fclose(f);
}

struct bad { const char *name, *text; enum poses_layout layout; const char *times, *frag; };

#define ROW12 "1 0 0 5 0 1 0 6 0 0 1 7\n"

static const struct bad cases[] = {
    {"h.csv", "t,x,y,z,qx,qy,qz\n0,0,0,0,0,0,0\n", POSES_AUTO, NULL,
     "h.csv:1: header lacks column 'qw', expected t,x,y,z,qx,qy,qz,qw in any order"},
    {"d.csv", "t,x,y,z,qx,qy,qz,qw,x\n", POSES_CSV, NULL, "d.csv:1: column 'x' appears twice in the header"},
    {"n.csv", "t,x,y,z,qx,qy,qz,qw\n0,0,0,0,abc,0,0,1\n", POSES_AUTO, NULL, "n.csv:2: qx 'abc' is not a number"},
    {"n.txt", "0 0 0 0 0 0 0 1\n1 0 0 0 0 zero 0 1\n", POSES_AUTO, NULL, "n.txt:2: value 'zero' is not a number"},
    {"e.txt", "# only a comment\n\n", POSES_AUTO, NULL, "e.txt: no poses in the file"},
    {"f.txt", "0 1 2 3 4\n", POSES_AUTO, NULL, "f.txt:1: cannot tell the pose layout, expected a CSV header"},
    {"r.txt", ROW12 "1 1 0 5 0 1 0 6 0 0 1 7\n", POSES_MATRIX, NULL,
     "r.txt:2: rotation part is not a rotation (|R^T R - I| = 1, det = 1), expected orthonormal with det +1"},
    {"m.txt", ROW12 ROW12 ROW12, POSES_AUTO, "t2.txt", "m.txt:3: more rows than the 2 times in the times file"},
    {"l.txt", ROW12, POSES_AUTO, "t2.txt", "l.txt: 1 rows but the times file has 2 times, expected one time per row"},
    {"x.txt", "0 0 0 0 0 0 0 1\n", POSES_TEXT, "t2.txt", "t2.txt: a times file goes with the matrix layout only"},
    {"v.txt", ROW12, POSES_MATRIX, "tv.txt", "tv.txt:2: found 2 values, expected one time in seconds"},
    {"w.txt", ROW12, POSES_MATRIX, "tw.txt", "tw.txt:1: 'inf' is not a finite number, expected one time in seconds"},
    {"u.txt", ROW12, POSES_MATRIX, "tu.txt", "tu.txt:3: time 1 is not after the previous time 2, expected strictly increasing"},
    {"nf.txt", "0 nan 0 0 0 0 0 1\n", POSES_TEXT, NULL, "nf.txt:1: position is not finite"},
    {"gone.txt", NULL, POSES_AUTO, NULL, "gone.txt: cannot open"},
};

static void test_refusals(void)
{
    put("t2.txt", "0.5\n1.5\n");
    put("tv.txt", "1\n2 3\n");
    put("tw.txt", "inf\n");
    put("tu.txt", "0\n2\n1\n");
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        const struct bad *b = &cases[k];
        if (b->text) put(b->name, b->text);
        struct poses ps;
        struct err e;
        e.msg[0] = 0;
        char desc[160];
        snprintf(desc, sizeof desc, "%s is refused", b->name);
        CHECK(poses_read(b->name, b->layout, b->times, &ps, &e) == -1 && ps.n == 0 && !ps.v, desc);
        snprintf(desc, sizeof desc, "%s: the message names the file and the fault", b->name);
        CHECK_MSG(e.msg, b->frag, desc);
    }
}

static void test_detect_and_write(void)
{
    struct err e;
    struct poses ps;
    put("a.csv", "# comment\nqw, qz,qy ,qx,z,y,x,t,speed\n1,0,0,0,3,2,1,0.5,9\n");
    CHECK(!poses_read("a.csv", POSES_AUTO, NULL, &ps, &e) && ps.layout == POSES_CSV && ps.n == 1 &&
          ps.v[0].p[0] == 1 && ps.v[0].p[2] == 3 && ps.v[0].t == 0.5, "a CSV header in any order with spaces and extra columns");
    poses_free(&ps);
    put("b.txt", ROW12 ROW12);
    CHECK(!poses_read("b.txt", POSES_AUTO, NULL, &ps, &e) && ps.layout == POSES_MATRIX && ps.n == 2 &&
          ps.v[1].t == 1 && ps.v[1].p[1] == 6, "12 numbers a line is the matrix layout; no times file gives 0, 1, ...");
    CHECK(poses_write("o.txt", POSES_AUTO, ps.v, ps.n, NULL, &e) == -1, "writing needs a layout");
    CHECK_MSG(e.msg, "o.txt: no layout named for writing", "the message says so");
    CHECK(poses_write("o.txt", POSES_MATRIX, ps.v, ps.n, NULL, &e) == -1, "the matrix layout needs a times file");
    CHECK_MSG(e.msg, "o.txt: a times file goes with the matrix layout", "the message says so");
    CHECK(poses_write("o.txt", POSES_CSV, ps.v, ps.n, "o.times", &e) == -1, "only the matrix layout takes one");
    poses_free(&ps);
    enum poses_layout l;
    CHECK(poses_layout_parse("tum", &l, &e) == -1, "an unknown layout word is refused");
    CHECK_MSG(e.msg, "unknown pose layout 'tum', expected auto, csv, text or matrix", "the message lists the words");
}

/* A FIFO as the pose file or the times file is refused at once, never waited on. */
static void test_fifo(void)
{
    unlink("pipe.csv");
    CHECK(mkfifo("pipe.csv", 0600) == 0, "a FIFO can be made for the test");
    put("ok.txt", ROW12);
    alarm(20);  /* a reader that blocks on the FIFO dies here and the test fails */
    struct poses ps;
    struct err e;
    e.msg[0] = 0;
    CHECK(poses_read("pipe.csv", POSES_AUTO, NULL, &ps, &e) == -1, "a FIFO as the pose file is refused");
    CHECK_MSG(e.msg, "pipe.csv: not a regular file (a FIFO)", "the message names the file and its kind");
    e.msg[0] = 0;
    CHECK(poses_read("ok.txt", POSES_MATRIX, "pipe.csv", &ps, &e) == -1, "a FIFO as the times file is refused");
    CHECK_MSG(e.msg, "pipe.csv: not a regular file (a FIFO)", "the message names the times file");
    alarm(0);
    unlink("pipe.csv");
}

/* n poses at times t0 + k * step (file units) */
static void timed(struct poses *ps, size_t n, double t0, double step)
{
    ps->n = n;
    ps->layout = POSES_TEXT;
    ps->v = calloc(n, sizeof *ps->v);
    for (size_t k = 0; k < n; k++) pose_identity(&ps->v[k], t0 + (double)k * step);
}

/* Pose times in s, ms, us or ns: a spinning sensor at 10 Hz gives one pose
 * every 0.1 s (common practice, no source); the unit is told by the rate the
 * median step implies and by the magnitude (an epoch in ns is about 1.7e18). */
static void test_time_units(void)
{
    static const struct { double t0, step; enum poses_unit named, want; double t1_s; const char *what; } ok[] = {
        {0, 0.1, POSES_UNIT_AUTO, POSES_UNIT_S, 0.1, "10 Hz in seconds stays seconds"},
        {0, 100, POSES_UNIT_AUTO, POSES_UNIT_MS, 0.1, "10 Hz in ms is read as ms"},
        {0, 1e5, POSES_UNIT_AUTO, POSES_UNIT_US, 0.1, "10 Hz in us is read as us"},
        {0, 1e8, POSES_UNIT_AUTO, POSES_UNIT_NS, 0.1, "10 Hz in ns from 0 is read as ns"},
        {1.7e18, 1e8, POSES_UNIT_AUTO, POSES_UNIT_NS, 1.7e9 + 0.1, "10 Hz in epoch ns is read as ns"},
        {1.7e9, 0.1, POSES_UNIT_AUTO, POSES_UNIT_S, 1.7e9 + 0.1, "epoch seconds stay seconds"},
        {0, 1e8, POSES_UNIT_NS, POSES_UNIT_NS, 0.1, "a named unit is applied"},
    };
    for (size_t k = 0; k < sizeof ok / sizeof ok[0]; k++) {
        struct poses ps;
        struct err e;
        enum poses_unit used = POSES_UNIT_AUTO;
        timed(&ps, 50, ok[k].t0, ok[k].step);
        CHECK(!poses_apply_unit(&ps, ok[k].named, "p.txt", &used, &e) && used == ok[k].want, ok[k].what);
        CHECK_NEAR(ps.v[1].t, ok[k].t1_s, 1e-6 * ok[k].t1_s, ok[k].what);
        poses_free(&ps);
    }
    static const struct { double step; enum poses_unit named; const char *frag; } bad[] = {
        {1e-5, POSES_UNIT_AUTO, "p.txt: pose times have a median step of 1e-05 and reach 0.00049: in s that is "
                                "100000 Hz, expected a step of 0.001 to 10 s (0.1 to 1000 Hz)"},
        {0.1, POSES_UNIT_NS, "p.txt: pose times have a median step of 0.1 and reach 4.9: in ns that is 1e+10 Hz"},
        {100, POSES_UNIT_S, "p.txt: pose times have a median step of 100 and reach 4900: in s that is 0.01 Hz"},
    };
    for (size_t k = 0; k < sizeof bad / sizeof bad[0]; k++) {
        struct poses ps;
        struct err e;
        e.msg[0] = 0;
        enum poses_unit used = POSES_UNIT_AUTO;
        timed(&ps, 50, 0, bad[k].step);
        CHECK(poses_apply_unit(&ps, bad[k].named, "p.txt", &used, &e) == -1 && ps.v[1].t == bad[k].step,
              "an implausible rate is refused and the times are left alone");
        CHECK_MSG(e.msg, bad[k].frag, "the message gives the step, the rate and the expected range");
        poses_free(&ps);
    }
    enum poses_unit u;
    struct err e;
    CHECK(poses_unit_parse("days", &u, &e) == -1, "an unknown unit word is refused");
    CHECK_MSG(e.msg, "unknown time unit 'days', expected auto, s, ms, us or ns", "the message lists the words");
}

int main(void)
{
    test_time_units();
    test_refusals();
    test_fifo();
    test_detect_and_write();
    return check_done();
}

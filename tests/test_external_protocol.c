/* test_external_protocol.c: the Python example equals the C range-height
 * plugin bit for bit; a program that exits, hangs, or answers garbage gets
 * its clear error. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "harness/run/external.h"
#include "harness/run/plugin_host.h"
#include "tests/check.h"

/* Small programs that break the protocol in one way each. */
static void script(const char *name, const char *body)
{
    FILE *f = fopen(name, "w");
    fprintf(f, "#!/usr/bin/python3\nimport struct, sys, time\nout = sys.stdout.buffer\n"
               "def hello(dim=4):\n    out.write(b'RVH1' + struct.pack('<III', dim, 0, 4) + b'fake'); out.flush()\n%s",
            body);
    fclose(f);
    chmod(name, 0755);
}

/* Deterministic pseudo-random scan: ranges to 90 m, heights -5..7 m. */
static void make_scan(float *pts, size_t n, unsigned seed)
{
    unsigned s = seed * 2654435761u + 1;
    for (size_t k = 0; k < 4 * n; k++) {
        s = s * 1103515245u + 12345u;
        double u = (s >> 8) / 16777216.0;
        int c = (int)(k % 4);
        pts[k] = (float)(c < 2 ? (u - 0.5) * 130 : c == 2 ? u * 12 - 5 : u);
    }
}

static void test_same_as_plugin(const char *root)
{
    char prog[4096];
    snprintf(prog, sizeof prog, "%s/harness/external/range_height.py:range_bins=10,height_bins=6,z_min=-2", root);
    struct plugin c, py;
    struct err e = {{0}};
    int ok = plugin_open(&c, "range-height:range_bins=10,height_bins=6,z_min=-2", NULL, &e) == 0;
    CHECK(ok, "the C range-height plugin loads from REVISIT_PLUGIN_PATH");
    if (!ok) { fprintf(stderr, "%s\n", e.msg); return; }
    ok = plugin_open(&py, prog, NULL, &e) == 0;
    CHECK(ok, "the Python example starts and says hello");
    if (!ok) { fprintf(stderr, "%s\n", e.msg); plugin_close(&c); return; }
    CHECK(py.dim == c.dim && py.dim == 60 && py.distance == RV_DIST_L2, "same dimension and distance kind");
    static float pts[4 * 3000];
    float a[60], b[60];
    int same = 1;
    for (unsigned i = 0; i < 6; i++) {
        size_t n = i == 0 ? 0 : 500 * i;  /* scan 0 is empty */
        make_scan(pts, n, i);
        struct rv_scan s = {n, pts, NULL, NULL, 0.1 * i, i, 0};
        if (plugin_describe(&c, &s, a, NULL, &e) || plugin_describe(&py, &s, b, NULL, &e)) {
            fprintf(stderr, "%s\n", e.msg);
            same = 0;
            break;
        }
        same &= !memcmp(a, b, sizeof a);
    }
    /* Outside reference: an independent program in another language computing
     * the same published-by-us definition (harness/plugins/range-height). */
    CHECK(same, "Python and C give bit-identical descriptors on six scans, one empty");
    plugin_close(&py);
    plugin_close(&c);
}

/* hello: the wait for the hello; timeout: the wait for each answer */
static int try_prog(const char *name, double hello, double timeout, struct err *e)
{
    struct external *x;
    if (external_start_waits(&x, name, NULL, 0, hello, timeout, e)) return -1;
    float pts[8] = {1, 2, 3, 0, 4, 5, 6, 0}, d[4];
    struct rv_scan s = {2, pts, NULL, NULL, 0, 5, 0};
    int rc = external_describe(x, &s, d, e);
    external_stop(x);
    return rc;
}

static void test_failures(void)
{
    struct err e = {{0}};
    script("exits.py", "hello()\nsys.exit(3)\n");
    CHECK(try_prog("./exits.py", 20, 5, &e) == -1, "a program that exits is an error");
    CHECK_MSG(e.msg, "external method 'fake' (./exits.py): closed its output for scan 5; it exited with status 3",
              "the exit names program, scan and status");
    script("hangs.py", "hello()\ntime.sleep(30)\n");
    CHECK(try_prog("./hangs.py", 20, 0.3, &e) == -1, "a program that hangs is stopped");
    CHECK_MSG(e.msg, "no answer for scan 5 within 0.3 s (time-out); it was stopped", "the time-out is named");
    script("garbage.py", "hello()\nsys.stdin.buffer.read(52)\nout.write(b'hello world!!!'); out.flush(); time.sleep(1)\n");
    CHECK(try_prog("./garbage.py", 20, 5, &e) == -1, "garbage is an error");
    CHECK_MSG(e.msg, "answered garbage (expected a descriptor frame 'RVD1' for scan 5", "garbage is named");
    script("wrongdim.py", "hello()\nsys.stdin.buffer.read(52)\nout.write(b'RVD1' + struct.pack('<II3f', 5, 3, 1, 2, 3))\n"
                          "out.flush(); time.sleep(1)\n");
    CHECK(try_prog("./wrongdim.py", 20, 5, &e) == -1, "a wrong descriptor length is an error");
    CHECK_MSG(e.msg, "descriptor of 3 floats, expected 4 as its hello declared", "the length error gives both");
    script("refuses.py", "hello()\nsys.stdin.buffer.read(52)\nm = b'cannot read this scan'\n"
                         "out.write(b'RVE1' + struct.pack('<I', len(m)) + m); out.flush()\n");
    CHECK(try_prog("./refuses.py", 20, 5, &e) == -1, "an error frame is an error");
    CHECK_MSG(e.msg, "external method 'fake' on scan 5: cannot read this scan", "the program's message is passed on");
    script("nohello.py", "out.write(b'HELO' + bytes(12)); out.flush(); time.sleep(1)\n");
    CHECK(try_prog("./nohello.py", 20, 5, &e) == -1, "a bad hello is an error");
    CHECK_MSG(e.msg, "bad hello (expected 'RVH1'", "the bad hello is named");
    script("silent.py", "time.sleep(30)\n");
    CHECK(try_prog("./silent.py", 0.3, 20, &e) == -1, "no hello within the time-out is an error");
    CHECK_MSG(e.msg, "no answer before its hello within 0.3 s (time-out)", "the missing hello is named");
    CHECK(try_prog("./absent.py", 20, 5, &e) == -1, "a missing program is an error");
    CHECK_MSG(e.msg, "external method ./absent.py: not an executable program", "the missing program is named");
}

int main(void)
{
    const char *root = getenv("REVISIT_ROOT");
    test_same_as_plugin(root ? root : ".");
    test_failures();
    return check_done();
}

/* test_external_protocol.c: the Python example equals the C range-height
 * plugin bit for bit; a program that exits, hangs, or answers garbage gets
 * its clear error. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <signal.h>
#include <sys/stat.h>
#include <unistd.h>

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

/* One scan through a program started under lim. */
static int try_limits(const char *name, const struct external_limits *lim, struct err *e)
{
    struct external *x;
    if (external_start_limits(&x, name, NULL, 0, lim, e)) return -1;
    float pts[8] = {1, 2, 3, 0, 4, 5, 6, 0}, d[4];
    struct rv_scan s = {2, pts, NULL, NULL, 0, 5, 0};
    int rc = external_describe(x, &s, d, e);
    external_stop(x);
    return rc;
}

/* 1 when process pid is gone or a zombie within about 3 s. */
static int gone(long pid)
{
    for (int k = 0; k < 300; k++) {
        char path[64], st[512] = "";
        snprintf(path, sizeof path, "/proc/%ld/stat", pid);
        FILE *f = fopen(path, "r");
        if (!f) return 1;
        size_t n = fread(st, 1, sizeof st - 1, f);
        fclose(f);
        st[n] = 0;
        const char *close_paren = strrchr(st, ')');
        if (close_paren && close_paren[1] == ' ' && close_paren[2] == 'Z') return 1;
        usleep(10000);
    }
    return 0;
}

#define ANSWER "sys.stdin.buffer.read(52)\nout.write(b'RVD1' + struct.pack('<II4f', 5, 4, 1, 2, 3, 4)); out.flush()\n" \
               "sys.stdin.buffer.read()\n"

/* The limits a program runs under: memory, the answer wait, its children. */
static void test_limits(void)
{
    struct err e = {{0}};
    /* a 1 GiB buffer, touched page by page, against a 256 MiB address space */
    script("hog.py", "hello()\nsys.stderr = open('/dev/null', 'w')\nb = bytearray(1 << 30)\n"
                     "for i in range(0, len(b), 4096): b[i] = 1\n" ANSWER);
    struct external_limits lim = {5, 20, (size_t)256 << 20};
    CHECK(try_limits("./hog.py", &lim, &e) == -1, "a program over its memory limit fails");
    CHECK_MSG(e.msg, "external method 'fake' (./hog.py): closed its output for scan 5; it exited with status 1",
              "the failure names the program and its exit");
    lim.mem_bytes = 0;
    CHECK(try_limits("./hog.py", &lim, &e) == 0, "the same program without the limit answers (the limit made the difference)");
    script("slow.py", "hello()\ntime.sleep(1.5)\n" ANSWER);
    struct external_limits quick = {5, 0.5, 0};
    CHECK(try_limits("./slow.py", &quick, &e) == -1, "a program slower than the answer wait is stopped");
    CHECK_MSG(e.msg, "no answer for scan 5 within 0.5 s (time-out)", "the wait named is the one given");
    /* a child the program starts ends with the program's process group */
    script("forks.py", "import subprocess\np = subprocess.Popen(['sleep', '300'])\n"
                       "open('forks.pid', 'w').write(str(p.pid))\nhello()\n" ANSWER);
    struct external_limits plain = {5, 5, 0};
    unlink("forks.pid");
    CHECK(try_limits("./forks.py", &plain, &e) == 0, "a program that starts a child answers");
    FILE *f = fopen("forks.pid", "r");
    long pid = 0;
    CHECK(f && fscanf(f, "%ld", &pid) == 1 && pid > 0, "the child's pid was written");
    if (f) fclose(f);
    CHECK(pid > 0 && gone(pid), "the program's child does not outlive the program");
    if (pid > 0) kill((pid_t)pid, SIGKILL);
}

/* An error frame longer than the message the host keeps, or cut short. */
static void test_error_frames(void)
{
    struct err e = {{0}};
    script("longerr.py", "hello()\nsys.stdin.buffer.read(52)\nm = b'x' * 300\n"
                         "out.write(b'RVE1' + struct.pack('<I', len(m)) + m); out.flush()\n");
    CHECK(try_prog("./longerr.py", 20, 5, &e) == -1, "a long error frame is an error");
    CHECK_MSG(e.msg, "on scan 5: xxxxxxxxxx", "its first bytes are the message");
    CHECK_MSG(e.msg, "[error frame of 300 bytes, the first 255 shown]", "the message says it was cut and where");
    script("cuterr.py", "hello()\nsys.stdin.buffer.read(52)\nm = b'cannot read this scan'\n"
                        "out.write(b'RVE1' + struct.pack('<I', 100000) + m); out.flush()\n");
    CHECK(try_prog("./cuterr.py", 20, 5, &e) == -1, "an error frame cut short is an error");
    CHECK_MSG(e.msg, "error frame of 100000 bytes cut short after 21: cannot read this scan",
              "what arrived is shown, with the length it claimed");
}

/* Setting values of an external program may hold '/' and ':'. */
static void test_setting_paths(void)
{
    script("args.py", "n = ','.join(sys.argv[1:]).encode()\n"
                      "out.write(b'RVH1' + struct.pack('<III', 4, 0, len(n)) + n); out.flush()\nsys.stdin.buffer.read()\n");
    struct plugin p;
    struct err e = {{0}};
    int ok = plugin_open(&p, "./args.py:path=/tmp/a:b,n=2", NULL, &e) == 0;
    CHECK(ok, "a setting value with '/' and ':' starts the program");
    if (!ok) fprintf(stderr, "%s\n", e.msg);
    CHECK(ok && !strcmp(p.name, "path=/tmp/a:b,n=2"), "the program gets each setting whole as an argument");
    if (ok) plugin_close(&p);
}

int main(void)
{
    const char *root = getenv("REVISIT_ROOT");
    test_same_as_plugin(root ? root : ".");
    test_failures();
    test_limits();
    test_error_frames();
    test_setting_paths();
    return check_done();
}

/* test_plugin_abi.c: plugins built out of the tree from the installed header
 * alone load and run; each broken plugin gets its own clear error. */
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/wait.h>
#include <unistd.h>

#include "harness/run/plugin_host.h"
#include "harness/run/retrieval.h"
#include "tests/check.h"

/* One plugin source; -D flags make the broken variants. */
static const char plugin_src[] =
    "#include <math.h>\n#include <stddef.h>\n#include <stdio.h>\n#include <stdlib.h>\n#include <unistd.h>\n"
    "#include \"revisit_plugin.h\"\n"
    "static const struct rv_setting set[] = {\n"
    "#ifdef BADSCHEMA\n  {\"bins\", RV_SET_INT, 99, 1, 64, NULL, \"bins\"},\n#else\n"
    "  {\"bins\", RV_SET_INT, 4, 1, 64, NULL, \"bins\"},\n#endif\n"
    "  {\"scale\", RV_SET_FLOAT, 1, 0, 10, NULL, \"scale\"},\n"
    "  {\"mode\", RV_SET_CHOICE, 0, 0, 1, \"sum|max\", \"mode\"},\n"
    "  {\"flip\", RV_SET_BOOL, 0, 0, 1, NULL, \"flip\"}};\n"
    "struct st { int bins; double scale; };\n"
    "static int mk(const double *v, void **inst, uint32_t *dim, uint32_t *kd, char *m, size_t l) {\n"
    "  (void)m; (void)l; struct st *s = malloc(sizeof *s); s->bins = (int)v[0]; s->scale = v[1];\n"
    "  *inst = s; *dim = (uint32_t)s->bins; *kd = 0;\n"
    "#ifdef ZERODIM\n  *dim = 0;\n#endif\n"
    "  return RV_OK; }\n"
    "static int run(void *inst, const struct rv_scan *sc, float *d, float *k, char *m, size_t l) {\n"
    "  (void)k; (void)m; (void)l; struct st *s = inst; int n = s->bins;\n"
    "#ifdef WRONGDIM\n  n += 1;\n#endif\n"
    "  for (int b = 0; b < n; b++) d[b] = (float)(s->scale * (double)sc->n * (b + 1));\n"
    "#ifdef NANOUT\n  d[1] = NAN;\n#endif\n"
    "#ifdef CRASH\n  if (sc->index == 3) { volatile int *p = NULL; *p = 1; }\n#endif\n"
    "#ifdef EXIT0\n  if (sc->index == 3) exit(0);\n#endif\n"
    "#ifdef ABORT\n  if (sc->index == 3) abort();\n#endif\n"
    "#ifdef SLOW\n  usleep(30000);\n#endif\n"
    "#ifdef FAILDESC\n  snprintf(m, l, \"cannot use scan %u\", sc->index); return RV_ERR_INPUT;\n#endif\n"
    "  return RV_OK; }\n"
    "static void rm(void *inst) { free(inst); }\n"
    "#ifdef CUSTOM\n"
    "static double dist(const void *inst, const float *a, const float *b, int32_t *aux) {\n"
    "  (void)aux; const struct st *s = inst; double t = 0;\n"
    "  for (int i = 0; i < s->bins; i++) t += fabs((double)a[i] - b[i]);\n"
    "#ifdef NEGDIST\n  if (t > 0) return -0.5;\n#endif\n"
    "  return t; }\n"
    "#ifdef BATCH\n"
    "static int many(const void *inst, const float *a, const float *const *b, size_t n, double *out, int32_t *aux,\n"
    "                char *m, size_t l) {\n"
    "  (void)aux; (void)m; (void)l;  /* marked: 1000 more than dist, so a test sees which ran */\n"
    "  for (size_t t = 0; t < n; t++) out[t] = dist(inst, a, b[t], NULL) + 1000;\n"
    "  return RV_OK; }\n"
    "#else\n#define many NULL\n#endif\n#endif\n"
    "static const struct rv_method m = {\n"
    "#ifdef BADABI\n  99,\n#else\n  RV_ABI_VERSION,\n#endif\n"
    "#ifdef SMALL\n  8,\n#elif defined(OLDSIZE)\n  offsetof(struct rv_method, distance_batch),\n#else\n  sizeof m,\n#endif\n"
    "  \"outside\", \"1.0\", \"test plugin\", set, 4,\n"
    "#if defined(NOCUSTOMFN) || defined(CUSTOM)\n  RV_DIST_CUSTOM,\n#else\n  RV_DIST_L2,\n#endif\n"
    "#ifdef CUSTOM\n  RV_FLAG_THREAD_SAFE, mk, run, rm, dist, NULL, many};\n"
    "#else\n  RV_FLAG_THREAD_SAFE, mk, run, rm, NULL, NULL};\n#endif\n"
    "#ifdef NOENTRY\nRV_EXPORT const struct rv_method *other_name(void) { return &m; }\n"
    "#else\nRV_EXPORT const struct rv_method *rv_method_entry(void) { return &m; }\n#endif\n";

/* Build variant NAME.so with the given -D flag (or "") in the cwd. */
static int build(const char *name, const char *flag)
{
    char cmd[1024];
    snprintf(cmd, sizeof cmd, "cc -std=c11 -Wall -Werror -O1 -D_DEFAULT_SOURCE -shared -fPIC -Iinclude/revisit %s -o %s.so outside.c -lm",
             flag, name);
    return system(cmd);
}

static void setup(void)
{
    const char *root = getenv("REVISIT_ROOT");
    char cmd[1024];
    /* "installed header": only revisit_plugin.h, copied out of the tree */
    snprintf(cmd, sizeof cmd, "mkdir -p include/revisit && cp %s/harness/revisit_plugin.h include/revisit/",
             root ? root : ".");
    CHECK(system(cmd) == 0, "the public header copies out of the tree");
    FILE *f = fopen("outside.c", "w");
    fputs(plugin_src, f);
    fclose(f);
    CHECK(build("good", "") == 0, "a plugin compiles from the public header alone");
    CHECK(build("badabi", "-DBADABI") == 0, "the wrong-ABI variant compiles");
    CHECK(build("noentry", "-DNOENTRY") == 0, "the no-entry variant compiles");
    CHECK(build("nanout", "-DNANOUT") == 0, "the NaN variant compiles");
    CHECK(build("wrongdim", "-DWRONGDIM") == 0, "the wrong-dimension variant compiles");
    CHECK(build("crash", "-DCRASH") == 0, "the crashing variant compiles");
    CHECK(build("slow", "-DSLOW") == 0, "the slow variant compiles");
    CHECK(build("exit0", "-DEXIT0") == 0, "the exiting variant compiles");
    CHECK(build("abort", "-DABORT") == 0, "the aborting variant compiles");
    static const char *const more[][2] = {{"badschema", "-DBADSCHEMA"}, {"zerodim", "-DZERODIM"},
        {"faildesc", "-DFAILDESC"}, {"small", "-DSMALL"}, {"nocustomfn", "-DNOCUSTOMFN"},
        {"custom", "-DCUSTOM"}, {"batch", "-DCUSTOM -DBATCH"}, {"oldbatch", "-DCUSTOM -DBATCH -DOLDSIZE"},
        {"negdist", "-DCUSTOM -DNEGDIST"}};
    for (size_t k = 0; k < sizeof more / sizeof *more; k++)
        CHECK(build(more[k][0], more[k][1]) == 0, "a broken variant compiles");
}

static int describe_once(struct plugin *p, uint32_t index, float *d, struct err *e)
{
    float pts[8] = {1, 2, 3, 0, 4, 5, 6, 0};
    struct rv_scan s = {2, pts, NULL, NULL, 0.0, index, 0};
    return plugin_describe(p, &s, d, NULL, e);
}

static void test_good(void)
{
    struct plugin p;
    struct err e = {{0}};
    float d[16];
    CHECK(plugin_open(&p, "./good.so", NULL, &e) == 0, "the out-of-tree plugin loads by path");
    CHECK(p.dim == 4 && !strcmp(p.name, "outside"), "its table gives name and dimension");
    CHECK(!strcmp(p.label, "outside:bins=4,scale=1,mode=sum,flip=false"), "the label spells out every default");
    CHECK(describe_once(&p, 0, d, &e) == 0 && d[0] == 2 && d[3] == 8, "it describes a scan");
    plugin_close(&p);
    CHECK(plugin_open(&p, "good:bins=6,scale=0.5,mode=max,flip=true", ".", &e) == 0,
          "found by name on --plugin-path, settings applied");
    CHECK(p.dim == 6 && !strcmp(p.label, "outside:bins=6,scale=0.5,mode=max,flip=true"), "settings reach create");
    CHECK(describe_once(&p, 0, d, &e) == 0 && d[5] == 6, "a setting changes the output");
    plugin_close(&p);
    CHECK(plugin_open(&p, "good:bins=100", ".", &e) == -1, "a setting out of range is refused");
    CHECK_MSG(e.msg, "setting 'bins' is 100, expected a value from 1 to 64", "the range error names key and range");
    CHECK(plugin_open(&p, "good:bins=6,scale=0.5,bins=8", ".", &e) == -1, "a setting given twice is refused");
    CHECK_MSG(e.msg, "method 'outside': setting 'bins' is given twice, expected each at most once",
              "the message names the repeated setting");
    CHECK(plugin_open(&p, "good:bisn=3", ".", &e) == -1, "an unknown setting is refused");
    CHECK_MSG(e.msg, "has no setting 'bisn', expected one of: bins, scale, mode, flip", "unknown key lists keys");
    CHECK(plugin_open(&p, "good:mode=avg", ".", &e) == -1, "an unknown choice is refused");
    CHECK_MSG(e.msg, "expects one of sum|max, got 'avg'", "choice error lists the words");
    CHECK(plugin_open(&p, "good:bins=2.5", ".", &e) == -1, "a fraction for a whole number is refused");
    CHECK_MSG(e.msg, "expects a whole number, got '2.5'", "integer error");
    CHECK(plugin_open(&p, "good:flip=maybe", ".", &e) == -1, "a bad boolean is refused");
    CHECK_MSG(e.msg, "expects true or false, got 'maybe'", "boolean error");
    CHECK(plugin_open(&p, "nosuch", ".", &e) == -1, "a missing method is refused");
    CHECK_MSG(e.msg, "method 'nosuch' not found: no nosuch.so in the plugin search path", "missing names the path");
    struct plugin_info *list;
    size_t n;
    CHECK(plugin_list(".", &list, &n, &e) == 0, "listing the search path works");
    int seen = 0;
    for (size_t k = 0; k < n; k++) seen += !strcmp(list[k].name, "good");
    CHECK(seen == 1, "the listing holds the plugin once");
    free(list);
}

static void test_broken(void)
{
    struct plugin p;
    struct err e = {{0}};
    float d[16];
    CHECK(plugin_open(&p, "./badabi.so", NULL, &e) == -1, "a wrong ABI version is refused");
    CHECK_MSG(e.msg, "plugin ABI version 99, expected 1", "the ABI error gives both versions");
    CHECK(plugin_open(&p, "./noentry.so", NULL, &e) == -1, "a plugin without the entry function is refused");
    CHECK_MSG(e.msg, "no entry function 'rv_method_entry'", "the missing entry is named");
    CHECK(plugin_open(&p, "./nanout.so", NULL, &e) == 0, "the NaN plugin loads");
    CHECK(describe_once(&p, 7, d, &e) == -1, "a NaN in the output is refused");
    CHECK_MSG(e.msg, "method 'outside' on scan 7: descriptor entry 1 is nan, expected a finite number",
              "the NaN error names method, scan and entry");
    plugin_close(&p);
    CHECK(plugin_open(&p, "./wrongdim.so", NULL, &e) == 0, "the wrong-dimension plugin loads");
    CHECK(describe_once(&p, 2, d, &e) == -1, "writing past the declared dimension is refused");
    CHECK_MSG(e.msg, "method 'outside' on scan 2: wrote past its declared dimension 4",
              "the dimension error names method and scan");
    plugin_close(&p);
    int ok = plugin_open(&p, "./slow.so", NULL, &e) == 0;
    CHECK(ok, "the slow plugin loads");
    p.time_limit_s = 0.005;
    CHECK(ok && describe_once(&p, 1, d, &e) == -1, "a scan over the time limit is refused");
    CHECK_MSG(e.msg, "expected at most 0.005 s per scan", "the time error gives the limit");
    plugin_close(&p);
    static const char *const refused[][2] = {
        {"./badschema.so", "method 'outside' has a bad setting 0 (key, type, default within range)"},
        {"./zerodim.so", "method 'outside': declared dimension 0 (key 0), expected 1 to"},
        {"./small.so", "method table of 8 bytes, expected at least"},
        {"./nocustomfn.so", "method 'outside' declares a custom distance but gives no distance function"},
        {"./absent.so", "method './absent.so': no such file"},
        {"./outside.c", "method './outside.c': not a .so plugin and not an executable program"},
        {"good:bins", "method 'outside': setting 'bins' lacks '=value'"},
        {"range-height:z_min=5,z_max=1", "method 'range-height': cannot create an instance: z_max must be above z_min"}};
    for (size_t k = 0; k < sizeof refused / sizeof *refused; k++) {
        char what[256];
        snprintf(what, sizeof what, "%s is refused with its reason", refused[k][0]);
        CHECK(plugin_open(&p, refused[k][0], ".", &e) == -1, what);
        CHECK_MSG(e.msg, refused[k][1], what);
    }
    CHECK(plugin_open(&p, "./faildesc.so", NULL, &e) == 0, "the failing-describe plugin loads");
    CHECK(describe_once(&p, 4, d, &e) == -1, "a describe status other than RV_OK is an error");
    CHECK_MSG(e.msg, "method 'outside' on scan 4: describe failed (status 1): cannot use scan 4",
              "the failure passes the plugin's message on");
    plugin_close(&p);
}

/* Run describe on scans 0..4 of plugin so in a child with the crash notice;
 * its stderr goes to buf, its wait status is returned. */
static int run_child(const char *so, char *buf, size_t n)
{
    int fds[2];
    CHECK(pipe(fds) == 0, "pipe for the child's stderr");
    pid_t pid = fork();
    if (pid == 0) {
        dup2(fds[1], 2);
        struct plugin p;
        struct err e;
        float d[16];
        if (plugin_open(&p, so, NULL, &e)) _exit(3);
        plugin_crash_notice();
        for (uint32_t i = 0; i < 5; i++) describe_once(&p, i, d, &e);
        plugin_close(&p);
        exit(0);
    }
    close(fds[1]);
    ssize_t got = 0, r;
    while ((r = read(fds[0], buf + got, n - 1 - (size_t)got)) > 0) got += r;
    buf[got > 0 ? got : 0] = 0;
    close(fds[0]);
    int st = 0;
    waitpid(pid, &st, 0);
    return st;
}

/* A crash, an abort or an exit() inside a plugin: the process must not end
 * as a success, and the message must name the method. */
static void test_crash(void)
{
    char buf[1024];
    int st = run_child("./crash.so", buf, sizeof buf);
    CHECK(WIFSIGNALED(st) && WTERMSIG(st) == SIGSEGV, "a crashing plugin still ends the process by its signal");
    CHECK_MSG(buf, "revisit: method 'outside' (./crash.so) crashed with a fatal signal (SIGSEGV)",
              "the crash names the method");
    st = run_child("./abort.so", buf, sizeof buf);
    CHECK(WIFSIGNALED(st) && WTERMSIG(st) == SIGABRT, "an aborting plugin ends the process by SIGABRT");
    CHECK_MSG(buf, "revisit: method 'outside' (./abort.so) crashed with a fatal signal (SIGABRT)",
              "the abort names the method");
    st = run_child("./exit0.so", buf, sizeof buf);
    CHECK(WIFEXITED(st) && WEXITSTATUS(st) == 2, "a plugin calling exit(0) ends the process with status 2, not 0");
    CHECK_MSG(buf, "revisit: method 'outside' (./exit0.so) ended the process (exit) while it was running",
              "the exit names the method");
    st = run_child("./good.so", buf, sizeof buf);
    CHECK(WIFEXITED(st) && WEXITSTATUS(st) == 0 && !buf[0], "a closed plugin leaves a normal exit alone");
}

/* retrieval's custom-distance callback, as eval passes it. */
static int host_fn(const void *ctx, const float *a, const float *const *b, size_t n, double *out, struct err *e)
{
    return plugin_distances(ctx, a, b, n, out, e);
}

/* Descriptors of three scans of 2, 5 and 9 points from plugin spec, then
 * the custom distances of scan 0 to all three with plugin_distances. */
static int three(const char *spec, struct plugin *p, float *d, double *out, struct err *e)
{
    if (plugin_open(p, spec, NULL, e)) return -1;
    static const size_t npts[3] = {2, 5, 9};
    float pts[36] = {0};
    for (int s = 0; s < 3; s++) {
        struct rv_scan sc = {npts[s], pts, NULL, NULL, s, (uint32_t)s, 0};
        if (plugin_describe(p, &sc, d + 4 * s, NULL, e)) return -1;
    }
    const float *b[3] = {d, d + 4, d + 8};
    return plugin_distances(p, d, b, 3, out, e);
}

/* distance_batch: used when the table has it, skipped when the plugin was
 * built before it (struct_size short of it) or leaves it NULL; a negative
 * custom distance stops retrieval with a message naming method, query,
 * map scan and value. */
static void test_batch(void)
{
    struct plugin p;
    struct err e = {{0}};
    float d[12];
    double out[3];
    /* dist: |2 - 5| + |4 - 10| + |6 - 15| + |8 - 20| = 30 for scans 0 and 1 */
    CHECK(three("./custom.so", &p, d, out, &e) == 0 && out[0] == 0 && out[1] == 30 && out[2] == 70,
          "a custom distance without distance_batch: one call of distance_fn per pair");
    plugin_close(&p);
    CHECK(three("./batch.so", &p, d, out, &e) == 0 && out[0] == 1000 && out[1] == 1030 && out[2] == 1070,
          "distance_batch, when the table has it, answers the whole batch");
    plugin_close(&p);
    CHECK(three("./oldbatch.so", &p, d, out, &e) == 0 && out[0] == 0 && out[1] == 30 && out[2] == 70,
          "a table whose struct_size ends before distance_batch: the host reads nothing beyond it");
    plugin_close(&p);
    int open = three("./negdist.so", &p, d, out, &e) == 0;
    CHECK(open, "the negative-distance plugin loads and describes");
    if (!open) return;
    struct retrieval_mat m = {d, 3, 4};
    struct retrieval_rule rule = {0, NULL, 0, -1, NULL};
    struct retrieval_out r;
    CHECK(retrieval_custom(&m, &m, NULL, NULL, host_fn, &p, p.name, &rule, 2, 2, 1, &r, &e) == -1,
          "a negative custom distance stops retrieval");
    CHECK_MSG(e.msg, "method 'outside': distance of query 0 to map scan 1 is -0.5, expected a number >= 0",
              "the message names method, query, map scan and value");
    plugin_close(&p);
}

int main(void)
{
    setup();
    test_good();
    test_broken();
    test_crash();
    test_batch();
    return check_done();
}

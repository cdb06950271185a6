/* test_sweep_resume.c: cells are atomic folders; a stopped sweep resumes to
 * the same files as one uninterrupted run; shards cover the plan; a failing
 * method makes a failed cell and the sweep goes on.  The cell runner is a
 * stand-in here (the real one is eval_run, exercised by e2e_sweep.sh). */
#include <dirent.h>
#include <signal.h>
#include <stdlib.h>
#include <sys/stat.h>
#include <unistd.h>
#include "harness/base/fileio.h"
#include "harness/run/sweep.h"
#include "harness/results/cells.h"
#include "harness/results/lock.h"
#include "tests/check.h"

static volatile sig_atomic_t stop_flag;
static long calls, stop_after = -1;
static int broken_fixed;

/* Writes a result.json whose numbers depend only on the spec. */
static int fake_run(const struct eval_spec *s, struct eval_summary *out, struct err *e)
{
    (void)out;
    if (__atomic_add_fetch(&calls, 1, __ATOMIC_SEQ_CST) == stop_after) stop_flag = 1;
    if (!strcmp(s->method, "broken") && !broken_fixed) return err_set(e, "plugin 'broken': describe returned NaN");
    if (!strcmp(s->method, "silent")) return 0;  /* says success, writes nothing */
    unsigned h = 5381;
    for (const char *c = s->chain ? s->chain : ""; *c; c++) h = h * 33 + (unsigned char)*c;
    h += (unsigned)s->seed * 7 + (unsigned)strlen(s->method);
    char path[4200], text[512];
    snprintf(path, sizeof path, "%s/queries.csv", s->out_dir);
    if (fileio_write(path, "1,0,0.5\n", 8, e)) return -1;
    int n = snprintf(text, sizeof text,
                     "{\"format\": \"revisit-result-1\", \"scenario_hash\": \"%s\", \"status\": \"ok\",\n"
                     " \"metrics\": {\"f1max\": {\"value\": %.3f, \"lo\": 0.1, \"hi\": 0.9}}}\n",
                     s->scenario_hash, (h % 1000) / 1000.0);
    snprintf(path, sizeof path, "%s/result.json", s->out_dir);
    return fileio_write(path, text, (size_t)n, e);
}

static const char scen[] =
    "{\"format\": \"revisit-sweep-1\", \"recordings\": {\"map\": \"rec\"},\n"
    " \"methods\": [{\"name\": \"good\", \"variants\": [{\"k\": 1}, {\"k\": 2}]}, {\"name\": \"broken\"}],\n"
    " \"seeds\": 3,\n"
    " \"conditions\": [{\"name\": \"clean\"}, {\"name\": \"sec\", \"chain\": \"yaw\",\n"
    "   \"axis\": {\"stage\": \"sector\", \"key\": \"width\", \"values\": [0, 90]}}]}\n";

static char *slurp(const char *path)
{
    char *b;
    size_t n;
    struct err e;
    return fileio_read(path, 1 << 20, &b, &n, &e) ? NULL : b;
}

/* Same cells, same bytes in every result.json and cell.json. */
static int same_cells(const struct plan *p, const char *a, const char *b)
{
    static const char *const files[] = {"result.json", "cell.json", "queries.csv"};
    for (size_t k = 0; k < p->n_cells; k++)
        for (int f = 0; f < 3; f++) {
            char pa[4200], pb[4200];
            snprintf(pa, sizeof pa, "%s/cells/%s/%s", a, p->cells[k].id, files[f]);
            snprintf(pb, sizeof pb, "%s/cells/%s/%s", b, p->cells[k].id, files[f]);
            char *x = slurp(pa), *y = slurp(pb);
            int same = (!x && !y && f == 2) || (x && y && !strcmp(x, y));
            free(x);
            free(y);
            if (!same) { fprintf(stderr, "differs: %s\n", pa); return 0; }
        }
    return 1;
}

static void run(const struct plan *p, const char *dir, int jobs, int si, int sn, struct sweep_stats *st)
{
    struct sweep_opts o;
    struct err e;
    sweep_opts_defaults(&o);
    o.out_dir = dir;
    o.run = fake_run;
    o.jobs = jobs;
    o.quiet = 1;
    o.shard_i = si;
    o.shard_n = sn;
    o.stop = &stop_flag;
    if (sweep_run(p, &o, st, &e)) fprintf(stderr, "sweep_run: %s\n", e.msg);
}

int main(void)
{
    struct err e;
    struct plan p;
    struct sweep_stats st;
    CHECK(!fileio_write("s.json", scen, strlen(scen), &e), "scenario written");
    if (plan_load(&p, "s.json", &e)) { fprintf(stderr, "%s\n", e.msg); return 1; }
    CHECK(p.n_cells == 21, "3 methods x (1 clean + 2 values x 3 seeds)");

    run(&p, "full", 1, 0, 1, &st);
    CHECK(st.ran == 21 && st.failed == 7 && st.left == 0 && !st.interrupted, "a full run runs every cell");
    char *r = slurp("full/cells/broken__clean__s1/result.json");
    CHECK(r && strstr(r, "\"status\":\t\"failed\"") && strstr(r, "describe returned NaN"),
          "a failing method leaves a failed result with its message");
    free(r);
    CHECK(results_cell_done("full", "good_k-2__sec_width-90__s3"), "the last good cell is done");
    char *sc = slurp("full/scenario.json");
    CHECK(sc && !strcmp(sc, scen), "the scenario file is copied byte for byte");
    free(sc);
    run(&p, "full", 1, 0, 1, &st);
    CHECK(st.ran == 0 && st.skipped == 21, "a rerun skips every done cell");

    /* Stop after the 5th cell starts, as SIGINT does; then resume. */
    calls = 0; stop_after = 5;
    run(&p, "resumed", 2, 0, 1, &st);
    CHECK(st.interrupted && st.left > 0 && st.ran >= 5 && st.ran < 21, "a stop request leaves cells to run");
    CHECK(mkdir("resumed/cells/.part-good_k-1__clean__s1", 0755) == 0, "a stale part folder, as kill -9 leaves");
    CHECK(!fileio_write("resumed/cells/.part-good_k-1__clean__s1/result.json", "{", 1, &e), "with a half file");
    stop_flag = 0; stop_after = -1;
    size_t before = st.ran;
    run(&p, "resumed", 2, 0, 1, &st);
    CHECK(st.skipped == before && st.ran == 21 - before && !st.interrupted, "the resumed run does only the rest");
    CHECK(access("resumed/cells/.part-good_k-1__clean__s1", F_OK) != 0, "stale part folders are removed");
    CHECK(same_cells(&p, "full", "resumed"), "stopped and resumed equals one uninterrupted run");

    /* Cell 1 belongs to shard 1/3: shard 0 must not touch it while it is in flight. */
    CHECK(!fileio_mkdirs("sharded/cells/.part-good_k-1__sec_width-0__s1", &e), "another shard's cell in flight");
    run(&p, "sharded", 1, 0, 3, &st);
    CHECK(access("sharded/cells/.part-good_k-1__sec_width-0__s1", F_OK) == 0,
          "a shard leaves the part folders of other shards alone");
    for (int i = 0; i < 3; i++) {
        run(&p, "sharded", 1, i, 3, &st);
        CHECK(st.in_shard == 7 && st.ran == (i ? 7u : 0u), "each of three shards runs its seven cells");
    }
    CHECK(same_cells(&p, "full", "sharded"), "three shards into one folder equal the unsharded run");

    /* Failed cells count as done until a run asks to retry them. */
    struct sweep_opts ro;
    sweep_opts_defaults(&ro);
    ro.out_dir = "retry";
    ro.run = fake_run;
    ro.quiet = 1;
    CHECK(!sweep_run(&p, &ro, &st, &e) && st.failed == 7, "a first run with a broken method");
    broken_fixed = 1;
    CHECK(!sweep_run(&p, &ro, &st, &e) && st.ran == 0, "failed cells are skipped by a plain rerun");
    ro.retry_failed = 1;
    CHECK(!sweep_run(&p, &ro, &st, &e) && st.ran == 7 && st.failed == 0 && st.skipped == 14,
          "--retry-failed runs exactly the failed cells again");
    r = slurp("retry/cells/broken__clean__s1/result.json");
    CHECK(r && strstr(r, "\"status\": \"ok\""), "the retried cell now holds a good result");
    free(r);
    broken_fixed = 0;

    /* Another scenario into the same folder is refused. */
    struct plan q;
    char other[sizeof scen + 8];
    snprintf(other, sizeof other, "%s ", scen);
    CHECK(!fileio_write("t.json", other, strlen(other), &e) && !plan_load(&q, "t.json", &e), "second scenario");
    struct sweep_opts o;
    sweep_opts_defaults(&o);
    o.out_dir = "full";
    o.run = fake_run;
    o.quiet = 1;
    CHECK(sweep_run(&q, &o, &st, &e) == -1, "a folder of another scenario is refused");
    CHECK_MSG(e.msg, "full/scenario.json: made by another scenario file", "the refusal names the folder");
    plan_free(&q);

    /* One sweep per folder and shard: a second one is refused, naming the first;
     * another shard of the same folder runs beside it. */
    int held = -1;
    CHECK(!fileio_mkdirs("locked", &e) && !results_lock("locked", 0, 1, &held, &e), "a shard's lock is taken");
    o.out_dir = "locked";
    o.run = fake_run;
    e.msg[0] = 0;
    CHECK(sweep_run(&p, &o, &st, &e) == -1 && !access("locked/cells", F_OK) &&
          !results_cell_done("locked", "good_k-1__clean__s1"), "a second sweep of the same shard into the folder is refused");
    char busy[96];
    snprintf(busy, sizeof busy, "locked/.lock-0-of-1: another sweep (pid %ld) is running shard 0/1", (long)getpid());
    CHECK_MSG(e.msg, busy, "the refusal names the lock, the holder's pid and the shard");
    o.shard_i = 1;
    o.shard_n = 3;
    CHECK(!sweep_run(&p, &o, &st, &e) && st.ran == 7, "another shard runs into the same folder meanwhile");
    o.shard_i = 0;
    o.shard_n = 1;
    results_unlock(held);
    CHECK(!sweep_run(&p, &o, &st, &e) && st.ran == 14 && st.skipped == 7, "once the lock is released the sweep runs");

    /* A runner that returns success without a result on disk fails its cell. */
    static const char silent[] = "{\"format\": \"revisit-sweep-1\", \"recordings\": {\"map\": \"rec\"},\n"
                                 " \"methods\": [{\"name\": \"silent\"}], \"conditions\": [{\"name\": \"clean\"}]}\n";
    CHECK(!fileio_write("u.json", silent, strlen(silent), &e) && !plan_load(&q, "u.json", &e), "silent scenario");
    o.out_dir = "silent";
    CHECK(!sweep_run(&q, &o, &st, &e) && st.ran == 1 && st.failed == 1,
          "a cell whose runner reported success without a result.json counts as failed");
    r = slurp("silent/cells/silent__clean__s1/result.json");
    CHECK(r && strstr(r, "\"status\":\t\"failed\"") &&
          strstr(r, "method 'silent' reported success but no result.json was written"),
          "its result.json says failed and why");
    free(r);
    plan_free(&q);

    struct eval_spec s;
    sweep_cell_spec(&p, 5, &o, "x", "c", &s);
    CHECK(!strcmp(s.chain, "yaw+sector") && s.seed == 2 && !strcmp(s.condition, "sec") &&
          !strcmp(s.scenario_hash, p.hash) && s.jobs == 1, "a cell's eval spec carries chain, seed, condition, hash");
    plan_free(&p);
    return check_done();
}

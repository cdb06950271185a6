/* cmd_check.c: `revisit check SCENARIO DIR`: judge the acceptance criteria. */
#include <math.h>
#include <stdio.h>
#include <unistd.h>
#include <errno.h>
#include <stdlib.h>
#include <string.h>

#include "harness/cli/cmd.h"
#include "harness/base/fileio.h"
#include "harness/results/cells.h"
#include "harness/results/junit.h"
#include "harness/base/opt.h"
#include "harness/plan/plan.h"
#include "harness/results/summary.h"

static const char about[] =
    "Judge the scenario's acceptance criteria on the finished sweep in DIR: one\n"
    "line per criterion and method with the measured value, its interval and\n"
    "PASS or FAIL; DIR/verdicts.json holds the same.\n"
    "A verdict is evidence for a safety process, never a substitute for it.\n\n";

static void check_fmt(char *out, size_t n, double v)
{
    if (isfinite(v)) snprintf(out, n, "%.4f", v);
    else snprintf(out, n, "-");
}

/* One line of the table (after the criterion's heading when it changes),
 * and the failure message into msg. */
static void check_line(FILE *f, const struct plan *p, const struct summary_verdict *v, int heading,
                       char *msg, size_t n)
{
    const struct plan_criterion *r = &p->criteria[v->criterion];
    char lo[32], hi[32], meas[32], rule[256];
    check_fmt(lo, sizeof lo, v->lo);
    check_fmt(hi, sizeof hi, v->hi);
    check_fmt(meas, sizeof meas, v->measured);
    snprintf(rule, sizeof rule, "%s %s on %s%s%s %s %g", plan_target_name(r->target), r->metric,
             p->conds[r->cond].name, r->baseline >= 0 ? " minus " : "",
             r->baseline >= 0 ? p->conds[r->baseline].name : "", plan_cmp_name(r->cmp), r->threshold);
    if (heading) fprintf(f, "criterion %zu: %s\n  rule: %s\n", v->criterion + 1, r->text, rule);
    fprintf(f, "  %s  %-30s measured %9s  interval [%s, %s]  over %zu seed%s\n", v->pass ? "PASS" : "FAIL",
            p->methods[v->method].name, meas, lo, hi, v->seeds, v->seeds == 1 ? "" : "s");
    snprintf(msg, n, "%s of %s is %s, expected %s %g", rule, p->methods[v->method].name, meas,
             plan_cmp_name(r->cmp), r->threshold);
}

static int check_junit(const char *path, const struct plan *p, const struct summary_verdict *v, size_t n,
                       const char *table_msgs, struct err *e)
{
    struct junit_case *c = calloc(n + 1, sizeof *c);
    char (*names)[512] = calloc(n + 1, sizeof *names);
    char classname[300];
    int rc = c && names ? 0 : err_set(e, "out of memory");
    snprintf(classname, sizeof classname, "revisit.%s", p->name ? p->name : "scenario");
    for (size_t k = 0; !rc && k < n; k++) {
        snprintf(names[k], sizeof names[k], "%s [%s]", p->criteria[v[k].criterion].text, p->methods[v[k].method].name);
        c[k] = (struct junit_case){names[k], classname, v[k].pass, v[k].pass ? NULL : table_msgs + 512 * k};
    }
    if (!rc) rc = junit_write(path, "revisit check", c, n, e);
    free(c);
    free(names);
    return rc;
}

static int check_run(const char *scen, const char *dir, const char *junit, struct err *e)
{
    struct plan p;
    struct summary s;
    struct summary_verdict *v = NULL;
    size_t n = 0;
    char hash[17], path[4200];
    if (plan_load(&p, scen, e)) return CMD_ERROR;
    int rc = CMD_ERROR;
    if (results_sweep_hash(dir, hash, e) || results_path(path, sizeof path, dir, RESULTS_SCENARIO, e)) goto out;
    if (strcmp(hash, p.hash)) {
        err_at(e, path, 0, "made by another scenario file (hash %s), expected %s of %s", hash, p.hash, scen);
        goto out;
    }
    if (!p.n_criteria) { err_at(e, scen, 0, "criteria: none given, expected at least one criterion to check"); goto out; }
    if (summary_load(&s, &p, dir, e)) goto out;
    if (!summary_judge(&s, &v, &n, e)) {
        char *msgs = calloc(n + 1, 512);
        size_t fails = 0;
        for (size_t k = 0; msgs && k < n; k++) {
            check_line(stdout, &p, &v[k], !k || v[k - 1].criterion != v[k].criterion, msgs + 512 * k, 512);
            fails += !v[k].pass;
        }
        printf("%zu of %zu verdicts pass (intervals: %d-resample bootstrap, 95%%)\n", n - fails, n, p.bootstrap);
        int wrc = !msgs ? err_set(e, "out of memory") : 0;
        if (!wrc && access(dir, W_OK))  /* judged all the same: a read-only folder only misses the file */
            fprintf(stderr, "revisit check: %s is not writable (%s): verdicts.json not written; the verdicts "
                    "above stand\n", dir, strerror(errno));
        else if (!wrc)
            wrc = summary_write_verdicts(&s, v, n, e);
        if (!wrc && junit) wrc = check_junit(junit, &p, v, n, msgs, e);
        rc = wrc ? CMD_ERROR : fails ? CMD_FAIL : CMD_OK;
        free(msgs);
        summary_verdicts_free(v, n);
    }
    summary_free(&s);
out:
    plan_free(&p);
    return rc;
}

int cmd_check(int argc, char **argv)
{
    const char *junit = NULL;
    const struct opt opts[] = {
        {"--junit", OPT_STR, &junit, "FILE", "also write the verdicts as JUnit XML"},
        {0}};
    struct opt_args a;
    struct err e;
    int go = cmd_parse("check", about, argc, argv, opts, &a, &e);
    if (go != CMD_GO_ON) return go;
    if (a.n != 2) {
        err_set(&e, "revisit check: expected SCENARIO and DIR, got %d arguments", a.n);
        return cmd_report(&e);
    }
    e.msg[0] = 0;
    int rc = check_run(a.v[0], a.v[1], junit, &e);
    if (rc == CMD_ERROR) return cmd_report(&e);
    return rc;
}

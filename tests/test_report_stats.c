/* test_report_stats.c: outcomes at a threshold, revisit kinds, histograms
 * and the aggregation over seeds, on small cases worked by hand. */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "check.h"
#include "reports/report_int.h"
#include "reports/rstat.h"

static void track(struct rdata_track *t, size_t n, const double *tt, const double *x, const double *y)
{
    t->n = n;
    t->has = malloc(n); t->t = malloc(n * sizeof(double)); t->x = malloc(n * sizeof(double));
    t->y = malloc(n * sizeof(double)); t->z = calloc(n, sizeof(double));
    for (size_t i = 0; i < n; i++) { t->has[i] = 1; t->t[i] = tt[i]; t->x[i] = x[i]; t->y[i] = y[i]; }
}

/* Worked case (rstat.h): loop mode, r_pos = 3, r_neg = 5, 30 s excluded, tau = 0.5.
 *   scan 3 (1,0)   top 0 at D 0.4, d 1     -> correct
 *   scan 4 (101,0) top 2 at D 0.3, d 99    -> wrong (a revisit of scan 1)
 *   scan 5 (300,0) top 1 at D 0.2, d 200   -> wrong
 *   scan 6 (201,0) top 2 at D 0.7          -> missed (a revisit of scan 2)
 *   scan 7 (500,0) top 0 at D 0.9          -> none (no revisit, not accepted)
 *   scan 8 (4,0)   top 0 at D 0.1, d 4     -> band (3 < d <= 5; a revisit of scan 3)
 *   scan 0         no candidate            -> none */
static void outcome_checks(void)
{
    static const double t[9] = {0, 10, 20, 40, 50, 60, 70, 80, 90};
    static const double x[9] = {0, 100, 200, 1, 101, 300, 201, 500, 4}, y[9] = {0};
    struct rdata_poses p;
    memset(&p, 0, sizeof p);
    track(&p.map, 9, t, x, y);
    struct rdata_top1 rows[7] = {{3, 0, 0.4}, {4, 2, 0.3}, {5, 1, 0.2}, {6, 2, 0.7}, {7, 0, 0.9}, {8, 0, 0.1},
                                 {0, -1, NAN}};
    struct rdata_queries q = {7, rows};
    struct protocol pr;
    protocol_defaults(&pr);
    pr.r_neg_m = 5;
    struct rstat_outcomes o;
    struct err e = {{0}};
    CHECK(rstat_outcomes(&p, &q, &pr, 0.5, &o, &e) == 0, "outcomes of the worked case");
    enum rstat_class want[7] = {RSTAT_CORRECT, RSTAT_WRONG, RSTAT_WRONG, RSTAT_MISSED, RSTAT_NONE, RSTAT_BAND, RSTAT_NONE};
    int all = 1;
    for (int k = 0; k < 7; k++) all &= o.o[k].cls == want[k];
    CHECK(all, "correct, wrong, wrong, missed, none, band, none as worked by hand");
    CHECK(o.by_class[RSTAT_WRONG] == 2 && o.by_class[RSTAT_CORRECT] == 1, "class counts");
    CHECK(o.o[1].revisit && o.o[3].revisit && !o.o[2].revisit && !o.o[4].revisit, "revisits found through the grid");
    CHECK_NEAR(o.o[1].pose_d, 99, 1e-12, "pose distance to the wrongly matched place");
    CHECK(o.o[1].cx == 200 && o.o[1].qx == 101, "a wrong match keeps both ends of its segment");
    rstat_outcomes_free(&o);
    CHECK(rstat_outcomes(&p, &q, &pr, NAN, &o, &e) == 0 && o.by_class[RSTAT_CORRECT] == 0 &&
          o.by_class[RSTAT_MISSED] == 4, "with no threshold nothing is accepted and all four revisits are missed");
    rstat_outcomes_free(&o);
    CHECK(rstat_true_pair(&p, &pr, 3, 0) && !rstat_true_pair(&p, &pr, 0, 3) && !rstat_true_pair(&p, &pr, 3, 2),
          "true pairs: near and earlier only (loop exclusion)");
    rows[0].query = 42;
    CHECK(rstat_outcomes(&p, &q, &pr, 0.5, &o, &e) < 0, "a query without a pose is refused");
    CHECK_MSG(e.msg, "no pose for query scan 42", "the scan without a pose is named");
    rdata_poses_free(&p);
}

/* Out along x, back along x, then across at right angles: one revisit of each kind. */
static void kind_checks(void)
{
    double t[30], x[30], y[30];
    for (int i = 0; i < 10; i++) { t[i] = i; x[i] = 2.0 * i; y[i] = 0; }             /* out, +x */
    for (int i = 10; i < 20; i++) { t[i] = i; x[i] = 18 - 2.0 * (i - 10); y[i] = 40; } /* elsewhere */
    for (int i = 20; i < 30; i++) { t[i] = i; x[i] = 7; y[i] = -9 + 2.0 * (i - 20); }   /* across, +y */
    struct rdata_poses p;
    memset(&p, 0, sizeof p);
    track(&p.map, 30, t, x, y);
    x[10] = 0;
    struct protocol pr;
    protocol_defaults(&pr);
    pr.exclusion_scans = 5;
    /* scan 24 at (7,-1): nearest earlier true candidate scan 4 (8,0), heading +y against +x -> crossing */
    struct rdata_top1 rows[1] = {{24, 4, 0.1}};
    struct rdata_queries q = {1, rows};
    struct rstat_outcomes o;
    struct err e = {{0}};
    CHECK(rstat_outcomes(&p, &q, &pr, 0.5, &o, &e) == 0 && o.kinds[RSTAT_CROSSING] == 1, "a right-angle revisit is a crossing");
    rstat_outcomes_free(&o);
    for (int i = 10; i < 20; i++) { p.map.x[i] = 18 - 2.0 * (i - 10); p.map.y[i] = 0.5; }  /* back, -x */
    rows[0] = (struct rdata_top1){15, 4, 0.1};  /* (8,0.5) against scan 4 (8,0) */
    CHECK(rstat_outcomes(&p, &q, &pr, 0.5, &o, &e) == 0 && o.kinds[RSTAT_REVERSE] == 1, "driving back is a reverse revisit");
    rstat_outcomes_free(&o);
    rows[0] = (struct rdata_top1){7, 0, 0.1};  /* (14,0): nothing earlier within 3 m beyond the window */
    CHECK(rstat_outcomes(&p, &q, &pr, 0.5, &o, &e) == 0 && !o.o[0].revisit, "the scan window keeps near neighbours out");
    rstat_outcomes_free(&o);
    for (int i = 10; i < 20; i++) p.map.y[i] = 40;                                   /* back leg away again */
    for (int i = 20; i < 30; i++) { p.map.x[i] = 2.0 * (i - 20); p.map.y[i] = 1; }  /* out again, +x */
    rows[0] = (struct rdata_top1){24, 4, 0.1};
    CHECK(rstat_outcomes(&p, &q, &pr, 0.5, &o, &e) == 0 && o.kinds[RSTAT_SAME] == 1, "the same way again is a same-direction revisit");
    rstat_outcomes_free(&o);
    rdata_poses_free(&p);
}

/* numpy.histogram semantics (NumPy reference, numpy.histogram: "All but the
 * last (righthand-most) bin is half-open"): [0, .25, .5, .75, 1] over four
 * bins of [0, 1] counts 1, 1, 1, 2. */
static void hist_checks(void)
{
    struct rstat_outcome oo[6];
    memset(oo, 0, sizeof oo);
    double d[5] = {0, 0.25, 0.5, 0.75, 1.0};
    for (int k = 0; k < 5; k++) { oo[k].cand = 1; oo[k].dist = d[k]; oo[k].pose_d = 1; }
    oo[5].cand = 1; oo[5].dist = 0.6; oo[5].pose_d = 50; oo[5].revisit = 1;  /* a wrong top-1 */
    struct rstat_outcome extra = {.cand = 1, .dist = 0.9, .pose_d = 50};     /* no revisit to find */
    struct rstat_outcome all[7];
    memcpy(all, oo, sizeof oo);
    all[6] = extra;
    struct rstat_outcomes o = {7, all, {0}, {0}};
    struct protocol pr;
    protocol_defaults(&pr);
    struct rstat_hist h;
    struct err e;
    CHECK(rstat_hist(&o, &pr, 4, &h, &e) == 0, "histogram of seven top-1 distances");
    CHECK(h.lo == 0 && h.hi == 1 && h.correct[0] == 1 && h.correct[1] == 1 && h.correct[2] == 1 && h.correct[3] == 2,
          "correct counts 1, 1, 1, 2 with the last bin closed");
    CHECK(h.wrong[2] == 1 && h.wrong[0] + h.wrong[1] + h.wrong[3] == 0, "the wrong match falls in the third bin");
    CHECK(h.norev[3] == 1 && h.norev[0] + h.norev[1] + h.norev[2] == 0 && h.wrong[3] == 0,
          "a wrong top-1 of a query without a revisit counts apart, in the last bin");
    rstat_hist_free(&h);
    o.n = 1;
    CHECK(rstat_hist(&o, &pr, 4, &h, &e) == 0 && h.nbins == 1 && h.correct[0] == 1, "one distinct distance gives one bin");
    rstat_hist_free(&h);
}

static void cell(struct rdata_cell *c, const char *label, const char *cond, const char *chain, double f1,
                 double lo, double hi, int ok)
{
    memset(c, 0, sizeof *c);
    snprintf(c->label, sizeof c->label, "%s", label);
    snprintf(c->cond, sizeof c->cond, "%s", cond);
    snprintf(c->chain, sizeof c->chain, "%s", chain);
    c->ok = ok;
    for (int k = 0; k < RDATA_NMETRIC; k++) c->m[k].present = 0;
    c->m[RDATA_F1MAX] = (struct rdata_metric){1, f1, lo, hi, NAN};
}

static void table_checks(void)
{
    struct rdata_cell cells[5];
    cell(&cells[0], "A", "s90", "sector:width=90", 0.4, 0.3, 0.5, 1);
    cell(&cells[1], "A", "", "", 0.8, 0.7, 0.9, 1);
    cell(&cells[2], "A", "", "", 0.6, 0.5, 0.7, 1);
    cell(&cells[3], "B", "", "", 0.7, NAN, NAN, 1);
    cell(&cells[4], "B", "s90", "sector:width=90", 0, 0, 0, 0);
    struct rdata_set s;
    memset(&s, 0, sizeof s);
    s.n = 5;
    s.cells = cells;
    struct rstat_table t;
    struct err e;
    CHECK(rstat_table_build(&s, &t, &e) == 0, "table of five cells");
    CHECK(t.n_methods == 2 && t.n_conds == 2 && t.n_groups == 4, "two methods, two conditions, four groups");
    CHECK(!strcmp(t.conds[0], "") && t.ref_cond[0] == 0, "the unperturbed condition comes first and is the reference");
    const struct rstat_group *g = rstat_find(&t, 0, 0);
    /* mean of 0.8, 0.6 and the sample standard deviation sqrt(0.02 / 1) */
    CHECK(g && g->n_seeds == 2, "two seeds in (A, none)");
    CHECK_NEAR(g->mean[RDATA_F1MAX], 0.7, 1e-12, "mean over seeds");
    CHECK_NEAR(g->sd[RDATA_F1MAX], sqrt(0.02), 1e-12, "sample standard deviation over seeds");
    CHECK_NEAR(g->lo[RDATA_F1MAX], 0.6, 1e-12, "mean lower bound");
    char txt[128];
    report_cell_text(g, RDATA_F1MAX, txt, sizeof txt);
    CHECK(!strcmp(txt, "0.700 [0.600, 0.800] sd 0.141"), "table text of a two-seed group");
    report_cell_text(rstat_find(&t, 1, 0), RDATA_F1MAX, txt, sizeof txt);
    CHECK(!strcmp(txt, "0.700"), "a value without interval shows alone");
    report_cell_text(rstat_find(&t, 1, 1), RDATA_F1MAX, txt, sizeof txt);
    CHECK(!strcmp(txt, "failed"), "a group whose only cell failed reads failed");
    report_cell_text(rstat_find(&t, 0, 0), RDATA_EP, txt, sizeof txt);
    CHECK(!strcmp(txt, "-"), "an absent metric reads -");
    rstat_table_free(&t);

    /* Sweep cells of one axis share the name; each value is a condition. */
    cell(&cells[0], "A", "sector", "sector:width=90", 0.5, 0.4, 0.6, 1);
    cell(&cells[1], "A", "sector", "sector:width=0", 0.9, 0.8, 1.0, 1);
    cells[0].has_axis = cells[1].has_axis = 1;
    cells[0].axis_value = 90;
    cells[1].axis_value = 0;
    snprintf(cells[0].axis_stage, sizeof cells[0].axis_stage, "sector");
    snprintf(cells[0].axis_key, sizeof cells[0].axis_key, "width");
    memcpy(cells[1].axis_stage, cells[0].axis_stage, sizeof cells[0].axis_stage);
    memcpy(cells[1].axis_key, cells[0].axis_key, sizeof cells[0].axis_key);
    s.n = 2;
    CHECK(rstat_table_build(&s, &t, &e) == 0 && t.n_conds == 2, "two axis values of one name are two conditions");
    CHECK(t.n_conds == 2 && !strcmp(t.conds[0], "sector (width=0)") && !strcmp(t.conds[1], "sector (width=90)"),
          "axis conditions are named by value and sorted by it");
    rstat_table_free(&t);
}

/* Reloc mode: queries come from their own track and every map scan is a
 * candidate, however late; d is measured between the two tracks. */
static void reloc_checks(void)
{
    static const double tm[3] = {0, 1, 2}, xm[3] = {0, 50, 100}, ym[3] = {0};
    static const double tq[2] = {0, 1}, xq[2] = {99, 51}, yq[2] = {1, 30};
    struct rdata_poses p;
    memset(&p, 0, sizeof p);
    track(&p.map, 3, tm, xm, ym);
    track(&p.query, 2, tq, xq, yq);
    struct rdata_top1 rows[2] = {{0, 2, 0.2}, {1, 1, 0.2}};
    struct rdata_queries q = {2, rows};
    struct protocol pr;
    protocol_defaults(&pr);
    pr.mode = PROTOCOL_RELOC;
    struct rstat_outcomes o;
    struct err e = {{0}};
    CHECK(rstat_outcomes(&p, &q, &pr, 0.5, &o, &e) == 0, "reloc outcomes");
    CHECK(o.o[0].cls == RSTAT_CORRECT && o.o[0].revisit, "reloc: a later map scan 1.4 m away is a correct match");
    CHECK(o.o[1].cls == RSTAT_WRONG && !o.o[1].revisit, "reloc: a map scan 30 m away is wrong and no revisit");
    CHECK_NEAR(o.o[0].pose_d, sqrt(2), 1e-12, "reloc: distance between query and map tracks");
    rstat_outcomes_free(&o);
    rows[1].cand = 7;
    CHECK(rstat_outcomes(&p, &q, &pr, 0.5, &o, &e) < 0, "a candidate without a map pose is refused");
    CHECK_MSG(e.msg, "no pose for map scan 7", "the map scan without a pose is named");
    rdata_poses_free(&p);
}

int main(void)
{
    outcome_checks();
    reloc_checks();
    kind_checks();
    hist_checks();
    table_checks();
    return check_done();
}

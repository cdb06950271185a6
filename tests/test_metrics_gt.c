/* test_metrics_gt.c: ground truth from the k-d tree against a brute-force
 * all-pairs computation written out here, on random trajectories, in loop and
 * reloc mode, 3D and planar, with and without a wider r_neg; plus bad input.
 * Reference: the definitions in design.md "Evaluation protocol" evaluated
 * directly (common practice, no source). */
#include <math.h>
#include <stdint.h>
#include <stdlib.h>

#include "metrics/gt.h"
#include "tests/check.h"

struct lcg { uint64_t s; };

static double uni(struct lcg *r)
{
    r->s = r->s * 6364136223846793005ULL + 1442695040888963407ULL;
    return (double)(r->s >> 11) / 9007199254740992.0;
}

/* A route that circles a block three times with jitter, some stops (equal
 * positions) and a few jumps, so revisits, ties and empty windows all occur. */
static void route(struct lcg *r, size_t n, double *xyz, double *t)
{
    double tt = 0;
    for (size_t i = 0; i < n; i++) {
        double a = 6.0 * M_PI * (double)i / (double)n;
        xyz[3 * i] = 40 * cos(a) + 2 * (uni(r) - 0.5);
        xyz[3 * i + 1] = 25 * sin(a) + 2 * (uni(r) - 0.5);
        xyz[3 * i + 2] = 3 * uni(r);
        if (i % 37 == 5) { xyz[3 * i] += 100; }
        if (i % 50 == 7 && i > 0) { xyz[3 * i] = xyz[3 * i - 3]; xyz[3 * i + 1] = xyz[3 * i - 2]; xyz[3 * i + 2] = xyz[3 * i - 1]; }
        tt += (i % 11 == 3) ? 0 : 0.5 + uni(r);   /* some equal timestamps */
        t[i] = tt;
    }
}

static double bdist(const double *a, const double *b, int planar)
{
    double dx = a[0] - b[0], dy = a[1] - b[1], dz = planar ? 0 : a[2] - b[2];
    return sqrt(dx * dx + dy * dy + dz * dz);
}

static int bcand(const struct protocol *p, const double *t, size_t i, size_t j)
{
    if (p->mode == PROTOCOL_RELOC) return 1;
    if (j >= i) return 0;
    if (p->exclusion_scans >= 0) return (long)j <= (long)i - p->exclusion_scans;
    return t[j] <= t[i] - p->exclusion_s;
}

/* Compare every query record and a sample of pair classes with brute force. */
static int compare(const struct protocol *p, const struct gt *g, const double *mxyz,
                   const double *mt, const double *qxyz, size_t nq, size_t nm)
{
    int bad = 0;
    for (size_t i = 0; i < nq; i++) {
        long best = -1;
        double bd = INFINITY;
        size_t within = 0;
        for (size_t j = 0; j < nm; j++) {
            if (!bcand(p, mt, i, j)) continue;
            double d = bdist(qxyz + 3 * i, mxyz + 3 * j, p->planar);
            if (d < bd) { bd = d; best = (long)j; }
            if (d <= p->r_pos_m) within++;
        }
        const struct gt_query *q = &g->q[i];
        if (q->nearest != best || q->n_within != within || q->revisit != (within > 0) ||
            !(q->nearest_m == bd || fabs(q->nearest_m - bd) < 1e-12))
            bad++;
        for (size_t j = i % 7; j < nm; j += 7) {
            double d = bdist(qxyz + 3 * i, mxyz + 3 * j, p->planar);
            enum gt_class c = d <= p->r_pos_m ? GT_POS : d > p->r_neg_m ? GT_NEG : GT_BAND;
            if (gt_pair(g, i, j) != c || gt_is_candidate(g, i, j) != bcand(p, mt, i, j)) bad++;
        }
    }
    return bad;
}

static void loop_cases(void)
{
    struct lcg r = {7};
    size_t n = 900;
    double *xyz = malloc(n * 3 * sizeof *xyz), *t = malloc(n * sizeof *t);
    route(&r, n, xyz, t);
    struct gt_poses map = {xyz, t, n};
    const struct { double rpos, rneg, excl; long scans; int planar; } cs[] = {
        {3, 3, 30, -1, 0}, {3, 8, 30, -1, 0}, {5, 5, 10, -1, 1}, {3, 6, 0, -1, 1},
        {4, 4, 30, 40, 0}, {2, 9, 30, 0, 1},
    };
    for (size_t c = 0; c < sizeof cs / sizeof cs[0]; c++) {
        struct protocol p;
        protocol_defaults(&p);
        p.r_pos_m = cs[c].rpos; p.r_neg_m = cs[c].rneg; p.exclusion_s = cs[c].excl;
        p.exclusion_scans = cs[c].scans; p.planar = cs[c].planar;
        struct gt *g = NULL;
        struct err e = {{0}};
        CHECK(gt_build(&p, &map, NULL, NULL, 0, &g, &e) == 0, "loop ground truth builds");
        if (!g) continue;
        CHECK(compare(&p, g, xyz, t, xyz, n, n) == 0, "loop ground truth equals brute force");
        size_t rv = 0;
        for (size_t i = 0; i < n; i++) rv += (size_t)g->q[i].revisit;
        CHECK(rv == g->n_revisits && rv > 50 && rv < n, "revisit count is summed and non-trivial");
        CHECK(g->q[0].nearest == -1 && isinf(g->q[0].nearest_m), "first scan has no candidate");
        gt_free(g);
    }
    /* Times that go back now and then (clock jumps): candidacy is per scan,
     * nothing may assume sorted times. */
    for (size_t i = 0; i < n; i += 13) t[i] -= 40 * uni(&r);
    struct protocol p;
    protocol_defaults(&p);
    struct gt *g = NULL;
    CHECK(gt_build(&p, &map, NULL, NULL, 0, &g, NULL) == 0, "unsorted times build");
    if (g) {
        CHECK(compare(&p, g, xyz, t, xyz, n, n) == 0, "unsorted times: ground truth equals brute force");
        gt_free(g);
    }
    free(xyz);
    free(t);
}

/* A long stop: hundreds of scans within centimetres, so whole tree nodes
 * fall inside the r_pos ball and are counted without visiting their points. */
static void stop_case(void)
{
    struct lcg r = {31};
    size_t n = 700;
    double *xyz = malloc(n * 3 * sizeof *xyz), *t = malloc(n * sizeof *t);
    for (size_t i = 0; i < n; i++) {
        int parked = i < 400 || i >= 600;
        double a = (double)i * 0.05;
        xyz[3 * i] = parked ? 0.01 * uni(&r) : 30 * sin(a);
        xyz[3 * i + 1] = parked ? 0.01 * uni(&r) : 30 * (1 - cos(a));
        xyz[3 * i + 2] = 0;
        t[i] = 0.5 * (double)i;
    }
    struct gt_poses map = {xyz, t, n};
    struct protocol p;
    protocol_defaults(&p);
    struct gt *g = NULL;
    CHECK(gt_build(&p, &map, NULL, NULL, 0, &g, NULL) == 0, "stop-and-go ground truth builds");
    if (g) {
        CHECK(compare(&p, g, xyz, t, xyz, n, n) == 0, "whole-node counting equals brute force");
        CHECK(g->q[399].n_within == 340 && g->q[650].n_within > 300, "a long stop: scans 0-339 lie before t - 30 s");
        gt_free(g);
    }
    /* reloc against itself: every map scan is a candidate, so nodes inside
     * the ball are counted whole and the nearest is searched separately */
    p.mode = PROTOCOL_RELOC;
    struct gt_poses qry = {xyz, NULL, n};
    map.t = NULL;
    g = NULL;
    CHECK(gt_build(&p, &map, &qry, NULL, 0, &g, NULL) == 0, "stop-and-go reloc ground truth builds");
    if (g) {
        CHECK(compare(&p, g, xyz, t, xyz, n, n) == 0, "whole-node counting in reloc equals brute force");
        CHECK(g->q[10].n_within >= 500 && g->q[10].nearest == 10 && g->q[10].nearest_m == 0,
              "reloc: all 500 parked scans counted (the route passes by too), the nearest is the scan itself");
        gt_free(g);
    }
    free(xyz);
    free(t);
}

static void reloc_cases(void)
{
    struct lcg r = {99};
    size_t nm = 700, nq = 500;
    double *mx = malloc(nm * 3 * sizeof *mx), *mt = malloc(nm * sizeof *mt);
    double *qx = malloc(nq * 3 * sizeof *qx), *qt = malloc(nq * sizeof *qt);
    route(&r, nm, mx, mt);
    route(&r, nq, qx, qt);
    struct gt_poses map = {mx, NULL, nm}, qry = {qx, NULL, nq};
    for (int c = 0; c < 3; c++) {
        struct protocol p;
        protocol_defaults(&p);
        p.mode = PROTOCOL_RELOC;
        p.r_pos_m = 2.5; p.r_neg_m = c == 1 ? 7.5 : 2.5; p.planar = c == 2;
        struct gt *g = NULL;
        struct err e = {{0}};
        CHECK(gt_build(&p, &map, &qry, NULL, 0, &g, &e) == 0, "reloc ground truth builds");
        if (!g) continue;
        CHECK(compare(&p, g, mx, mt, qx, nq, nm) == 0, "reloc ground truth equals brute force");
        CHECK(g->n_used == nq && g->n_revisits > 100, "reloc: every query used, many revisits");
        gt_free(g);
    }
    /* Subset: only the listed queries count. */
    struct protocol p;
    protocol_defaults(&p);
    p.mode = PROTOCOL_RELOC;
    size_t sub[3] = {4, 10, 10};
    struct gt *g = NULL;
    struct err e = {{0}};
    CHECK(gt_build(&p, &map, &qry, sub, 3, &g, &e) == 0, "subset ground truth builds");
    if (g) {
        CHECK(g->n_used == 2 && g->q[4].used && g->q[10].used && !g->q[5].used,
              "subset marks only the listed queries (duplicates once)");
        CHECK(g->n_revisits == (size_t)(g->q[4].revisit + g->q[10].revisit), "subset revisits counted");
        gt_free(g);
    }
    free(mx); free(mt); free(qx); free(qt);
}

static void bad_input(void)
{
    double xyz[9] = {0, 0, 0, 1, NAN, 0, 2, 0, 0}, t[3] = {0, 1, 2};
    struct gt_poses map = {xyz, t, 3}, nt = {xyz, NULL, 3};
    struct protocol p;
    protocol_defaults(&p);
    struct gt *g = NULL;
    struct err e = {{0}};
    CHECK(gt_build(&p, &map, NULL, NULL, 0, &g, &e) == -1 && !g, "non-finite position refused");
    CHECK_MSG(e.msg, "map scan 1 has a non-finite position", "message names the scan");
    xyz[4] = 0;
    CHECK(gt_build(&p, &nt, NULL, NULL, 0, &g, &e) == -1, "time exclusion without times refused");
    CHECK_MSG(e.msg, "a time exclusion needs timestamps", "message says timestamps are needed");
    CHECK(gt_build(&p, &map, &map, NULL, 0, &g, &e) == -1, "loop mode with a query set refused");
    CHECK_MSG(e.msg, "loop mode takes one recording", "message names loop mode");
    p.mode = PROTOCOL_RELOC;
    CHECK(gt_build(&p, &map, NULL, NULL, 0, &g, &e) == -1, "reloc without queries refused");
    CHECK_MSG(e.msg, "reloc mode needs query poses", "message names reloc mode");
    size_t sub[1] = {3};
    CHECK(gt_build(&p, &map, &map, sub, 1, &g, &e) == -1, "subset index out of range refused");
    CHECK_MSG(e.msg, "query subset entry 0 is scan 3, expected an index below 3", "message names the entry");
    p.mode = PROTOCOL_LOOP;
    p.r_neg_m = 1;
    CHECK(gt_build(&p, &map, NULL, NULL, 0, &g, &e) == -1, "r_neg below r_pos refused");
    CHECK_MSG(e.msg, "wrong-match radius must be at least", "message names the wrong-match radius");
    t[2] = INFINITY;
    p.r_neg_m = 3;
    CHECK(gt_build(&p, &map, NULL, NULL, 0, &g, &e) == -1, "non-finite time refused");
    CHECK_MSG(e.msg, "map scan 2 has a non-finite time", "message names the scan with a bad time");
    /* Empty map in reloc mode: no candidate anywhere, defined result. */
    struct gt_poses empty = {NULL, NULL, 0}, one = {xyz, NULL, 1};
    p.mode = PROTOCOL_RELOC;
    CHECK(gt_build(&p, &empty, &one, NULL, 0, &g, &e) == 0 && g, "empty map builds");
    if (g) {
        CHECK(g->q[0].nearest == -1 && !g->q[0].revisit && g->n_revisits == 0, "empty map: no revisit");
        CHECK(gt_is_future(g, 0, 0) == 0, "reloc has no future scans");
        gt_free(g);
    }
}

int main(void)
{
    loop_cases();
    stop_case();
    reloc_cases();
    bad_input();
    return check_done();
}

/* ground.c: ground removal for sop.  The lowest point of every grid cell
 * (cells of ground_cell_m, within ground_range_m of the sensor) is a ground
 * candidate; RANSAC on the candidates finds the plane z = a x + b y + c with
 * the most candidates within ground_height_m and a slope below
 * max_slope_deg; least-squares fits to the inliers, in a band halved three
 * times, refine it.  Points
 * less than ground_height_m above the plane are ground.
 *
 * The random draws come from a fixed-seed generator local to each call, so
 * a scan always gives the same plane.
 */
#include <math.h>
#include <stdlib.h>
#include "harness/plugins/sop/sop.h"

#define GROUND_MAX_CELLS_SIDE 1024

struct ground_cand {
    double x, y, z;
};

/* Lowest point per cell.  Returns the candidate count (0 if none), -1 on memory. */
static long ground_candidates(const struct sop_params *p, const float *xyzi, size_t n,
                              struct ground_cand **out)
{
    double cell = p->ground_cell_m, range = p->ground_range_m;
    int side = (int)ceil(2 * range / cell);
    if (side > GROUND_MAX_CELLS_SIDE)
        side = GROUND_MAX_CELLS_SIDE, cell = 2 * range / side;
    size_t cells = (size_t)side * side;
    long *best = malloc(sizeof *best * cells);
    float *low = malloc(sizeof *low * cells);  /* z of best[c], read without going back to the point */
    if (!best || !low)
        return free(best), free(low), -1;
    for (size_t c = 0; c < cells; c++)
        best[c] = -1, low[c] = 0;
    /* a cell that is a power of two (the default 2 m) divides exactly as a
     * product with its reciprocal: the same bits, without the division */
    int e;
    double inv = frexp(cell, &e) == 0.5 ? 1 / cell : 0;
    for (size_t k = 0; k < n; k++) {
        double x = xyzi[4 * k], y = xyzi[4 * k + 1];
        if (!(fabs(x) < range && fabs(y) < range))
            continue;
        int cx = (int)(inv ? (x + range) * inv : (x + range) / cell);
        int cy = (int)(inv ? (y + range) * inv : (y + range) / cell);
        if (cx >= side || cy >= side)
            continue;
        size_t c = (size_t)cy * side + cx;
        float z = xyzi[4 * k + 2];
        if (best[c] < 0 || z < low[c])
            best[c] = (long)k, low[c] = z;
    }
    free(low);
    long m = 0;
    for (size_t c = 0; c < cells; c++)
        m += best[c] >= 0;
    struct ground_cand *cand = malloc(sizeof *cand * (size_t)(m ? m : 1));
    if (!cand)
        return free(best), -1;
    m = 0;
    for (size_t c = 0; c < cells; c++)
        if (best[c] >= 0) {
            const float *q = xyzi + 4 * best[c];
            cand[m++] = (struct ground_cand){q[0], q[1], q[2]};
        }
    free(best);
    *out = cand;
    return m;
}

/* Least-squares plane through the candidates with |residual| < tol of plane
 * (all of them when tol < 0); leaves plane alone when fewer than 3. */
static void ground_refit(const struct ground_cand *c, long m, double tol, double plane[3])
{
    double s[3][3] = {{0}}, r[3] = {0};
    long used = 0;
    for (long k = 0; k < m; k++) {
        double res = c[k].z - (plane[0] * c[k].x + plane[1] * c[k].y + plane[2]);
        if (tol >= 0 && fabs(res) >= tol)
            continue;
        double v[3] = {c[k].x, c[k].y, 1};
        for (int i = 0; i < 3; i++) {
            for (int j = 0; j < 3; j++)
                s[i][j] += v[i] * v[j];
            r[i] += v[i] * c[k].z;
        }
        used++;
    }
    double det = s[0][0] * (s[1][1] * s[2][2] - s[1][2] * s[2][1])
                 - s[0][1] * (s[1][0] * s[2][2] - s[1][2] * s[2][0])
                 + s[0][2] * (s[1][0] * s[2][1] - s[1][1] * s[2][0]);
    if (used < 3 || fabs(det) < 1e-9)
        return;
    double out[3];
    for (int col = 0; col < 3; col++) {  /* Cramer's rule */
        double t[3][3];
        for (int i = 0; i < 3; i++)
            for (int j = 0; j < 3; j++)
                t[i][j] = j == col ? r[i] : s[i][j];
        out[col] = (t[0][0] * (t[1][1] * t[2][2] - t[1][2] * t[2][1])
                    - t[0][1] * (t[1][0] * t[2][2] - t[1][2] * t[2][0])
                    + t[0][2] * (t[1][0] * t[2][1] - t[1][1] * t[2][0])) / det;
    }
    plane[0] = out[0], plane[1] = out[1], plane[2] = out[2];
}

/* Candidates less than band from the plane z = a x + b y + c; once the
 * count can no longer rise above best, some count <= best (the caller
 * only keeps a plane that beats best, so the rest need not be counted). */
static long ground_inliers(const struct ground_cand *c, long m, const double plane[3], double band,
                           long best)
{
    enum { BLOCK = 64 };
    long in = 0;
    for (long k0 = 0; k0 < m; k0 += BLOCK) {
        if (in + (m - k0) <= best)
            return in;
        long k1 = m - k0 > BLOCK ? k0 + BLOCK : m;
        for (long k = k0; k < k1; k++)
            in += fabs(c[k].z - (plane[0] * c[k].x + plane[1] * c[k].y + plane[2])) < band;
    }
    return in;
}

/* RANSAC over candidate triples; plane starts flat at the lowest candidate. */
static void ground_ransac(const struct sop_params *p, const struct ground_cand *c, long m,
                          double plane[3])
{
    uint64_t state = 0x5d1f2e3c4b5a6978u;
    double min_nz = cos(p->max_slope_deg * M_PI / 180.0);
    long best_in = -1;
    plane[0] = plane[1] = 0, plane[2] = m ? c[0].z : 0;
    for (long k = 1; k < m; k++)
        if (c[k].z < plane[2])
            plane[2] = c[k].z;
    for (int it = 0; it < p->ransac_iters && m >= 3; it++) {
        long id[3];
        for (int j = 0; j < 3; j++) {
            state = state * 6364136223846793005u + 1442695040888963407u;
            id[j] = (long)((state >> 33) % (uint64_t)m);
        }
        double u[3] = {c[id[1]].x - c[id[0]].x, c[id[1]].y - c[id[0]].y, c[id[1]].z - c[id[0]].z};
        double v[3] = {c[id[2]].x - c[id[0]].x, c[id[2]].y - c[id[0]].y, c[id[2]].z - c[id[0]].z};
        double nx = u[1] * v[2] - u[2] * v[1], ny = u[2] * v[0] - u[0] * v[2];
        double nz = u[0] * v[1] - u[1] * v[0], len = sqrt(nx * nx + ny * ny + nz * nz);
        if (!(len > 0) || fabs(nz) / len < min_nz)
            continue;
        double cand[3] = {-nx / nz, -ny / nz, 0};
        cand[2] = c[id[0]].z - cand[0] * c[id[0]].x - cand[1] * c[id[0]].y;
        long in = ground_inliers(c, m, cand, p->ground_height_m, best_in);
        if (in > best_in)
            best_in = in, plane[0] = cand[0], plane[1] = cand[1], plane[2] = cand[2];
    }
    /* refit on the inliers three times, halving the band each time, so low
     * objects (curbs, wall feet) that sit inside the first band drop out */
    for (int k = 0; k < 3; k++)
        ground_refit(c, m, p->ground_height_m / (double)(1 << k), plane);
}

long ground_remove(const struct sop_params *p, const float *xyzi, size_t n, double plane[3],
                   uint8_t *ground)
{
    struct ground_cand *c = NULL;
    long m = ground_candidates(p, xyzi, n, &c);
    if (m < 0)
        return -1;
    ground_ransac(p, c, m, plane);
    free(c);
    long cnt = 0;
    for (size_t k = 0; k < n; k++) {
        const float *q = xyzi + 4 * k;
        double h = q[2] - (plane[0] * q[0] + plane[1] * q[1] + plane[2]);
        ground[k] = h < p->ground_height_m;
        cnt += ground[k];
    }
    return cnt;
}

/* segment.c: Euclidean clustering for sop as connected components of a voxel
 * grid.  Non-ground points fall into voxels of voxel_m / 2; two voxels up
 * to two cells apart on each axis join when their point centroids are
 * within voxel_m.  Testing centroid distances rather than voxel adjacency
 * keeps the tolerance nearly the same in every direction, so segments do
 * not split or merge when the sensor turns (plain 26-neighbour adjacency
 * reaches from 1 to 2·sqrt(3) voxels depending on direction).  A segment is kept when it has min_points to
 * max_points points and its horizontal size sqrt(12 (l1 + l2)) (l the
 * eigenvalues of its x, y covariance; the diagonal of a uniformly filled
 * rectangle) is at most max_extent_m.
 *
 * Voxels live in an open-addressing hash table keyed by their packed grid
 * coordinates; components come from union-find over the 62 forward
 * neighbours of each voxel.  Segment order is the order in which their
 * first point appears in the scan.
 *
 * The neighbours are found without probing the table 62 times per voxel:
 * the voxels are sorted by a dense key (x, y, z shifted to start at 2,
 * packed so that key order is x, then y, then z order, with two spare cells
 * on every side so that a neighbour's key is the voxel's key plus a fixed
 * offset).  Equal x, y make a column; the forward columns of a column form
 * three ranges of consecutive columns (one per dx), which a cursor per dx
 * finds, and within a column pair the neighbours of a voxel are one z
 * window that moves up with the voxel.  The joins are those of the probing
 * loop; they run over sorted positions (the centroids copied into that
 * order), and the components are handed back with the lowest voxel id as
 * the root, as union-find with the smaller id as the root gives whatever
 * the order of the joins.
 *
 * Segments are numbered from the voxels (voxel ids follow first points), so
 * only two passes touch the points after voxelisation: the point lists, and
 * the x, y sums of the size limit over each list, in point order as before.
 */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "harness/plugins/sop/sop.h"

#define SEG_BIAS 1048576  /* 2^20: grid coordinates are stored as 21-bit fields */

struct seg_grid {
    uint32_t *slot;   /* hash slots: voxel id, UINT32_MAX = empty (the key is vkey[id]) */
    size_t mask;
    uint32_t *parent; /* union-find over voxel ids */
    uint64_t *vkey;   /* voxel id -> key */
    double *cen;      /* voxel id -> centroid x, y, z and point count */
    uint32_t nvox;
    uint32_t *pts;    /* the non-ground points, ascending */
    size_t npts;
};

static uint64_t seg_key(int x, int y, int z)
{
    return ((uint64_t)(x + SEG_BIAS) << 42) | ((uint64_t)(y + SEG_BIAS) << 21)
           | (uint64_t)(z + SEG_BIAS);
}

/* Grid coordinates x, y, z of a key. */
static void seg_unkey(uint64_t key, int c[3])
{
    c[0] = (int)(key >> 42) - SEG_BIAS;
    c[1] = (int)((key >> 21) & 0x1fffff) - SEG_BIAS;
    c[2] = (int)(key & 0x1fffff) - SEG_BIAS;
}

/* Voxel id of key, inserting it when add is set; UINT32_MAX when absent. */
static uint32_t seg_lookup(struct seg_grid *g, uint64_t key, int add)
{
    size_t h = (size_t)((key * 0x9e3779b97f4a7c15u) >> 20) & g->mask;
    while (g->slot[h] != UINT32_MAX) {
        if (g->vkey[g->slot[h]] == key)
            return g->slot[h];
        h = (h + 1) & g->mask;
    }
    if (!add)
        return UINT32_MAX;
    g->slot[h] = g->nvox;
    g->vkey[g->nvox] = key;
    g->parent[g->nvox] = g->nvox;
    memset(g->cen + 4 * (size_t)g->nvox, 0, sizeof(double[4]));  /* zeroed here, not all m up front */
    return g->nvox++;
}

static uint32_t seg_find(uint32_t *parent, uint32_t a)
{
    while (parent[a] != a)
        a = parent[a] = parent[parent[a]];
    return a;
}

static void seg_union(uint32_t *parent, uint32_t a, uint32_t b)
{
    a = seg_find(parent, a), b = seg_find(parent, b);
    if (a != b) /* the smaller id is the root: roots do not depend on join order */
        parent[a > b ? a : b] = a > b ? b : a;
}

/* Sort key[0..n) ascending, id[] along (LSD radix over the low `bits`
 * bits, at most 11 bits a pass, the passes made equally wide so that few
 * buckets are cleared and summed); tk, ti scratch of n.  Stable, so equal
 * keys keep their order (keys here are distinct). */
static void seg_radix(uint64_t *key, uint32_t *id, uint64_t *tk, uint32_t *ti, size_t n, int bits)
{
    enum { DMAX = 11 };
    int passes = (bits + DMAX - 1) / DMAX, d = passes ? (bits + passes - 1) / passes : 1;
    size_t nb = (size_t)1 << d, cnt[1 << DMAX];
    for (int shift = 0; shift < bits; shift += d) {
        memset(cnt, 0, sizeof *cnt * nb);
        for (size_t k = 0; k < n; k++)
            cnt[(key[k] >> shift) & (nb - 1)]++;
        for (size_t b = 0, sum = 0; b < nb; b++) {
            size_t c = cnt[b];
            cnt[b] = sum, sum += c;
        }
        for (size_t k = 0; k < n; k++) {
            size_t at = cnt[(key[k] >> shift) & (nb - 1)]++;
            tk[at] = key[k], ti[at] = id[k];
        }
        memcpy(key, tk, sizeof *key * n);
        memcpy(id, ti, sizeof *id * n);
    }
}

/* Bits of a dense key field for coordinates spanning lo..hi, with two
 * spare cells on either side. */
static int seg_field_bits(int lo, int hi)
{
    int b = 1;
    while ((1ll << b) < (long long)hi - lo + 5)
        b++;
    return b;
}

/* 1 when the centroids of v and w (cen: four values per entry, x y z
 * first) lie within sqrt(tol2). */
static inline int seg_close(const double *cen, double tol2, uint32_t v, uint32_t w)
{
    double ex = cen[4 * v] - cen[4 * w], ey = cen[4 * v + 1] - cen[4 * w + 1];
    double ez = cen[4 * v + 2] - cen[4 * w + 2];
    return ex * ex + ey * ey + ez * ez <= tol2;
}

/* Join v and w in the union-find parent when their centroids are close. */
static void seg_join_pair(uint32_t *parent, const double *cen, double tol2, uint32_t v, uint32_t w)
{
    if (seg_close(cen, tol2, v, w))
        seg_union(parent, v, w);
}

/* seg_join by probing the table for each of the 62 forward neighbours (for
 * grids too wide for the dense key). */
static void seg_join_probe(struct seg_grid *g, const double *cen, double tol2)
{
    for (uint32_t v = 0; v < g->nvox; v++) {
        int c[3];
        seg_unkey(g->vkey[v], c);
        for (int dx = 0; dx <= 2; dx++)  /* the forward half of the 5x5x5 block */
            for (int dy = dx ? -2 : 0; dy <= 2; dy++)
                for (int dz = dx || dy ? -2 : 1; dz <= 2; dz++) {
                    uint32_t w = seg_lookup(g, seg_key(c[0] + dx, c[1] + dy, c[2] + dz), 0);
                    if (w != UINT32_MAX)
                        seg_join_pair(g->parent, cen, tol2, v, w);
                }
    }
}

/* The voxels in sorted order, as seg_join walks them. */
struct seg_sorted {
    const uint64_t *key; /* dense keys, ascending */
    const double *cen;   /* centroids x y z (and a spare) in that order */
    uint32_t *parent;    /* union-find over sorted positions */
    double tol2;
};

/* Join sorted position i with the positions t = a, a + 1, ... (below b,
 * keys up to `to`: one z window, so at most five) whose centroids are
 * close.  The tests only count the hits, so their outcome (close about
 * half the time) is not a branch to mispredict; the unions follow. */
static void seg_join_window(const struct seg_sorted *o, size_t i, size_t a, size_t b, uint64_t to)
{
    uint32_t hit[5];
    int nh = 0;
    for (size_t t = a; t < b && t < a + 5 && o->key[t] <= to; t++) {
        hit[nh] = (uint32_t)t;
        nh += seg_close(o->cen, o->tol2, (uint32_t)i, (uint32_t)t);
    }
    for (int h = 0; h < nh; h++)
        seg_union(o->parent, (uint32_t)i, hit[h]);
}

/* Join the voxels at sorted positions [s, e) (one column) with those at
 * [a, b) (a forward column) whose keys lie within two z cells of key +
 * off.  The window moves up with the key, so one cursor walks [a, b) once. */
static void seg_join_runs(const struct seg_sorted *o, size_t s, size_t e, size_t a, size_t b,
                          int64_t off)
{
    for (size_t i = s; i < e && a < b; i++) {
        uint64_t from = o->key[i] + (uint64_t)(off - 2), to = o->key[i] + (uint64_t)(off + 2);
        while (a < b && o->key[a] < from)
            a++;
        seg_join_window(o, i, a, b, to);
    }
}

/* Joins over the sorted voxels: the keys fall into columns (runs of equal
 * x, y), and the forward columns of column (x, y) are (x, y+1..y+2) and
 * (x+1..x+2, y-2..y+2): for each dx one range of consecutive columns, which
 * a cursor per dx finds as it walks up the columns.  So only columns that
 * hold voxels are visited.  col, at: scratch of n + 1.  by, bz: bits of
 * the y and z key fields. */
static void seg_join_sorted(const struct seg_sorted *o, size_t n, int by, int bz, uint64_t *col,
                            uint32_t *at)
{
    size_t ncol = 0;  /* col[c] = x, y key of column c, at[c] its first position */
    for (size_t i = 0; i < n; i++)
        if (!ncol || o->key[i] >> bz != col[ncol - 1])
            col[ncol] = o->key[i] >> bz, at[ncol++] = (uint32_t)i;
    at[ncol] = (uint32_t)n;
    size_t cur[3] = {0, 0, 0};
    for (size_t c = 0; c < ncol; c++) {
        size_t s = at[c], e = at[c + 1];
        for (size_t i = s; i < e; i++)  /* own column, dz 1..2 */
            seg_join_window(o, i, i + 1, e, o->key[i] + 2);
        for (int dx = 0; dx <= 2; dx++) {
            uint64_t x = col[c] + ((uint64_t)dx << by), lo = dx ? x - 2 : x + 1, hi = x + 2;
            while (cur[dx] < ncol && col[cur[dx]] < lo)
                cur[dx]++;
            for (size_t d = cur[dx]; d < ncol && col[d] <= hi; d++)
                seg_join_runs(o, s, e, at[d], at[d + 1], (int64_t)((col[d] - col[c]) << bz));
        }
    }
}

/* Join every voxel with the voxels of its forward 5x5x5 half block whose
 * centroids (cen: x, y, z, count per voxel) lie within sqrt(tol2).  The
 * joins run over sorted positions with the centroids copied into that
 * order (the walk then reads them in sequence); the components are handed
 * back as g->parent[v] = the lowest voxel id of v's component, the roots
 * seg_union gives.  0, or -1 when out of memory. */
static int seg_join(struct seg_grid *g, const double *cen, double tol2)
{
    size_t n = g->nvox;
    int lo[3] = {SEG_BIAS, SEG_BIAS, SEG_BIAS}, hi[3] = {-SEG_BIAS, -SEG_BIAS, -SEG_BIAS}, c[3];
    for (size_t v = 0; v < n; v++) {
        seg_unkey(g->vkey[v], c);
        for (int a = 0; a < 3; a++)
            lo[a] = c[a] < lo[a] ? c[a] : lo[a], hi[a] = c[a] > hi[a] ? c[a] : hi[a];
    }
    int bz = seg_field_bits(lo[2], hi[2]), by = seg_field_bits(lo[1], hi[1]), bx = seg_field_bits(lo[0], hi[0]);
    if (bx + by + bz > 62) {
        seg_join_probe(g, cen, tol2);
        return 0;
    }
    uint64_t *key = malloc(sizeof *key * (2 * n + 1));
    uint32_t *id = malloc(sizeof *id * (3 * n + 2));
    double *scen = malloc(sizeof *scen * 4 * (n + 1));
    if (!key || !id || !scen)
        return free(key), free(id), free(scen), -1;
    for (size_t v = 0; v < n; v++) {
        seg_unkey(g->vkey[v], c);
        key[v] = ((uint64_t)(c[0] - lo[0] + 2) << (by + bz)) | ((uint64_t)(c[1] - lo[1] + 2) << bz)
                 | (uint64_t)(c[2] - lo[2] + 2);
        id[v] = (uint32_t)v;
    }
    seg_radix(key, id, key + n, id + n, n, bx + by + bz);
    uint32_t *up = id + 2 * n + 1;  /* union-find over sorted positions */
    for (size_t i = 0; i < n; i++) {
        memcpy(scen + 4 * i, cen + 4 * (size_t)id[i], sizeof(double[4]));
        up[i] = (uint32_t)i;
    }
    struct seg_sorted o = {key, scen, up, tol2};
    seg_join_sorted(&o, n, by, bz, key + n, id + n);
    for (size_t i = 0; i < n; i++)  /* lowest voxel id per component, at its root */
        g->parent[id[i]] = UINT32_MAX;
    for (size_t i = 0; i < n; i++) {
        uint32_t *r = &g->parent[id[seg_find(up, (uint32_t)i)]];
        *r = id[i] < *r ? id[i] : *r;
    }
    for (size_t i = 0; i < n; i++)
        g->parent[id[i]] = g->parent[id[seg_find(up, (uint32_t)i)]];
    free(key);
    free(id);
    free(scen);
    return 0;
}

static void seg_grid_release(struct seg_grid *g)
{
    free(g->slot);
    free(g->parent);
    free(g->vkey);
    free(g->cen);
    free(g->pts);
}

/* *c = floor(x) for a coordinate x in cells, and 1 when that cell is in
 * the key's range (|floor(x)| < SEG_BIAS - 4).  Truncating and stepping
 * down below a negative non-integer is floor for |x| < 2^30; a larger |x|
 * (or NaN) is out of range either way. */
static int seg_cell(double x, int *c)
{
    if (!(fabs(x) < 1073741824.0))
        return 0;
    int t = (int)x;
    t -= x < t;
    *c = t;
    return t > -(SEG_BIAS - 4) && t < SEG_BIAS - 4;
}

/* Voxelise the kept points into g and join the voxels; vox[k] = voxel id
 * of point k or UINT32_MAX.  Voxel ids are given in the order of the
 * voxels' first points.  0, or -1 when out of memory (g may be partly
 * filled: release it either way). */
static int seg_grid_build(const struct sop_params *p, const float *xyzi, size_t n,
                          const uint8_t *ground, struct seg_grid *g, uint32_t *vox)
{
    memset(g, 0, sizeof *g);
    uint32_t *list = g->pts = malloc(sizeof *list * (n + 1));
    if (!list)
        return -1;
    size_t m = 0;  /* no branch: ground and other points alternate along a scan */
    for (size_t k = 0; k < n; k++) {
        list[m] = (uint32_t)k;
        m += !ground[k];
    }
    g->npts = m;
    size_t cap = 16;  /* at most m voxels: load 2/3 at most, a quarter or so on scans */
    while (cap < m + m / 2 + 16)
        cap <<= 1;
    g->slot = malloc(sizeof *g->slot * cap);
    g->parent = malloc(sizeof *g->parent * (m + 1));
    g->vkey = malloc(sizeof *g->vkey * (m + 1));
    double *cen = g->cen = malloc(sizeof *cen * 4 * (m + 1));  /* per voxel: sum x, y, z, count */
    if (!g->slot || !g->parent || !g->vkey || !cen)
        return -1;
    memset(g->slot, 0xff, sizeof *g->slot * cap);
    g->mask = cap - 1;
    memset(vox, 0xff, sizeof *vox * n);
    double inv = 2.0 / p->voxel_m, tol2 = p->voxel_m * p->voxel_m;
    uint64_t last = UINT64_MAX;  /* consecutive points of a scan line often share a voxel */
    uint32_t v = 0;
    for (size_t j = 0; j < m; j++) {
        const float *q = xyzi + 4 * (size_t)list[j];
        int c[3];
        if (!(seg_cell(q[0] * inv, &c[0]) && seg_cell(q[1] * inv, &c[1]) && seg_cell(q[2] * inv, &c[2])))
            continue;
        uint64_t key = seg_key(c[0], c[1], c[2]);
        if (key != last)
            last = key, v = seg_lookup(g, key, 1);
        vox[list[j]] = v;
        cen[4 * v] += q[0], cen[4 * v + 1] += q[1], cen[4 * v + 2] += q[2], cen[4 * v + 3] += 1;
    }
    for (uint32_t w = 0; w < g->nvox; w++)
        for (int a = 0; a < 3; a++)
            cen[4 * w + a] /= cen[4 * w + 3];
    return seg_join(g, cen, tol2);
}

/* Segment number per voxel: seg[v] for every voxel v, in first-point order
 * with the point-count limits applied, UINT32_MAX for dropped ones; cnt is
 * scratch of nvox.  Returns the number of segments.  Voxel ids follow the
 * voxels' first points, so a component's first point is that of its lowest
 * voxel id: numbering the components in voxel id order numbers them in
 * first-point order without a pass over the points. */
static size_t seg_number(const struct sop_params *p, struct seg_grid *g, uint32_t *seg, uint32_t *cnt)
{
    uint32_t nv = g->nvox, pending = UINT32_MAX - 1;  /* counted but not yet numbered */
    size_t ns = 0;
    for (uint32_t v = 0; v < nv; v++)
        seg[v] = seg_find(g->parent, v), cnt[v] = 0;
    for (uint32_t v = 0; v < nv; v++)  /* points per component (voxel counts are whole numbers) */
        cnt[seg[v]] += (uint32_t)g->cen[4 * v + 3];
    for (uint32_t v = 0; v < nv; v++)  /* cnt[root] becomes the root's number */
        if (seg[v] == v)
            cnt[v] = cnt[v] >= (uint32_t)p->min_points && cnt[v] <= (uint32_t)p->max_points
                     ? pending : UINT32_MAX;
    for (uint32_t v = 0; v < nv; v++)
        if (cnt[seg[v]] == pending)
            cnt[seg[v]] = (uint32_t)ns++;
    for (uint32_t v = 0; v < nv; v++)
        seg[v] = cnt[seg[v]];
    return ns;
}

/* The segments of out as point lists: seg[] per voxel (ns segments), vox[]
 * per point; every list in point order.  cur: scratch of ns + 1. */
static void seg_lists(const struct seg_grid *g, const uint32_t *vox, const uint32_t *seg,
                      size_t ns, uint32_t *cur, struct seg_set *out)
{
    memset(out->start, 0, sizeof *out->start * (ns + 1));
    for (uint32_t v = 0; v < g->nvox; v++)  /* segment sizes from the voxel counts */
        if (seg[v] != UINT32_MAX)
            out->start[seg[v] + 1] += (uint32_t)g->cen[4 * v + 3];
    for (size_t s = 0; s < ns; s++)
        out->start[s + 1] += out->start[s];
    memcpy(cur, out->start, sizeof *cur * (ns + 1));
    for (size_t j = 0; j < g->npts; j++) {  /* only the non-ground points can be in one */
        uint32_t k = g->pts[j], s = vox[k] == UINT32_MAX ? UINT32_MAX : seg[vox[k]];
        if (s != UINT32_MAX)
            out->idx[cur[s]++] = k;
    }
    out->n_seg = ns;
}

/* Drop the segments of out whose horizontal size sqrt(12 (l1 + l2)) (from
 * the x, y covariance: the diagonal of a uniformly filled rectangle with
 * that spread; it does not change when the sensor turns) is above
 * max_extent_m, keeping the others' order.  The sums run over each list
 * in point order, as they always did. */
static void seg_extent(const struct sop_params *p, const float *xyzi, struct seg_set *out)
{
    size_t kept = 0;
    uint32_t at = 0, s = 0;
    for (size_t sg = 0; sg < out->n_seg; sg++) {
        uint32_t e = out->start[sg + 1];
        double m[5] = {0, 0, 0, 0, 0};  /* n, sx, sy, sxx, syy */
        for (uint32_t j = s; j < e; j++) {
            double x = xyzi[4 * (size_t)out->idx[j]], y = xyzi[4 * (size_t)out->idx[j] + 1];
            m[0] += 1, m[1] += x, m[2] += y, m[3] += x * x, m[4] += y * y;
        }
        double var = m[3] / m[0] - (m[1] / m[0]) * (m[1] / m[0]) + m[4] / m[0]
                     - (m[2] / m[0]) * (m[2] / m[0]);
        if (sqrt(12 * fmax(var, 0)) <= p->max_extent_m) {  /* start[kept] is behind sg: free to reuse */
            if (at != s)
                memmove(out->idx + at, out->idx + s, sizeof *out->idx * (e - s));
            out->start[kept++] = at;
            at += e - s;
        }
        s = e;
    }
    out->start[kept] = at;
    out->n_seg = kept;
}

int seg_cluster(const struct sop_params *p, const float *xyzi, size_t n,
                const uint8_t *ground, struct seg_set *out)
{
    struct seg_grid g;
    int rc = -1;
    uint32_t *vox = malloc(sizeof *vox * (n ? n : 1)), *seg = NULL, *cnt = NULL;
    out->n_seg = 0;
    if (!vox || seg_grid_build(p, xyzi, n, ground, &g, vox))
        goto out;
    seg = malloc(sizeof *seg * (g.nvox + 1));
    cnt = malloc(sizeof *cnt * (g.nvox + 1));
    if (!seg || !cnt)
        goto out;
    size_t ns = seg_number(p, &g, seg, cnt);
    if (ns + 1 > out->cap_seg) {
        uint32_t *t = realloc(out->start, sizeof *t * (ns + 1));
        if (!t)
            goto out;
        out->start = t, out->cap_seg = ns + 1;
    }
    if (n > out->cap_pts) {
        uint32_t *t = realloc(out->idx, sizeof *t * n);
        if (!t)
            goto out;
        out->idx = t, out->cap_pts = n;
    }
    seg_lists(&g, vox, seg, ns, cnt, out);  /* cnt has nvox + 1 >= ns + 1 slots */
    seg_extent(p, xyzi, out);
    rc = 0;
out:
    if (vox)
        seg_grid_release(&g);
    free(vox);
    free(seg);
    free(cnt);
    return rc;
}

void seg_set_release(struct seg_set *s)
{
    if (!s)
        return;
    free(s->start);
    free(s->idx);
    memset(s, 0, sizeof *s);
}

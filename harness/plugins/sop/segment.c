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
 * offset), and the neighbours in each of the 13 forward columns (x + dx,
 * y + dy) form one key range, which a cursor per column walks once over the
 * whole sorted list.  The joins are those of the probing loop; union-find
 * with the smaller id as the root gives the same components whatever the
 * order of the joins.
 */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "harness/plugins/sop/sop.h"

#define SEG_BIAS 1048576  /* 2^20: grid coordinates are stored as 21-bit fields */

struct seg_grid {
    uint64_t *keys;   /* hash slots, UINT64_MAX = empty */
    uint32_t *slot_id;
    size_t mask;
    uint32_t *parent; /* union-find over voxel ids */
    uint64_t *vkey;   /* voxel id -> key */
    double *cen;      /* voxel id -> centroid x, y, z and point count */
    uint32_t nvox;
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
    while (g->keys[h] != UINT64_MAX) {
        if (g->keys[h] == key)
            return g->slot_id[h];
        h = (h + 1) & g->mask;
    }
    if (!add)
        return UINT32_MAX;
    g->keys[h] = key;
    g->slot_id[h] = g->nvox;
    g->vkey[g->nvox] = key;
    g->parent[g->nvox] = g->nvox;
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

/* Sort key[0..n) ascending, id[] along (LSD radix, 11 bits a pass over
 * the low `bits` bits); tk, ti scratch of n.  Stable, so equal keys keep
 * their order (keys here are distinct). */
static void seg_radix(uint64_t *key, uint32_t *id, uint64_t *tk, uint32_t *ti, size_t n, int bits)
{
    enum { D = 11, B = 1 << D };
    for (int shift = 0; shift < bits; shift += D) {
        size_t cnt[B];
        memset(cnt, 0, sizeof cnt);
        for (size_t k = 0; k < n; k++)
            cnt[(key[k] >> shift) & (B - 1)]++;
        for (size_t b = 0, sum = 0; b < B; b++) {
            size_t c = cnt[b];
            cnt[b] = sum, sum += c;
        }
        for (size_t k = 0; k < n; k++) {
            size_t at = cnt[(key[k] >> shift) & (B - 1)]++;
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

/* Join voxels v and w when their centroids lie within sqrt(tol2). */
static void seg_join_pair(struct seg_grid *g, const double *cen, double tol2, uint32_t v, uint32_t w)
{
    double ex = cen[4 * v] - cen[4 * w], ey = cen[4 * v + 1] - cen[4 * w + 1];
    double ez = cen[4 * v + 2] - cen[4 * w + 2];
    if (ex * ex + ey * ey + ez * ez <= tol2)
        seg_union(g->parent, v, w);
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
                        seg_join_pair(g, cen, tol2, v, w);
                }
    }
}

/* Join every voxel with the voxels of its forward 5x5x5 half block whose
 * centroids (cen: x, y, z, count per voxel) lie within sqrt(tol2).
 * 0, or -1 when out of memory. */
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
    uint32_t *id = malloc(sizeof *id * (2 * n + 1));
    if (!key || !id)
        return free(key), free(id), -1;
    for (size_t v = 0; v < n; v++) {
        seg_unkey(g->vkey[v], c);
        key[v] = ((uint64_t)(c[0] - lo[0] + 2) << (by + bz)) | ((uint64_t)(c[1] - lo[1] + 2) << bz)
                 | (uint64_t)(c[2] - lo[2] + 2);
        id[v] = (uint32_t)v;
    }
    seg_radix(key, id, key + n, id + n, n, bx + by + bz);
    /* the 13 forward columns: (0, 0) with dz 1..2, (0, 1..2) and (1..2, -2..2) with dz -2..2 */
    int64_t first[13], last[13];
    size_t cur[13];
    for (int o = 0, dx = 0; dx <= 2; dx++)
        for (int dy = dx ? -2 : 0; dy <= 2; dy++, o++) {
            int64_t off = dx * ((int64_t)1 << (by + bz)) + dy * ((int64_t)1 << bz);
            first[o] = off + (dx || dy ? -2 : 1), last[o] = off + 2, cur[o] = 0;
        }
    for (size_t i = 0; i < n; i++) {
        uint32_t v = id[i];
        for (int o = 0; o < 13; o++) {
            uint64_t from = key[i] + (uint64_t)first[o], to = key[i] + (uint64_t)last[o];
            while (cur[o] < n && key[cur[o]] < from)
                cur[o]++;
            for (size_t t = cur[o]; t < n && key[t] <= to; t++)
                seg_join_pair(g, cen, tol2, v, id[t]);
        }
    }
    free(key);
    free(id);
    return 0;
}

static void seg_grid_release(struct seg_grid *g)
{
    free(g->keys);
    free(g->slot_id);
    free(g->parent);
    free(g->vkey);
    free(g->cen);
}

/* Voxelise the kept points into g and join the voxels; vox[k] = voxel id
 * of point k or UINT32_MAX.  0, or -1 when out of memory (g may be partly
 * filled: release it either way). */
static int seg_grid_build(const struct sop_params *p, const float *xyzi, size_t n,
                          const uint8_t *ground, struct seg_grid *g, uint32_t *vox)
{
    size_t cap = 16;
    while (cap < 2 * n + 16)
        cap <<= 1;
    memset(g, 0, sizeof *g);
    g->keys = malloc(sizeof *g->keys * cap);
    g->slot_id = malloc(sizeof *g->slot_id * cap);
    g->parent = malloc(sizeof *g->parent * (n + 1));
    g->vkey = malloc(sizeof *g->vkey * (n + 1));
    double *cen = g->cen = calloc(4 * (n + 1), sizeof *cen);  /* per voxel: sum x, y, z, count */
    if (!g->keys || !g->slot_id || !g->parent || !g->vkey || !cen)
        return -1;
    memset(g->keys, 0xff, sizeof *g->keys * cap);
    g->mask = cap - 1;
    double inv = 2.0 / p->voxel_m, lim = SEG_BIAS - 4, tol2 = p->voxel_m * p->voxel_m;
    for (size_t k = 0; k < n; k++) {
        const float *q = xyzi + 4 * k;
        double fx = floor(q[0] * inv), fy = floor(q[1] * inv), fz = floor(q[2] * inv);
        vox[k] = UINT32_MAX;
        if (ground[k] || !(fabs(fx) < lim && fabs(fy) < lim && fabs(fz) < lim))
            continue;
        uint32_t v = vox[k] = seg_lookup(g, seg_key((int)fx, (int)fy, (int)fz), 1);
        cen[4 * v] += q[0], cen[4 * v + 1] += q[1], cen[4 * v + 2] += q[2], cen[4 * v + 3] += 1;
    }
    for (uint32_t v = 0; v < g->nvox; v++)
        for (int a = 0; a < 3; a++)
            cen[4 * v + a] /= cen[4 * v + 3];
    return seg_join(g, cen, tol2);
}

/* Segment id per voxel root: in first-point order, size limits applied.
 * Returns the number of segments; id[root] = UINT32_MAX for dropped ones. */
static size_t seg_number(const struct sop_params *p, const float *xyzi, size_t n,
                         struct seg_grid *g, const uint32_t *vox, uint32_t *id, uint32_t *cnt)
{
    size_t ns = 0;
    for (uint32_t v = 0; v < g->nvox; v++)
        id[v] = UINT32_MAX, cnt[v] = 0;
    for (size_t k = 0; k < n; k++)
        if (vox[k] != UINT32_MAX)
            cnt[seg_find(g->parent, vox[k])]++;
    uint32_t pending = UINT32_MAX - 1;  /* counted but not yet numbered */
    for (uint32_t v = 0; v < g->nvox; v++)
        if (g->parent[v] == v && cnt[v] >= (uint32_t)p->min_points
            && cnt[v] <= (uint32_t)p->max_points)
            id[v] = pending;
    for (size_t k = 0; k < n; k++) {
        if (vox[k] == UINT32_MAX)
            continue;
        uint32_t r = seg_find(g->parent, vox[k]);
        if (id[r] == pending)
            id[r] = (uint32_t)ns++;
    }
    /* horizontal size limit: sqrt(12 (l1 + l2)) from the x, y covariance,
     * the diagonal of a uniformly filled rectangle with that spread; it
     * does not change when the sensor turns */
    double *mom = calloc(6 * (ns ? ns : 1), sizeof *mom);  /* n, sx, sy, sxx, syy */
    uint32_t *remap = malloc(sizeof *remap * (ns ? ns : 1));
    if (!mom || !remap) {
        free(mom), free(remap);
        return (size_t)-1;
    }
    for (size_t k = 0; k < n; k++) {
        if (vox[k] == UINT32_MAX)
            continue;
        uint32_t sg = id[seg_find(g->parent, vox[k])];
        if (sg == UINT32_MAX)
            continue;
        double x = xyzi[4 * k], y = xyzi[4 * k + 1], *m = mom + 6 * sg;
        m[0] += 1, m[1] += x, m[2] += y, m[3] += x * x, m[4] += y * y;
    }
    size_t kept = 0;
    for (size_t sg = 0; sg < ns; sg++) {
        const double *m = mom + 6 * sg;
        double var = m[3] / m[0] - (m[1] / m[0]) * (m[1] / m[0]) + m[4] / m[0]
                     - (m[2] / m[0]) * (m[2] / m[0]);
        remap[sg] = sqrt(12 * fmax(var, 0)) <= p->max_extent_m ? (uint32_t)kept++ : UINT32_MAX;
    }
    for (uint32_t v = 0; v < g->nvox; v++)
        if (g->parent[v] == v && id[v] != UINT32_MAX)
            id[v] = remap[id[v]];
    free(mom);
    free(remap);
    return kept;
}

int seg_cluster(const struct sop_params *p, const float *xyzi, size_t n,
                const uint8_t *ground, struct seg_set *out)
{
    struct seg_grid g;
    int rc = -1;
    uint32_t *vox = malloc(sizeof *vox * (n ? n : 1)), *id = NULL, *cnt = NULL;
    out->n_seg = 0;
    if (!vox || seg_grid_build(p, xyzi, n, ground, &g, vox))
        goto out;
    id = malloc(sizeof *id * (g.nvox + 1));
    cnt = malloc(sizeof *cnt * (g.nvox + 1));
    if (!id || !cnt)
        goto out;
    size_t ns = seg_number(p, xyzi, n, &g, vox, id, cnt);
    if (ns == (size_t)-1)
        goto out;
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
    memset(out->start, 0, sizeof *out->start * (ns + 1));
    for (size_t k = 0; k < n; k++)  /* the point's segment, reusing vox */
        vox[k] = vox[k] == UINT32_MAX ? UINT32_MAX : id[seg_find(g.parent, vox[k])];
    for (size_t k = 0; k < n; k++)
        if (vox[k] != UINT32_MAX)
            out->start[vox[k] + 1]++;
    for (size_t s = 0; s < ns; s++)
        out->start[s + 1] += out->start[s];
    for (size_t s = 0; s <= ns; s++)
        cnt[s] = out->start[s];  /* fill cursors (cnt has nvox+1 >= ns+1 slots) */
    for (size_t k = 0; k < n; k++)
        if (vox[k] != UINT32_MAX)
            out->idx[cnt[vox[k]]++] = (uint32_t)k;
    out->n_seg = ns;
    rc = 0;
out:
    if (vox)
        seg_grid_release(&g);
    free(vox);
    free(id);
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

/* test_sop_segment.c: sop's voxel joins through the sorted dense keys
 * against the plain loop they replaced (probing the voxel table for each
 * of the 62 forward neighbours): every voxel must end in the same
 * component, on scans of the test street (tests/test_sop_scene.h), on
 * random clouds at several voxel sizes, and on a cloud too wide for the
 * dense key (which takes the probing loop itself). */
#include "harness/plugins/sop/segment.c"
#include "tests/check.h"
#include "tests/test_sop_scene.h"

#define CAP (SCENE_CHANNELS * SCENE_AZIMUTHS)

/* 1 when the dense join and the probing join give every voxel of the
 * cloud the same root; -1 when the grid could not be built. */
static int same_components(double voxel_m, const float *xyzi, size_t n)
{
    struct sop_params p;
    memset(&p, 0, sizeof p);
    p.voxel_m = voxel_m;
    uint8_t *ground = calloc(n + 1, 1);
    uint32_t *vox = malloc(sizeof *vox * (n + 1)), *root = NULL;
    struct seg_grid g;
    int same = -1;
    if (!ground || !vox || seg_grid_build(&p, xyzi, n, ground, &g, vox)) goto out;
    root = malloc(sizeof *root * (g.nvox + 1));
    if (!root) goto out;
    for (uint32_t v = 0; v < g.nvox; v++) root[v] = seg_find(g.parent, v);
    for (uint32_t v = 0; v < g.nvox; v++) g.parent[v] = v;
    seg_join_probe(&g, g.cen, voxel_m * voxel_m);
    same = 1;
    for (uint32_t v = 0; v < g.nvox; v++) same &= root[v] == seg_find(g.parent, v);
out:
    if (vox) seg_grid_release(&g);
    free(ground);
    free(vox);
    free(root);
    return same;
}

static void street(void)
{
    static struct scene w;
    static float pts[4 * CAP];
    int ok = 1;
    scene_make(&w, 3);
    for (int r = 0; r < 4; r++) {
        size_t n = scene_scan(&w, 7.0 * r, 0.3, 0.2 * r, pts, CAP);
        ok &= same_components(0.8, pts, n) == 1 && same_components(0.3, pts, n) == 1;
    }
    CHECK(ok, "street scans: the dense join gives the probing loop's components");
}

static void random_clouds(void)
{
    enum { N = 6000 };
    static float pts[4 * N];
    unsigned s = 5;
    int ok = 1;
    for (int c = 0; c < 6; c++) {
        double spread = c < 3 ? 4 : 40;
        for (size_t k = 0; k < N; k++)
            for (int a = 0; a < 3; a++) pts[4 * k + a] = (float)(spread * (2 * scene_rand(&s) - 1) * (a == 2 ? 0.2 : 1));
        ok &= same_components(0.5 + 0.3 * c, pts, N) == 1;
    }
    CHECK(ok, "random clouds, six voxel sizes: the dense join gives the probing loop's components");
    for (size_t k = 0; k < N; k++) {  /* far apart on every axis: a dense key would need 66 bits */
        pts[4 * k] = (float)((k % 2 ? 1 : -1) * 3.0e5 + scene_rand(&s));
        pts[4 * k + 1] = (float)((k % 3 ? 1 : -1) * 3.0e5 + scene_rand(&s));
        pts[4 * k + 2] = (float)((k % 5 ? 1 : -1) * 3.0e5 + scene_rand(&s));
    }
    CHECK(same_components(0.6, pts, N) == 1, "a cloud too wide for the dense key: joined by the probing loop");
}

int main(void)
{
    street();
    random_clouds();
    return check_done();
}

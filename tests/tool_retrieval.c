/* tool_retrieval.c: run retrieval on float32 files for tests/xcheck_retrieval.py.
 *
 *   tool_retrieval reloc KIND K DIM map.f32 query.f32 [TOPC]
 *   tool_retrieval loop  KIND K DIM map.f32 times.f64 EXCL_S [TOPC]
 *   tool_retrieval loopn KIND K DIM map.f32 EXCL_SCANS [TOPC]
 * KIND: l2 | cosine | l1 (custom distance, no key) | l1key (custom, key =
 * the first 4 entries, prefilter top TOPC).  Prints "i j d j d ..." per query.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <math.h>

#include "harness/base/fileio.h"
#include "harness/run/retrieval.h"

static int tool_l1(const void *ctx, const float *a, const float *const *b, size_t n, double *out, struct err *e)
{
    (void)e;
    uint32_t dim = *(const uint32_t *)ctx;
    for (size_t t = 0; t < n; t++) {
        double s = 0;
        for (uint32_t k = 0; k < dim; k++) s += fabs((double)a[k] - b[t][k]);
        out[t] = s;
    }
    return 0;
}

static float *tool_keys(const struct retrieval_mat *m)
{
    float *k = malloc((m->n ? m->n : 1) * 4 * sizeof *k);
    for (size_t i = 0; k && i < m->n; i++) memcpy(k + 4 * i, m->v + i * m->dim, 4 * sizeof *k);
    return k;
}

int main(int argc, char **argv)
{
    if (argc < 7) return fprintf(stderr, "usage: see the file banner\n"), 2;
    struct err e;
    int k = atoi(argv[3]);
    uint32_t dim = (uint32_t)atoi(argv[4]);
    char *mb, *qb = NULL;
    size_t ml, ql = 0;
    if (fileio_read(argv[5], 1u << 30, &mb, &ml, &e)) return fprintf(stderr, "%s\n", e.msg), 2;
    struct retrieval_mat map = {(const float *)mb, ml / 4 / dim, dim}, q = map;
    struct retrieval_rule rule = {0, NULL, 0, -1, NULL};
    int argi = 7;
    if (!strcmp(argv[1], "reloc")) {
        if (fileio_read(argv[6], 1u << 30, &qb, &ql, &e)) return fprintf(stderr, "%s\n", e.msg), 2;
        q = (struct retrieval_mat){(const float *)qb, ql / 4 / dim, dim};
    } else if (!strcmp(argv[1], "loop")) {
        if (fileio_read(argv[6], 1u << 30, &qb, &ql, &e)) return fprintf(stderr, "%s\n", e.msg), 2;
        rule = (struct retrieval_rule){1, (const double *)qb, atof(argv[7]), -1, NULL};
        argi = 8;
    } else {
        rule = (struct retrieval_rule){1, NULL, 0, atol(argv[6]), NULL};
    }
    int topc = argc > argi ? atoi(argv[argi]) : k;
    struct retrieval_out r;
    int rc;
    if (!strcmp(argv[2], "l2") || !strcmp(argv[2], "cosine")) {
        rc = retrieval_dense(&map, &q, !strcmp(argv[2], "l2") ? RV_DIST_L2 : RV_DIST_COSINE, &rule, k, 2, &r, &e);
    } else {
        float *mk = tool_keys(&map), *qk = tool_keys(&q);
        struct retrieval_mat mkm = {mk, map.n, 4}, qkm = {qk, q.n, 4};
        int key = !strcmp(argv[2], "l1key");
        rc = retrieval_custom(&map, &q, key ? &mkm : NULL, key ? &qkm : NULL, tool_l1, &dim, "l1", &rule, k, topc,
                              2, &r, &e);
        free(mk);
        free(qk);
    }
    if (rc) return fprintf(stderr, "%s\n", e.msg), 2;
    for (size_t i = 0; i < r.n_query; i++) {
        printf("%zu", i);
        for (int c = 0; c < r.count[i]; c++) printf(" %d %.9g", r.idx[i * r.k + c], r.dist[i * r.k + c]);
        printf("\n");
    }
    retrieval_out_free(&r);
    free(mb);
    free(qb);
    return 0;
}

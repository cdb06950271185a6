/* tool_sop.c: sop's feature and transform steps for the numpy cross-check
 * (tests/xcheck_sop.py).
 *   tool_sop features SEG.bin A B C HIST_BINS   F_a of the points (ground z = A x + B y + C)
 *   tool_sop power ALPHA < matrix               "D" then D x D numbers in; transformed out
 * Numbers are printed with 17 significant digits. */
#include "harness/plugins/sop/gjk.c"
#include "harness/plugins/sop/ground.c"
#include "harness/plugins/sop/segment.c"
#include "harness/plugins/sop/features.c"
#include "harness/plugins/sop/context.c"
#include "harness/plugins/sop/pool.c"
#include "harness/plugins/sop/sop.c"

static int tool_features(char **argv)
{
    FILE *f = fopen(argv[2], "rb");
    if (!f)
        return fprintf(stderr, "tool_sop: cannot open %s\n", argv[2]), 2;
    fseek(f, 0, SEEK_END);
    size_t n = (size_t)ftell(f) / 16;
    fseek(f, 0, SEEK_SET);
    float *xyzi = malloc(16 * (n ? n : 1));
    uint32_t *idx = malloc(sizeof *idx * (n ? n : 1));
    if (!xyzi || !idx || fread(xyzi, 16, n, f) != n || n == 0)
        return fprintf(stderr, "tool_sop: cannot read %s\n", argv[2]), 2;
    fclose(f);
    double v[S_COUNT], plane[3] = {atof(argv[3]), atof(argv[4]), atof(argv[5])};
    for (int k = 0; k < S_COUNT; k++)
        v[k] = sop_settings[k].def;
    v[S_BINS] = atof(argv[6]);
    struct sop_params p;
    sop_params_from(v, &p);
    for (size_t k = 0; k < n; k++)
        idx[k] = (uint32_t)k;
    double c[3], out[SOP_FA_MAX], axis[2];
    feat_compute(&p, xyzi, idx, (uint32_t)n, plane, c, out, axis);
    for (int k = 0; k < feat_dim(&p); k++)
        printf("%.17g%c", out[k], k + 1 < feat_dim(&p) ? ' ' : '\n');
    free(xyzi);
    free(idx);
    return 0;
}

static int tool_power(char **argv)
{
    int d;
    if (scanf("%d", &d) != 1 || d < 1 || d > 64)
        return fprintf(stderr, "tool_sop: expected a size 1..64\n"), 2;
    double *m = malloc(sizeof *m * (size_t)d * d);
    if (!m)
        return 2;
    for (int k = 0; k < d * d; k++)
        if (scanf("%lf", &m[k]) != 1)
            return fprintf(stderr, "tool_sop: expected %d numbers\n", d * d), 2;
    if (pool_power(m, d, atof(argv[2])))
        return fprintf(stderr, "tool_sop: svd failed\n"), 2;
    for (int k = 0; k < d * d; k++)
        printf("%.17g%c", m[k], (k + 1) % d ? ' ' : '\n');
    free(m);
    return 0;
}

int main(int argc, char **argv)
{
    if (argc == 7 && !strcmp(argv[1], "features"))
        return tool_features(argv);
    if (argc == 3 && !strcmp(argv[1], "power"))
        return tool_power(argv);
    fprintf(stderr, "usage: tool_sop features SEG.bin A B C HIST_BINS | tool_sop power ALPHA\n");
    return 2;
}

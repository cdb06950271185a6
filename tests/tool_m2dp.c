/* tool_m2dp.c: print the M2DP count matrix and signature of a scan, for the
 * numpy cross-check (tests/xcheck_m2dp.py).
 *   tool_m2dp SCAN.bin AZIMUTHS ELEVATIONS RINGS SECTORS
 * SCAN.bin holds float32 x y z intensity records.  Output: "rows cols", then
 * the matrix one row per line, then the signature on one line. */
#include "harness/plugins/m2dp/m2dp.c"

int main(int argc, char **argv)
{
    if (argc != 6) {
        fprintf(stderr, "usage: tool_m2dp SCAN.bin AZIMUTHS ELEVATIONS RINGS SECTORS\n");
        return 2;
    }
    FILE *f = fopen(argv[1], "rb");
    if (!f)
        return fprintf(stderr, "tool_m2dp: cannot open %s\n", argv[1]), 2;
    fseek(f, 0, SEEK_END);
    long bytes = ftell(f);
    fseek(f, 0, SEEK_SET);
    size_t n = (size_t)bytes / 16;
    float *xyzi = malloc(16 * (n ? n : 1));
    if (!xyzi || fread(xyzi, 16, n, f) != n)
        return fprintf(stderr, "tool_m2dp: cannot read %s\n", argv[1]), 2;
    fclose(f);
    double v[SET_COUNT] = {atof(argv[2]), atof(argv[3]), atof(argv[4]), atof(argv[5]), 0};
    void *inst;
    uint32_t dim, kd;
    char msg[256];
    if (m2dp_new(v, &inst, &dim, &kd, msg, sizeof msg) != RV_OK)
        return fprintf(stderr, "tool_m2dp: %s\n", msg), 2;
    const struct m2dp *m = inst;
    int rows = m->p * m->q, cols = m->l * m->t;
    double *a = malloc(sizeof *a * (size_t)rows * cols), *sig = malloc(sizeof *sig * dim);
    if (!a || !sig || m2dp_signature(m, xyzi, n, sig, a, msg, sizeof msg) != RV_OK)
        return fprintf(stderr, "tool_m2dp: %s\n", msg), 2;
    printf("%d %d\n", rows, cols);
    for (int i = 0; i < rows; i++)
        for (int j = 0; j < cols; j++)
            printf("%g%c", a[(size_t)i * cols + j], j + 1 < cols ? ' ' : '\n');
    for (uint32_t k = 0; k < dim; k++)
        printf("%.17g%c", sig[k], k + 1 < dim ? ' ' : '\n');
    free(a);
    free(sig);
    free(xyzi);
    m2dp_free(inst);
    return 0;
}

/* tool_scan_context.c: print the Scan Context images, ring keys and pair
 * distances of scans, for the numpy cross-check (tests/xcheck_scan_context.py).
 *   tool_scan_context SCAN.bin...
 * Each SCAN.bin holds float32 x y z intensity records; the settings are the
 * defaults (20 rings, 60 sectors, 80 m, lift 2 m).  Output: one line per
 * scan with its 1200 image values then its 20 key values, then one line per
 * ordered pair "i j distance shift". */
#include "harness/plugins/scan-context/scan_context.c"
#include "harness/plugins/scan-context/sc_distance.c"
#include "harness/plugins/scan-context/sc_image.c"

static float *tsc_read(const char *path, size_t *n)
{
    FILE *f = fopen(path, "rb");
    if (!f) return NULL;
    float *xyzi = NULL;
    long bytes = fseek(f, 0, SEEK_END) ? -1 : ftell(f);
    if (bytes >= 0 && !fseek(f, 0, SEEK_SET)) {
        *n = (size_t)bytes / 16;
        xyzi = malloc(16 * (*n ? *n : 1));
        if (xyzi && fread(xyzi, 16, *n, f) != *n) {
            free(xyzi);
            xyzi = NULL;
        }
    }
    fclose(f);
    return xyzi;
}

int main(int argc, char **argv)
{
    if (argc < 2) return fprintf(stderr, "usage: tool_scan_context SCAN.bin...\n"), 2;
    double v[4] = {20, 60, 80, 2};
    void *inst;
    uint32_t dim, kd;
    char msg[64];
    if (sc_create(v, &inst, &dim, &kd, msg, sizeof msg) != RV_OK) return 2;
    int n = argc - 1;
    float *img = malloc(sizeof *img * dim * (size_t)n), key[20];
    if (!img) return 2;
    for (int i = 0; i < n; i++) {
        size_t pts;
        float *xyzi = tsc_read(argv[1 + i], &pts);
        if (!xyzi) return fprintf(stderr, "tool_scan_context: cannot read %s\n", argv[1 + i]), 2;
        sc_image(inst, xyzi, pts, img + (size_t)i * dim, key);
        free(xyzi);
        for (uint32_t c = 0; c < dim; c++) printf("%.9g ", img[(size_t)i * dim + c]);
        for (uint32_t c = 0; c < kd; c++) printf("%.9g%c", key[c], c + 1 < kd ? ' ' : '\n');
    }
    for (int i = 0; i < n; i++)
        for (int j = 0; j < n; j++) {
            int32_t k = -1;
            double d = sc_distance(inst, img + (size_t)i * dim, img + (size_t)j * dim, &k);
            printf("%d %d %.17g %d\n", i, j, d, (int)k);
        }
    free(img);
    sc_destroy(inst);
    return 0;
}

/* tool_scan.c: a helper for tests/xcheck_scan*.py.
 *
 *   tool_scan dump IN            print "n N ring R time T" then one line per
 *                                point: x y z i [ring] [time] (9 digits)
 *   tool_scan finite IN          the same after scan_read_finite (points with
 *                                a non-finite coordinate dropped), with
 *                                "dropped D" after the first line
 *   tool_scan convert IN OUT     read IN (layout by extension), write OUT:
 *                                .bin raw, .pcd PCD binary, .ply PLY binary,
 *                                .txt text; "-ascii" before the extension
 *                                (a-ascii.pcd, a-ascii.ply) writes ascii;
 *                                "-compressed.pcd" writes binary_compressed
 * Exit 2 with the message on stderr when a read or write fails.
 */
#include <stdio.h>
#include <string.h>

#include "harness/io/pcd.h"
#include "harness/io/ply.h"
#include "harness/io/scan_io.h"

static int ends_with(const char *s, const char *tail)
{
    size_t a = strlen(s), b = strlen(tail);
    return a >= b && !strcmp(s + a - b, tail);
}

static int dump(const struct cloud *c, long dropped)
{
    printf("n %zu ring %d time %d\n", c->n, c->ring != NULL, c->time != NULL);
    if (dropped >= 0) printf("dropped %ld\n", dropped);
    for (size_t k = 0; k < c->n; k++) {
        printf("%.9g %.9g %.9g %.9g", CLOUD_X(c, k), CLOUD_Y(c, k), CLOUD_Z(c, k), CLOUD_I(c, k));
        if (c->ring) printf(" %u", (unsigned)c->ring[k]);
        if (c->time) printf(" %.9g", c->time[k]);
        putchar('\n');
    }
    return 0;
}

int main(int argc, char **argv)
{
    struct err e;
    struct cloud c;
    cloud_init(&c);
    int rc = 2;
    if (argc == 3 && !strcmp(argv[1], "dump")) {
        if (!scan_read(argv[2], SCAN_AUTO, &c, &e)) rc = dump(&c, -1);
    } else if (argc == 3 && !strcmp(argv[1], "finite")) {
        size_t d;
        if (!scan_read_finite(argv[2], SCAN_AUTO, &c, &d, &e)) rc = dump(&c, (long)d);
    } else if (argc == 4 && !strcmp(argv[1], "convert")) {
        const char *out = argv[3];
        if (!scan_read(argv[2], SCAN_AUTO, &c, &e)) {
            if (ends_with(out, "-ascii.pcd")) rc = pcd_write_ascii(out, &c, &e) ? 2 : 0;
            else if (ends_with(out, "-ascii.ply")) rc = ply_write_ascii(out, &c, &e) ? 2 : 0;
            else if (ends_with(out, "-compressed.pcd")) rc = pcd_write_compressed(out, &c, &e) ? 2 : 0;
            else rc = scan_write(out, scan_layout_from_path(out), &c, &e) ? 2 : 0;
        }
    } else {
        snprintf(e.msg, sizeof e.msg, "usage: tool_scan dump IN | finite IN | convert IN OUT");
    }
    if (rc) fprintf(stderr, "%s\n", e.msg);
    cloud_free(&c);
    return rc;
}

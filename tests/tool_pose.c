/* tool_pose.c: a helper for tests/xcheck_pose*.py.
 *
 *   tool_pose q2m            stdin "qx qy qz qw" lines -> "r00 ... r22" (or "error MSG")
 *   tool_pose m2q            stdin 9 numbers per line  -> "qx qy qz qw"
 *   tool_pose read IN LAYOUT [TIMES] OUT.csv
 *                            read a pose file, write it back as CSV
 *   tool_pose write IN.csv LAYOUT OUT [TIMES]
 *                            read a CSV pose file, write it in LAYOUT
 *   tool_pose loaded REC OUT.csv
 *                            the poses of a recording as loaded (extrinsic applied)
 */
#include <stdio.h>
#include <string.h>

#include "harness/base/pose.h"
#include "harness/io/poses_io.h"
#include "harness/io/recording.h"

static int q2m(void)
{
    double q[4];
    const double p[3] = {0, 0, 0};
    while (scanf("%lf %lf %lf %lf", &q[0], &q[1], &q[2], &q[3]) == 4) {
        struct pose a;
        struct err e;
        if (pose_from_quat(&a, 0, p, q, &e)) { printf("error %s\n", e.msg); continue; }
        for (int k = 0; k < 9; k++) printf("%.17g%c", a.R[k], k == 8 ? '\n' : ' ');
    }
    return 0;
}

static int m2q(void)
{
    double R[9];
    for (;;) {
        int got = 0;
        for (int k = 0; k < 9; k++) got += scanf("%lf", &R[k]) == 1;
        if (got != 9) break;
        double q[4];
        pose_mat_to_quat(R, q);
        printf("%.17g %.17g %.17g %.17g\n", q[0], q[1], q[2], q[3]);
    }
    return 0;
}

int main(int argc, char **argv)
{
    if (argc >= 2 && !strcmp(argv[1], "q2m")) return q2m();
    if (argc == 4 && !strcmp(argv[1], "loaded")) {
        struct recording r;
        struct err e;
        if (recording_load(argv[2], 0, &r, &e)) { fprintf(stderr, "%s\n", e.msg); return 2; }
        int rc = poses_write(argv[3], POSES_CSV, r.poses, r.n, NULL, &e) ? 2 : 0;
        if (rc) fprintf(stderr, "%s\n", e.msg);
        recording_free(&r);
        return rc;
    }
    if (argc >= 2 && !strcmp(argv[1], "m2q")) return m2q();
    struct err e;
    struct poses ps;
    enum poses_layout lay;
    if ((argc == 5 || argc == 6) && !strcmp(argv[1], "read")) {
        if (poses_layout_parse(argv[3], &lay, &e) ||
            poses_read(argv[2], lay, argc == 6 ? argv[4] : NULL, &ps, &e) ||
            poses_write(argv[argc - 1], POSES_CSV, ps.v, ps.n, NULL, &e)) {
            fprintf(stderr, "%s\n", e.msg);
            return 2;
        }
        printf("%s %zu\n", poses_layout_name(ps.layout), ps.n);
        poses_free(&ps);
        return 0;
    }
    if ((argc == 5 || argc == 6) && !strcmp(argv[1], "write")) {
        if (poses_layout_parse(argv[3], &lay, &e) || poses_read(argv[2], POSES_CSV, NULL, &ps, &e) ||
            poses_write(argv[4], lay, ps.v, ps.n, argc == 6 ? argv[5] : NULL, &e)) {
            fprintf(stderr, "%s\n", e.msg);
            return 2;
        }
        poses_free(&ps);
        return 0;
    }
    fprintf(stderr, "usage: tool_pose q2m | m2q | read IN LAYOUT [TIMES] OUT | write IN LAYOUT OUT [TIMES]\n");
    return 2;
}

/* test_log_decoders.c: the message cursor (ROS 1 and CDR), the PointCloud2
 * decoder, pose tracks between samples, transform chains and SHA-256.
 * The CDR seed in tests/corpus/fuzz_cloud/cdr.msg is laid out by hand from
 * the OMG CDR rules (encapsulation header, alignment to each primitive's
 * size from the end of that header); the ROS 1 seed beside it was written
 * by python3-sensor-msgs' PointCloud2.serialize. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/io/rosmsg.h"
#include "harness/io/sha256.h"
#include "harness/io/track.h"
#include "harness/io/wire.h"
#include "tests/check.h"

static unsigned char *slurp(const char *path, size_t *n)
{
    FILE *f = fopen(path, "rb");
    if (!f) return NULL;
    unsigned char *b = malloc(1 << 16);
    *n = b ? fread(b, 1, 1 << 16, f) : 0;
    fclose(f);
    return b;
}

static void test_clouds(const char *root)
{
    char path[4096];
    struct err e;
    struct cloud c[2];
    const char *names[2] = {"ros1.msg", "cdr.msg"};
    for (int k = 0; k < 2; k++) {
        cloud_init(&c[k]);
        snprintf(path, sizeof path, "%s/tests/corpus/fuzz_cloud/%s", root, names[k]);
        size_t n = 0;
        unsigned char *b = slurp(path, &n);
        struct wire w;
        struct rosmsg_header h;
        int ok = b && n > 1 && !wire_begin(&w, b + 1, n - 1, k ? WIRE_CDR : WIRE_ROS1, &e) &&
                 !rosmsg_cloud(&w, &h, &c[k], &e);
        CHECK(ok && c[k].n == 3 && c[k].ring && !strcmp(h.frame, "l") && fabs(h.t - 5.000000001) < 1e-12,
              k ? "a CDR PointCloud2 decodes: 3 points, ring, frame and stamp" : "a ROS 1 PointCloud2 decodes");
        CHECK(ok && CLOUD_X(&c[k], 2) == 2 && CLOUD_Y(&c[k], 2) == 4 && CLOUD_Z(&c[k], 2) == 6 && c[k].ring[2] == 2,
              "point 2 is (2, 4, 6) on ring 2");
        if (k && b) {
            /* row_step cut below width x point_step */
            b[1 + n - 1 - 1 - 42 - 4 - 4] = 10;
            CHECK(!wire_begin(&w, b + 1, n - 1, WIRE_CDR, &e) && rosmsg_cloud(&w, &h, &c[k], &e) == -1 &&
                  c[k].n == 0, "a row_step shorter than its points is refused");
            CHECK_MSG(e.msg, "width 3 x point_step 14 is more than row_step 10", "the message names the sizes");
            CHECK(!wire_begin(&w, b + 1, 30, WIRE_CDR, &e) && rosmsg_cloud(&w, &h, &c[k], &e) == -1,
                  "a cut CDR message is refused");
            CHECK_MSG(e.msg, "at byte", "the message names the byte");
            b[2] = 7;
            CHECK(wire_begin(&w, b + 1, n - 1, WIRE_CDR, &e) == -1, "an unknown encapsulation is refused");
            CHECK_MSG(e.msg, "encapsulation 0x0007, expected 0x0000 (CDR big-endian) or 0x0001", "and named");
        }
        free(b);
    }
    cloud_free(&c[0]);
    cloud_free(&c[1]);
}

static void test_track(void)
{
    /* the worked case of track.h */
    struct track t;
    track_init(&t);
    struct pose a, b, out;
    struct err e;
    double p0[3] = {0, 0, 0}, p1[3] = {1, 2, 0}, q0[4] = {0, 0, 0, 1}, q1[4] = {0, 0, sin(0.5), cos(0.5)};
    pose_from_quat(&b, 0.1, p1, q1, &e);
    pose_from_quat(&a, 0.0, p0, q0, &e);
    track_push(&t, &b, &e);
    track_push(&t, &a, &e);
    CHECK(!track_finish(&t, "t", &e) && t.n == 2 && t.v[0].t == 0, "samples are sorted by time");
    char why[256];
    CHECK(!track_at(&t, 0.05, 0.2, &out, why, sizeof why), "midway between samples 0.1 s apart gives a pose");
    /* rotation about z by 1 rad, half of it at the midpoint (common practice, no source) */
    CHECK_NEAR(out.p[0], 0.5, 1e-12, "position is linear in time");
    CHECK_NEAR(out.q[2], sin(0.25), 1e-12, "rotation is half the angle at half the time (slerp)");
    CHECK(track_at(&t, 0.15, 0.2, &out, why, sizeof why) == 1, "after the last sample gives none");
    CHECK_MSG(why, "after the last pose", "and says why");
    CHECK(track_at(&t, 0.05, 0.05, &out, why, sizeof why) == 1, "samples further apart than the gap give none");
    CHECK_MSG(why, "0.100 s apart, more than the largest gap 0.050 s", "and says how far apart");
    track_free(&t);

    struct track_tree tr;
    track_tree_init(&tr);
    track_tree_add(&tr, "map", "odom", 1, &b, &e);
    track_tree_add(&tr, "odom", "base", 0, &a, &e);
    struct pose a2 = a;
    a2.t = 1;
    track_tree_add(&tr, "odom", "base", 0, &a2, &e);
    CHECK(!track_tree_finish(&tr, &e), "a tree of one static and one dynamic transform");
    CHECK(!track_tree_at(&tr, "base", "map", 0.5, 2, &out, why, sizeof why),
          "a chain walked child to parent (inverted) gives a pose");
    struct pose inv;
    pose_inverse(&b, &inv);
    CHECK_NEAR(out.p[0], inv.p[0], 1e-12, "base -> map is the inverse of map -> odom here");
    CHECK(track_tree_at(&tr, "map", "lidar", 0.5, 2, &out, why, sizeof why) == 1, "an unknown frame has no chain");
    CHECK_MSG(why, "no chain of transforms joins frame 'map' to frame 'lidar'", "and the reason names both frames");
    track_tree_free(&tr);
}

static void test_sha256(void)
{
    char hex[65];
    /* FIPS 180-2, appendix B.1 and B.2 examples */
    sha256_hex("abc", 3, hex);
    CHECK(!strcmp(hex, "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"), "SHA-256 of abc");
    const char *two = "abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq";
    sha256_hex(two, strlen(two), hex);
    CHECK(!strcmp(hex, "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1"),
          "SHA-256 of the two-block example");
}

int main(void)
{
    const char *root = getenv("REVISIT_ROOT");
    test_clouds(root ? root : ".");
    test_track();
    test_sha256();
    return check_done();
}

/* logwrite.c: a recording as a ROS 1 bag or an MCAP file (see logwrite.h;
 * the record layouts are those bag.h and mcap.h read). */
#include "harness/io/logwrite.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#include "harness/base/fileio.h"
#include "harness/io/recording.h"
#include "harness/io/scan_body.h"

/* A growing little-endian byte buffer; with cdr set, values are aligned to
 * their size counted from byte 4 (after the encapsulation header). */
struct logw_buf {
    unsigned char *p;
    size_t len, cap;
    int cdr, oom;
};

static void lw_raw(struct logw_buf *b, const void *v, size_t n)
{
    if (b->oom) return;
    if (b->len + n > b->cap) {
        size_t nc = b->cap ? b->cap : 256;
        while (nc < b->len + n) nc *= 2;
        unsigned char *np = realloc(b->p, nc);
        if (!np) { b->oom = 1; return; }
        b->p = np;
        b->cap = nc;
    }
    memcpy(b->p + b->len, v, n);
    b->len += n;
}

static void lw_align(struct logw_buf *b, size_t a)
{
    static const unsigned char zero[8] = {0};
    if (b->cdr && (b->len - 4) % a) lw_raw(b, zero, a - (b->len - 4) % a);
}

/* An unsigned value of n bytes, little-endian, aligned in CDR. */
static void lw_uint(struct logw_buf *b, uint64_t v, int n)
{
    unsigned char t[8];
    for (int k = 0; k < n; k++) t[k] = (unsigned char)(v >> (8 * k));
    lw_align(b, (size_t)n);
    lw_raw(b, t, (size_t)n);
}

static void lw_f64(struct logw_buf *b, double v)
{
    uint64_t u;
    memcpy(&u, &v, 8);
    lw_uint(b, u, 8);
}

static void lw_str(struct logw_buf *b, const char *s)
{
    size_t n = strlen(s);
    lw_uint(b, n + (b->cdr ? 1 : 0), 4);
    lw_raw(b, s, n + (b->cdr ? 1 : 0));
}

static void lw_stamp(struct logw_buf *b, double t, const char *frame)
{
    double sec = floor(t);
    uint64_t ns = (uint64_t)llround((t - sec) * 1e9);
    if (ns >= 1000000000u) { sec += 1; ns -= 1000000000u; }
    if (!b->cdr) lw_uint(b, 0, 4);  /* ROS 1 header seq */
    lw_uint(b, (uint64_t)(uint32_t)(int64_t)sec, 4);
    lw_uint(b, ns, 4);
    lw_str(b, frame);
}

static void lw_begin(struct logw_buf *b, int cdr)
{
    b->len = 0;
    b->cdr = cdr;
    if (cdr) lw_raw(b, "\x00\x01\x00\x00", 4);  /* CDR little-endian */
}

/* PointCloud2: x y z intensity float32, ring uint16, time float32, packed. */
static void lw_cloud(struct logw_buf *b, int cdr, double t, const struct cloud *c)
{
    static const char *const names[6] = {"x", "y", "z", "intensity", "ring", "time"};
    int nf = 4 + (c->ring != NULL) + (c->time != NULL);
    uint32_t step = 16 + (c->ring ? 2 : 0) + (c->time ? 4 : 0), off = 0;
    lw_begin(b, cdr);
    lw_stamp(b, t, "sensor");
    lw_uint(b, 1, 4);
    lw_uint(b, c->n, 4);
    lw_uint(b, (uint64_t)nf, 4);
    for (int k = 0; k < 6; k++) {
        if ((k == 4 && !c->ring) || (k == 5 && !c->time)) continue;
        lw_str(b, names[k]);
        lw_uint(b, off, 4);
        lw_uint(b, k == 4 ? 4 : 7, 1);  /* PointField UINT16 = 4, FLOAT32 = 7 */
        lw_uint(b, 1, 4);
        off += k == 4 ? 2 : 4;
    }
    lw_uint(b, 0, 1);
    lw_uint(b, step, 4);
    lw_uint(b, (uint64_t)step * c->n, 4);
    lw_uint(b, (uint64_t)step * c->n, 4);
    for (size_t k = 0; k < c->n; k++) {
        unsigned char rec[SCAN_BODY_RECORD_MAX];
        lw_raw(b, rec, scan_body_record(c, k, rec));
    }
    lw_uint(b, 1, 1);
}

/* Odometry: the pose, zero covariance, zero twist. */
static void lw_odom(struct logw_buf *b, int cdr, const struct pose *p)
{
    lw_begin(b, cdr);
    lw_stamp(b, p->t, "world");
    lw_str(b, "sensor");
    for (int k = 0; k < 3; k++) lw_f64(b, p->p[k]);
    for (int k = 0; k < 4; k++) lw_f64(b, p->q[k]);
    for (int k = 0; k < 36 + 6 + 36; k++) lw_f64(b, 0);
}

/* ---- ROS 1 bag: header fields "len name=value", records "hlen header dlen data" ---- */

static void lw_field(struct logw_buf *h, const char *name, const void *v, size_t n)
{
    lw_uint(h, strlen(name) + 1 + n, 4);
    lw_raw(h, name, strlen(name));
    lw_raw(h, "=", 1);
    lw_raw(h, v, n);
}

static void lw_field_u(struct logw_buf *h, const char *name, uint64_t v, int n)
{
    unsigned char t[8];
    for (int k = 0; k < n; k++) t[k] = (unsigned char)(v >> (8 * k));
    lw_field(h, name, t, (size_t)n);
}

static void lw_record(FILE *f, const struct logw_buf *h, const void *data, size_t n)
{
    unsigned char t[4];
    for (int k = 0; k < 4; k++) t[k] = (unsigned char)(h->len >> (8 * k));
    fwrite(t, 1, 4, f);
    fwrite(h->p, 1, h->len, f);
    for (int k = 0; k < 4; k++) t[k] = (unsigned char)(n >> (8 * k));
    fwrite(t, 1, 4, f);
    if (n) fwrite(data, 1, n, f);
}

/* The topics: name, ROS 1 type, its definition's MD5 (the ROS 1 message
 * checksums of these two standard types) and the ROS 2 schema name. */
static const struct {
    const char *topic, *type, *md5, *ros2;
} logw_topics[2] = {
    {"/points", "sensor_msgs/PointCloud2", "1158d486dd51d683ce2f1be655c3c181", "sensor_msgs/msg/PointCloud2"},
    {"/odom", "nav_msgs/Odometry", "cd5e73d190d741a2f92e81eda573aca7", "nav_msgs/msg/Odometry"},
};

static void lw_bag_start(FILE *f, struct logw_buf *h)
{
    fputs("#ROSBAG V2.0\n", f);
    lw_begin(h, 0);
    lw_field(h, "op", "\x03", 1);
    lw_field_u(h, "index_pos", 0, 8);  /* no index: a reader walks the records */
    lw_field_u(h, "conn_count", 2, 4);
    lw_field_u(h, "chunk_count", 0, 4);
    char pad[4096];
    memset(pad, ' ', sizeof pad);
    lw_record(f, h, pad, 4096 - 13 - 8 - h->len);
    for (uint32_t k = 0; k < 2; k++) {
        struct logw_buf d = {0};
        lw_begin(h, 0);
        lw_field(h, "op", "\x07", 1);
        lw_field_u(h, "conn", k, 4);
        lw_field(h, "topic", logw_topics[k].topic, strlen(logw_topics[k].topic));
        lw_field(&d, "topic", logw_topics[k].topic, strlen(logw_topics[k].topic));
        lw_field(&d, "type", logw_topics[k].type, strlen(logw_topics[k].type));
        lw_field(&d, "md5sum", logw_topics[k].md5, 32);
        lw_field(&d, "message_definition", "", 0);
        lw_record(f, h, d.p, d.len);
        h->oom |= d.oom;
        free(d.p);
    }
}

static void lw_bag_msg(FILE *f, struct logw_buf *h, uint32_t conn, double t, const struct logw_buf *m)
{
    double sec = floor(t);
    uint64_t ns = (uint64_t)llround((t - sec) * 1e9);
    if (ns >= 1000000000u) { sec += 1; ns -= 1000000000u; }
    lw_begin(h, 0);
    lw_field(h, "op", "\x02", 1);
    lw_field_u(h, "conn", conn, 4);
    lw_field_u(h, "time", (uint64_t)(uint32_t)sec | ns << 32, 8);
    lw_record(f, h, m->p, m->len);
}

/* ---- MCAP: "opcode, uint64 length, content" records ---- */

#define LW_SEP "\n================================================================================\nMSG: "
#define LW_HEADER "std_msgs/Header\nbuiltin_interfaces/Time stamp\nstring frame_id" LW_SEP \
                  "builtin_interfaces/Time\nint32 sec\nuint32 nanosec"
static const char *const logw_schemas[2] = {
    "std_msgs/Header header\nuint32 height\nuint32 width\nsensor_msgs/PointField[] fields\nbool is_bigendian\n"
    "uint32 point_step\nuint32 row_step\nuint8[] data\nbool is_dense" LW_SEP LW_HEADER LW_SEP
    "sensor_msgs/PointField\nstring name\nuint32 offset\nuint8 datatype\nuint32 count",
    "std_msgs/Header header\nstring child_frame_id\ngeometry_msgs/PoseWithCovariance pose\n"
    "geometry_msgs/TwistWithCovariance twist" LW_SEP LW_HEADER LW_SEP
    "geometry_msgs/PoseWithCovariance\ngeometry_msgs/Pose pose\nfloat64[36] covariance" LW_SEP
    "geometry_msgs/Pose\ngeometry_msgs/Point position\ngeometry_msgs/Quaternion orientation" LW_SEP
    "geometry_msgs/Point\nfloat64 x\nfloat64 y\nfloat64 z" LW_SEP
    "geometry_msgs/Quaternion\nfloat64 x 0\nfloat64 y 0\nfloat64 z 0\nfloat64 w 1" LW_SEP
    "geometry_msgs/TwistWithCovariance\ngeometry_msgs/Twist twist\nfloat64[36] covariance" LW_SEP
    "geometry_msgs/Twist\ngeometry_msgs/Vector3 linear\ngeometry_msgs/Vector3 angular" LW_SEP
    "geometry_msgs/Vector3\nfloat64 x\nfloat64 y\nfloat64 z",
};

static void lw_mcap_record(FILE *f, uint8_t op, const struct logw_buf *c)
{
    unsigned char t[9];
    t[0] = op;
    for (int k = 0; k < 8; k++) t[1 + k] = (unsigned char)((uint64_t)c->len >> (8 * k));
    fwrite(t, 1, 9, f);
    if (c->len) fwrite(c->p, 1, c->len, f);
}

static void lw_mcap_start(FILE *f, struct logw_buf *c)
{
    fwrite("\x89MCAP0\r\n", 1, 8, f);
    lw_begin(c, 0);
    lw_str(c, "ros2");
    lw_str(c, "revisit");
    lw_mcap_record(f, 0x01, c);
    for (uint16_t k = 0; k < 2; k++) {
        lw_begin(c, 0);
        lw_uint(c, k + 1u, 2);
        lw_str(c, logw_topics[k].ros2);
        lw_str(c, "ros2msg");
        lw_str(c, logw_schemas[k]);   /* uint32 length + bytes, as a string */
        lw_mcap_record(f, 0x03, c);
        lw_begin(c, 0);
        lw_uint(c, k, 2);
        lw_uint(c, k + 1u, 2);
        lw_str(c, logw_topics[k].topic);
        lw_str(c, "cdr");
        lw_uint(c, 0, 4);             /* empty metadata map */
        lw_mcap_record(f, 0x04, c);
    }
}

static void lw_mcap_msg(FILE *f, struct logw_buf *c, uint16_t ch, uint32_t seq, double t, const struct logw_buf *m)
{
    double sec = floor(t);
    uint64_t ns = (uint64_t)llround((t - sec) * 1e9), when = (uint64_t)sec * 1000000000u + ns;
    lw_begin(c, 0);
    lw_uint(c, ch, 2);
    lw_uint(c, seq, 4);
    lw_uint(c, when, 8);
    lw_uint(c, when, 8);
    lw_raw(c, m->p, m->len);
    lw_mcap_record(f, 0x05, c);
}

static void lw_mcap_end(FILE *f, struct logw_buf *c)
{
    lw_begin(c, 0);
    lw_uint(c, 0, 4);                 /* data end: no CRC */
    lw_mcap_record(f, 0x0f, c);
    lw_begin(c, 0);
    lw_uint(c, 0, 8);                 /* footer: no summary section */
    lw_uint(c, 0, 8);
    lw_uint(c, 0, 4);
    lw_mcap_record(f, 0x02, c);
    fwrite("\x89MCAP0\r\n", 1, 8, f);
}

enum logf_kind logw_kind_of(const char *path)
{
    const char *dot = strrchr(path, '.');
    if (dot && !strcasecmp(dot, ".bag")) return LOGF_BAG;
    if (dot && !strcasecmp(dot, ".mcap")) return LOGF_MCAP;
    return 0;
}

static int logw_scans(const struct recording *r, FILE *f, enum logf_kind kind, struct err *e)
{
    struct logw_buf h = {0}, m = {0};
    struct cloud c;
    cloud_init(&c);
    int rc = 0, cdr = kind == LOGF_MCAP;
    if (cdr) lw_mcap_start(f, &h);
    else lw_bag_start(f, &h);
    for (size_t k = 0; !rc && k < r->n; k++) {
        size_t dropped;
        if (recording_load_scan(r, k, &c, &dropped, e)) { rc = -1; break; }
        double t = r->poses[k].t;
        lw_cloud(&m, cdr, t, &c);
        if (cdr) lw_mcap_msg(f, &h, 0, (uint32_t)(2 * k), t, &m);
        else lw_bag_msg(f, &h, 0, t, &m);
        lw_odom(&m, cdr, &r->poses[k]);
        if (cdr) lw_mcap_msg(f, &h, 1, (uint32_t)(2 * k + 1), t, &m);
        else lw_bag_msg(f, &h, 1, t, &m);
        if (h.oom || m.oom) rc = err_set(e, "out of memory writing scan %zu", k);
    }
    if (!rc && cdr) lw_mcap_end(f, &h);
    free(h.p);
    free(m.p);
    cloud_free(&c);
    return rc;
}

int logw_recording(const char *rec_path, const char *log_path, enum logf_kind kind, struct err *e)
{
    if (kind != LOGF_BAG && kind != LOGF_MCAP)
        return err_at(e, log_path, 0, "unknown log kind, expected a file ending in .bag or .mcap");
    struct recording r;
    if (recording_load(rec_path, 0, &r, e)) return -1;
    for (size_t k = 0; k < r.n; k++)
        if (!(r.poses[k].t >= 0 && r.poses[k].t < 4294967296.0)) {
            recording_free(&r);
            return err_at(e, log_path, 0, "pose %zu has time %.9f, expected 0 to 2^32 s for a log stamp", k,
                          r.poses[k].t);
        }
    struct afile a;
    int rc = afile_open(&a, log_path, e);
    if (!rc && logw_scans(&r, a.f, kind, e)) {
        afile_abort(&a);
        rc = -1;
    } else if (!rc) {
        rc = afile_commit(&a, e);
    }
    recording_free(&r);
    return rc;
}

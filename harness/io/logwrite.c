/* logwrite.c: a recording as a robot log (see logwrite.h): the byte
 * buffer, the two message bodies, the topic table, and the walk over the
 * scans that hands each message to the container (logwrite_bag.c,
 * logwrite_mcap.c). */
#include "harness/io/logwrite.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#include "harness/base/fileio.h"
#include "harness/base/grow.h"
#include "harness/io/logwrite_out.h"
#include "harness/io/recording.h"
#include "harness/io/scan_body.h"

void logw_raw(struct logw_buf *b, const void *v, size_t n)
{
    if (b->oom) return;
    if (b->len + n < n || grow_reserve(&b->p, &b->cap, b->len + n, 1)) {
        b->oom = 1;
        return;
    }
    memcpy(b->p + b->len, v, n);
    b->len += n;
}

static void logw_align(struct logw_buf *b, size_t a)
{
    static const unsigned char zero[8] = {0};
    if (b->cdr && (b->len - 4) % a) logw_raw(b, zero, a - (b->len - 4) % a);
}

void logw_uint(struct logw_buf *b, uint64_t v, int n)
{
    unsigned char t[8];
    for (int k = 0; k < n; k++) t[k] = (unsigned char)(v >> (8 * k));
    logw_align(b, (size_t)n);
    logw_raw(b, t, (size_t)n);
}

static void logw_f64(struct logw_buf *b, double v)
{
    uint64_t u;
    memcpy(&u, &v, 8);
    logw_uint(b, u, 8);
}

void logw_str(struct logw_buf *b, const char *s)
{
    size_t n = strlen(s);
    logw_uint(b, n + (b->cdr ? 1 : 0), 4);
    logw_raw(b, s, n + (b->cdr ? 1 : 0));
}

void logw_begin(struct logw_buf *b, int cdr)
{
    b->len = 0;
    b->cdr = cdr;
    if (cdr) logw_raw(b, "\x00\x01\x00\x00", 4);  /* CDR little-endian */
}

void logw_write(struct logw_out *o, const void *p, size_t n)
{
    if (n) fwrite(p, 1, n, o->f);
    o->pos += n;
}

/* A message header: (ROS 1: seq,) sec, nsec, frame. */
static void logw_stamp(struct logw_buf *b, uint64_t t_ns, const char *frame)
{
    if (!b->cdr) logw_uint(b, 0, 4);  /* ROS 1 header seq */
    logw_uint(b, t_ns / 1000000000u, 4);
    logw_uint(b, t_ns % 1000000000u, 4);
    logw_str(b, frame);
}

/* PointCloud2: x y z intensity float32, ring uint16, time float32, packed. */
static void logw_cloud(struct logw_buf *b, int cdr, uint64_t t_ns, const struct cloud *c)
{
    static const char *const names[6] = {"x", "y", "z", "intensity", "ring", "time"};
    int nf = 4 + (c->ring != NULL) + (c->time != NULL);
    uint32_t step = 16 + (c->ring ? 2 : 0) + (c->time ? 4 : 0), off = 0;
    logw_begin(b, cdr);
    logw_stamp(b, t_ns, "sensor");
    logw_uint(b, 1, 4);
    logw_uint(b, c->n, 4);
    logw_uint(b, (uint64_t)nf, 4);
    for (int k = 0; k < 6; k++) {
        if ((k == 4 && !c->ring) || (k == 5 && !c->time)) continue;
        logw_str(b, names[k]);
        logw_uint(b, off, 4);
        logw_uint(b, k == 4 ? 4 : 7, 1);  /* PointField UINT16 = 4, FLOAT32 = 7 */
        logw_uint(b, 1, 4);
        off += k == 4 ? 2 : 4;
    }
    logw_uint(b, 0, 1);
    logw_uint(b, step, 4);
    logw_uint(b, (uint64_t)step * c->n, 4);
    logw_uint(b, (uint64_t)step * c->n, 4);
    for (size_t k = 0; k < c->n; k++) {
        unsigned char rec[SCAN_BODY_RECORD_MAX];
        logw_raw(b, rec, scan_body_record(c, k, rec));
    }
    logw_uint(b, 1, 1);
}

/* Odometry: the pose, zero covariance, zero twist. */
static void logw_odom(struct logw_buf *b, int cdr, uint64_t t_ns, const struct pose *p)
{
    logw_begin(b, cdr);
    logw_stamp(b, t_ns, "world");
    logw_str(b, "sensor");
    for (int k = 0; k < 3; k++) logw_f64(b, p->p[k]);
    for (int k = 0; k < 4; k++) logw_f64(b, p->q[k]);
    for (int k = 0; k < 36 + 6 + 36; k++) logw_f64(b, 0);
}

/* The message definitions, without comments: ROS 1 (in the bag's
 * connection records; the MD5 is the ROS 1 checksum of that definition)
 * and ROS 2 (the MCAP schemas, ros2msg). */
#define LOGW_SEP "\n================================================================================\nMSG: "
#define LOGW_R1_HEADER "std_msgs/Header\nuint32 seq\ntime stamp\nstring frame_id"
#define LOGW_R2_HEADER "std_msgs/Header\nbuiltin_interfaces/Time stamp\nstring frame_id" LOGW_SEP \
                       "builtin_interfaces/Time\nint32 sec\nuint32 nanosec"
#define LOGW_CLOUD(header, field_consts) \
    "std_msgs/Header header\nuint32 height\nuint32 width\nsensor_msgs/PointField[] fields\nbool is_bigendian\n" \
    "uint32 point_step\nuint32 row_step\nuint8[] data\nbool is_dense" LOGW_SEP header LOGW_SEP \
    "sensor_msgs/PointField\n" field_consts "string name\nuint32 offset\nuint8 datatype\nuint32 count"
#define LOGW_FIELD_CONSTS "uint8 INT8=1\nuint8 UINT8=2\nuint8 INT16=3\nuint8 UINT16=4\nuint8 INT32=5\n" \
                          "uint8 UINT32=6\nuint8 FLOAT32=7\nuint8 FLOAT64=8\n"
#define LOGW_ODOM(header, qdefault) \
    "std_msgs/Header header\nstring child_frame_id\ngeometry_msgs/PoseWithCovariance pose\n" \
    "geometry_msgs/TwistWithCovariance twist" LOGW_SEP header LOGW_SEP \
    "geometry_msgs/PoseWithCovariance\ngeometry_msgs/Pose pose\nfloat64[36] covariance" LOGW_SEP \
    "geometry_msgs/Pose\ngeometry_msgs/Point position\ngeometry_msgs/Quaternion orientation" LOGW_SEP \
    "geometry_msgs/Point\nfloat64 x\nfloat64 y\nfloat64 z" LOGW_SEP \
    "geometry_msgs/Quaternion\nfloat64 x" qdefault(0) "\nfloat64 y" qdefault(0) "\nfloat64 z" qdefault(0) \
    "\nfloat64 w" qdefault(1) LOGW_SEP \
    "geometry_msgs/TwistWithCovariance\ngeometry_msgs/Twist twist\nfloat64[36] covariance" LOGW_SEP \
    "geometry_msgs/Twist\ngeometry_msgs/Vector3 linear\ngeometry_msgs/Vector3 angular" LOGW_SEP \
    "geometry_msgs/Vector3\nfloat64 x\nfloat64 y\nfloat64 z"
#define LOGW_NO_DEFAULT(v) ""
#define LOGW_DEFAULT(v) " " #v

const struct logw_topic logw_topics[LOGW_TOPICS] = {
    [LOGW_POINTS] = {"/points", "sensor_msgs/PointCloud2", "1158d486dd51d683ce2f1be655c3c181",
                     LOGW_CLOUD(LOGW_R1_HEADER, LOGW_FIELD_CONSTS), "sensor_msgs/msg/PointCloud2",
                     LOGW_CLOUD(LOGW_R2_HEADER, "")},
    [LOGW_ODOM] = {"/odom", "nav_msgs/Odometry", "cd5e73d190d741a2f92e81eda573aca7",
                   LOGW_ODOM(LOGW_R1_HEADER, LOGW_NO_DEFAULT), "nav_msgs/msg/Odometry",
                   LOGW_ODOM(LOGW_R2_HEADER, LOGW_DEFAULT)},
};

enum logf_kind logw_kind_of(const char *path)
{
    const char *dot = strrchr(path, '.');
    if (dot && !strcasecmp(dot, ".bag")) return LOGF_BAG;
    if (dot && !strcasecmp(dot, ".mcap")) return LOGF_MCAP;
    return 0;
}

/* A stamp in whole nanoseconds (t is checked to lie in 0 .. 2^32 s). */
static uint64_t logw_ns(double t)
{
    double sec = floor(t);
    return (uint64_t)sec * 1000000000u + (uint64_t)llround((t - sec) * 1e9);
}

static void logw_out_free(struct logw_out *o)
{
    free(o->rec.p);
    free(o->chunk.p);
    free(o->tail.p);
    for (int k = 0; k < LOGW_TOPICS; k++) free(o->index[k].p);
}

static int logw_scans(const struct recording *r, FILE *f, enum logf_kind kind, struct err *e)
{
    const struct logw_container *w = kind == LOGF_MCAP ? &logw_mcap : &logw_bag;
    struct logw_out o = {.f = f};
    struct logw_buf m = {0};
    struct cloud c;
    cloud_init(&c);
    int rc = w->start(&o, e), cdr = kind == LOGF_MCAP;
    for (size_t k = 0; !rc && k < r->n; k++) {
        size_t dropped;
        if (recording_load_scan(r, k, &c, &dropped, e)) { rc = -1; break; }
        uint64_t t = logw_ns(r->poses[k].t);
        logw_cloud(&m, cdr, t, &c);
        rc = m.oom ? err_set(e, "out of memory writing scan %zu", k) : w->message(&o, LOGW_POINTS, t, &m, e);
        if (rc) break;
        logw_odom(&m, cdr, t, &r->poses[k]);
        rc = m.oom ? err_set(e, "out of memory writing scan %zu", k) : w->message(&o, LOGW_ODOM, t, &m, e);
    }
    if (!rc) rc = w->end(&o, e);
    logw_out_free(&o);
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

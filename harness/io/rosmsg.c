/* rosmsg.c: PointCloud2, odometry, pose and tf messages over a wire cursor.
 *
 * PointCloud2 as the message definition lays it out:
 *
 *     Header header            (ROS 1: uint32 seq, then stamp and frame_id)
 *     uint32 height, width
 *     PointField[] fields      (string name, uint32 offset, uint8 datatype, uint32 count)
 *     bool is_bigendian
 *     uint32 point_step, row_step
 *     uint8[] data             (height rows of row_step bytes; a point is
 *     bool is_dense             point_step bytes at row * row_step + col * point_step)
 */
#include "harness/io/rosmsg.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define ROSMSG_MAX_FIELDS 64

static const struct {
    enum rosmsg_type type;
    const char *pkg, *name;
} rosmsg_types[] = {
    {ROSMSG_CLOUD, "sensor_msgs", "PointCloud2"},
    {ROSMSG_ODOMETRY, "nav_msgs", "Odometry"},
    {ROSMSG_POSE, "geometry_msgs", "PoseStamped"},
    {ROSMSG_POSE_COV, "geometry_msgs", "PoseWithCovarianceStamped"},
    {ROSMSG_TF, "tf2_msgs", "TFMessage"},
};
#define ROSMSG_N_TYPES (sizeof rosmsg_types / sizeof rosmsg_types[0])

enum rosmsg_type rosmsg_type_of(const char *name)
{
    for (size_t k = 0; k < ROSMSG_N_TYPES; k++) {
        char a[ROSMSG_NAME_MAX], b[ROSMSG_NAME_MAX];
        snprintf(a, sizeof a, "%s/%s", rosmsg_types[k].pkg, rosmsg_types[k].name);
        snprintf(b, sizeof b, "%s/msg/%s", rosmsg_types[k].pkg, rosmsg_types[k].name);
        if (!strcmp(name, a) || !strcmp(name, b)) return rosmsg_types[k].type;
    }
    return ROSMSG_OTHER;
}

const char *rosmsg_type_name(enum rosmsg_type t)
{
    static const char *const names[] = {"", "sensor_msgs/PointCloud2", "nav_msgs/Odometry",
                                        "geometry_msgs/PoseStamped", "geometry_msgs/PoseWithCovarianceStamped",
                                        "tf2_msgs/TFMessage"};
    return (unsigned)t < sizeof names / sizeof names[0] ? names[t] : "";
}

int rosmsg_header_read(struct wire *w, struct rosmsg_header *h, struct err *e)
{
    uint32_t seq;
    if (w->kind == WIRE_ROS1 && wire_u32(w, &seq, e)) return -1;
    return wire_time(w, &h->t, e) || wire_str(w, h->frame, sizeof h->frame, e) ? -1 : 0;
}

struct rosmsg_field {
    char name[ROSMSG_NAME_MAX];
    uint32_t offset, count;
    uint8_t type;
};

/* Bytes of a PointField datatype (1 int8 .. 8 float64), 0 if unknown. */
static size_t rosmsg_dt_size(uint8_t t)
{
    static const size_t size[9] = {0, 1, 1, 2, 2, 4, 4, 4, 8};
    return t < 9 ? size[t] : 0;
}

static double rosmsg_value(const unsigned char *p, uint8_t type, int big)
{
    unsigned char b[8];
    size_t n = rosmsg_dt_size(type);
    int swap = big;
#if defined(__BYTE_ORDER__) && __BYTE_ORDER__ == __ORDER_BIG_ENDIAN__
    swap = !swap;
#endif
    for (size_t k = 0; k < n; k++) b[k] = p[swap ? n - 1 - k : k];
    int8_t i8; int16_t i16; uint16_t u16; int32_t i32; uint32_t u32; float f; double d;
    switch (type) {
    case 1: memcpy(&i8, b, 1); return i8;
    case 2: return b[0];
    case 3: memcpy(&i16, b, 2); return i16;
    case 4: memcpy(&u16, b, 2); return u16;
    case 5: memcpy(&i32, b, 4); return i32;
    case 6: memcpy(&u32, b, 4); return u32;
    case 7: memcpy(&f, b, 4); return f;
    default: memcpy(&d, b, 8); return d;
    }
}

/* The fields array; slot[0..5] = index of x y z intensity ring time or -1. */
static int rosmsg_fields(struct wire *w, struct rosmsg_field *f, uint32_t *nf, int slot[6], struct err *e)
{
    static const char *const want[7] = {"x", "y", "z", "intensity", "ring", "time", "t"};
    if (wire_count(w, 9, 4, nf, e)) return -1;
    if (*nf > ROSMSG_MAX_FIELDS)
        return err_set(e, "at byte %zu of %zu: %u point fields, expected at most %d", w->pos, w->len, *nf,
                       ROSMSG_MAX_FIELDS);
    for (int k = 0; k < 6; k++) slot[k] = -1;
    for (uint32_t k = 0; k < *nf; k++) {
        if (wire_str(w, f[k].name, sizeof f[k].name, e) || wire_u32(w, &f[k].offset, e) ||
            wire_u8(w, &f[k].type, e) || wire_u32(w, &f[k].count, e))
            return -1;
        if (!rosmsg_dt_size(f[k].type))
            return err_set(e, "at byte %zu of %zu: field '%s' has datatype %u, expected 1 to 8 (int8 .. float64)",
                           w->pos, w->len, f[k].name, f[k].type);
        for (int j = 0; j < 7; j++)
            if (!strcmp(f[k].name, want[j]) && slot[j < 6 ? j : 5] < 0) slot[j < 6 ? j : 5] = (int)k;
    }
    if (slot[0] < 0 || slot[1] < 0 || slot[2] < 0)
        return err_set(e, "point fields lack %s, expected x, y and z", slot[0] < 0 ? "x" : slot[1] < 0 ? "y" : "z");
    return 0;
}

struct rosmsg_layout {
    uint32_t height, width, point_step, row_step;
    uint8_t big;
    const unsigned char *data;
    uint32_t data_len;
};

/* Every field used must lie inside a point, every point inside its row,
 * every row inside the data. */
static int rosmsg_check_layout(const struct rosmsg_layout *L, const struct rosmsg_field *f, const int slot[6],
                               struct err *e)
{
    for (int k = 0; k < 6; k++) {
        if (slot[k] < 0) continue;
        const struct rosmsg_field *x = &f[slot[k]];
        if ((uint64_t)x->offset + rosmsg_dt_size(x->type) > L->point_step)
            return err_set(e, "field '%s' at offset %u (%zu bytes) runs past point_step %u, expected it inside "
                           "each point", x->name, x->offset, rosmsg_dt_size(x->type), L->point_step);
    }
    if ((uint64_t)L->width * L->point_step > L->row_step)
        return err_set(e, "width %u x point_step %u is more than row_step %u, expected each row to hold its points",
                       L->width, L->point_step, L->row_step);
    if ((uint64_t)L->height * L->row_step > L->data_len)
        return err_set(e, "height %u x row_step %u runs past the %u bytes of data, expected at least %llu", L->height,
                       L->row_step, L->data_len, (unsigned long long)L->height * L->row_step);
    if ((uint64_t)L->height * L->width > CLOUD_MAX_POINTS)
        return err_set(e, "%llu points is more than the limit of %zu", (unsigned long long)L->height * L->width,
                       (size_t)CLOUD_MAX_POINTS);
    return 0;
}

static int rosmsg_fill(const struct rosmsg_layout *L, const struct rosmsg_field *f, const int slot[6],
                       struct cloud *c, struct err *e)
{
    size_t n = (size_t)L->height * L->width;
    free(c->ring);
    free(c->time);
    c->ring = NULL;
    c->time = NULL;
    if (cloud_reserve(c, n) || (slot[4] >= 0 && cloud_enable_ring(c)) || (slot[5] >= 0 && cloud_enable_time(c)))
        return err_set(e, "out of memory for %zu points", n);
    size_t k = 0;
    for (uint32_t r = 0; r < L->height; r++)
        for (uint32_t col = 0; col < L->width; col++, k++) {
            const unsigned char *p = L->data + (size_t)r * L->row_step + (size_t)col * L->point_step;
            double v[6] = {0, 0, 0, 0, 0, 0};
            for (int j = 0; j < 6; j++)
                if (slot[j] >= 0) v[j] = rosmsg_value(p + f[slot[j]].offset, f[slot[j]].type, L->big);
            float *q = c->pts + 4 * k;
            q[0] = (float)v[0]; q[1] = (float)v[1]; q[2] = (float)v[2]; q[3] = (float)v[3];
            if (c->ring) c->ring[k] = v[4] < 0 ? 0 : v[4] > 65535 ? 65535 : (uint16_t)v[4];
            if (c->time) c->time[k] = (float)v[5];
        }
    c->n = n;
    return 0;
}

int rosmsg_cloud(struct wire *w, struct rosmsg_header *h, struct cloud *c, struct err *e)
{
    struct rosmsg_field f[ROSMSG_MAX_FIELDS];
    struct rosmsg_layout L;
    uint32_t nf;
    int slot[6];
    c->n = 0;
    if (rosmsg_header_read(w, h, e) || wire_u32(w, &L.height, e) || wire_u32(w, &L.width, e) ||
        rosmsg_fields(w, f, &nf, slot, e) || wire_u8(w, &L.big, e) || wire_u32(w, &L.point_step, e) ||
        wire_u32(w, &L.row_step, e) || wire_count(w, 1, 1, &L.data_len, e) ||
        wire_bytes(w, L.data_len, &L.data, e))
        return -1;
    if (L.big > 1) return err_set(e, "is_bigendian is %u, expected 0 or 1", L.big);
    if (rosmsg_check_layout(&L, f, slot, e)) return -1;
    return rosmsg_fill(&L, f, slot, c, e);
}

/* geometry_msgs/Pose: Point position, Quaternion orientation (7 float64). */
static int rosmsg_pose_body(struct wire *w, double t, struct pose *p, struct err *e)
{
    double v[7];
    for (int k = 0; k < 7; k++)
        if (wire_f64(w, &v[k], e)) return -1;
    size_t at = w->pos;
    if (pose_from_quat(p, t, v, v + 3, e)) return err_wrap(e, "pose ending at byte %zu of %zu", at, w->len);
    return 0;
}

int rosmsg_pose(struct wire *w, enum rosmsg_type type, struct rosmsg_header *h, struct pose *p,
                char child[ROSMSG_NAME_MAX], struct err *e)
{
    child[0] = 0;
    if (type != ROSMSG_ODOMETRY && type != ROSMSG_POSE && type != ROSMSG_POSE_COV)
        return err_set(e, "message type %d is not a pose message", (int)type);
    if (rosmsg_header_read(w, h, e)) return -1;
    if (type == ROSMSG_ODOMETRY && wire_str(w, child, ROSMSG_NAME_MAX, e)) return -1;
    if (rosmsg_pose_body(w, h->t, p, e)) return -1;
    double cov;
    for (int k = 0; type != ROSMSG_POSE && k < 36; k++)
        if (wire_f64(w, &cov, e)) return -1;  /* the covariance must be there, though unused */
    return 0;
}

int rosmsg_tf(struct wire *w, rosmsg_tf_fn fn, void *ctx, struct err *e)
{
    uint32_t n;
    /* each TransformStamped takes at least 72 bytes: stamp, two string
     * lengths and seven float64 */
    if (wire_count(w, 72, 4, &n, e)) return -1;
    for (uint32_t k = 0; k < n; k++) {
        struct rosmsg_header h;
        char child[ROSMSG_NAME_MAX];
        struct pose p;
        if (rosmsg_header_read(w, &h, e) || wire_str(w, child, sizeof child, e) || rosmsg_pose_body(w, h.t, &p, e))
            return err_wrap(e, "transform %u of %u", k, n);
        if (fn(ctx, &h, child, &p, e)) return -1;
    }
    return 0;
}

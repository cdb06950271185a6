/* logrec.c: make a recording from a robot log, in two walks: the first
 * gathers the scan stamps and the poses, the second writes the kept scans.
 */
#include "harness/io/logrec.h"

#include <cjson/cJSON.h>
#include <limits.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "harness/base/fileio.h"
#include "harness/base/grow.h"
#include "harness/base/progress.h"
#include "harness/io/logfile.h"
#include "harness/io/recording.h"
#include "harness/io/rosmsg.h"
#include "harness/io/sha256.h"
#include "harness/io/track.h"

struct logrec_scan {
    double t;          /* stamp */
    size_t msg;        /* message index in the log */
    long rank;         /* index in the recording, -1 when dropped */
    struct pose pose;
};

struct logrec_ctx {
    const struct logrec_opts *o;
    struct logf log;
    struct logrec_scan *scans;
    size_t n_scans, cap_scans, next;  /* next: scans seen in the second walk */
    struct track track;               /* the pose topic */
    struct track_tree tree;           /* /tf and /tf_static */
    char scan_frame[ROSMSG_NAME_MAX], pose_frame[ROSMSG_NAME_MAX], pose_child[ROSMSG_NAME_MAX];
    struct recording_writer w;
    struct cloud c;
    unsigned max_ring;
    int any_ring;
    struct progress prog;
};

/* "FILE: message N (TOPIC): " before the decoder's message. */
static int logrec_wrap(const struct logrec_ctx *x, const struct logf_msg *m, struct err *e)
{
    return err_wrap(e, "%s: message %zu (%s)", x->o->log, m->index, m->topic->name);
}

static int logrec_type(const struct logrec_ctx *x, const struct logf_msg *m, int ok, const char *want,
                       struct err *e)
{
    if (ok) return 0;
    return err_set(e, "%s: message %zu (%s): type %s, expected %s", x->o->log, m->index, m->topic->name,
                   m->topic->type, want);
}

struct logrec_tfctx {
    int is_static, pad;
    struct track_tree *tree;
};

static int logrec_tf_add(void *ctx, const struct rosmsg_header *h, const char *child, const struct pose *p,
                         struct err *e)
{
    struct logrec_tfctx *t = ctx;
    const char *par = h->frame[0] == '/' ? h->frame + 1 : h->frame, *ch = child[0] == '/' ? child + 1 : child;
    return track_tree_add(t->tree, par, ch, t->is_static, p, e);
}

static int logrec_gather_pose(struct logrec_ctx *x, const struct logf_msg *m, struct wire *w, struct err *e)
{
    enum rosmsg_type ty = rosmsg_type_of(m->topic->type);
    if (logrec_type(x, m, ty == ROSMSG_ODOMETRY || ty == ROSMSG_POSE || ty == ROSMSG_POSE_COV,
                    "nav_msgs/Odometry, geometry_msgs/PoseStamped or geometry_msgs/PoseWithCovarianceStamped", e))
        return -1;
    struct rosmsg_header h;
    struct pose p;
    char child[ROSMSG_NAME_MAX];
    if (rosmsg_pose(w, ty, &h, &p, child, e)) return logrec_wrap(x, m, e);
    snprintf(x->pose_frame, sizeof x->pose_frame, "%s", h.frame);
    snprintf(x->pose_child, sizeof x->pose_child, "%s", child);
    return track_push(&x->track, &p, e);
}

/* First walk: stamps of the scans, every pose. */
static int logrec_gather(void *ctx, const struct logf_msg *m, struct err *e)
{
    struct logrec_ctx *x = ctx;
    const struct logrec_opts *o = x->o;
    struct wire w;
    int is_scan = !strcmp(m->topic->name, o->scans_topic);
    int is_tf = !strcmp(o->poses_topic, LOGREC_TF) && (!strcmp(m->topic->name, "/tf") ||
                                                       !strcmp(m->topic->name, "/tf_static"));
    int is_pose = !strcmp(m->topic->name, o->poses_topic);
    if (!is_scan && !is_tf && !is_pose) return 0;
    if (wire_begin(&w, m->data, m->len, m->topic->wire, e)) return logrec_wrap(x, m, e);
    if (is_pose) return logrec_gather_pose(x, m, &w, e);
    if (is_tf) {
        if (logrec_type(x, m, rosmsg_type_of(m->topic->type) == ROSMSG_TF, "tf2_msgs/TFMessage", e)) return -1;
        struct logrec_tfctx t = {!strcmp(m->topic->name, "/tf_static"), 0, &x->tree};
        return rosmsg_tf(&w, logrec_tf_add, &t, e) ? logrec_wrap(x, m, e) : 0;
    }
    if (logrec_type(x, m, rosmsg_type_of(m->topic->type) == ROSMSG_CLOUD, "sensor_msgs/PointCloud2", e)) return -1;
    struct rosmsg_header h;
    if (rosmsg_header_read(&w, &h, e)) return logrec_wrap(x, m, e);
    if (grow_reserve(&x->scans, &x->cap_scans, x->n_scans + 1, sizeof *x->scans)) return err_set(e, "out of memory");
    snprintf(x->scan_frame, sizeof x->scan_frame, "%s", h.frame);
    x->scans[x->n_scans++] = (struct logrec_scan){.t = h.t, .msg = m->index, .rank = -1};
    return 0;
}

static int logrec_cmp_t(const void *a, const void *b)
{
    double x = ((const struct logrec_scan *)a)->t, y = ((const struct logrec_scan *)b)->t;
    return x < y ? -1 : x > y;
}

static int logrec_cmp_msg(const void *a, const void *b)
{
    size_t x = ((const struct logrec_scan *)a)->msg, y = ((const struct logrec_scan *)b)->msg;
    return x < y ? -1 : x > y;
}

/* The pose of scan s, or 1 with the reason. */
static int logrec_pose_at(const struct logrec_ctx *x, struct logrec_scan *s, char *why, size_t n)
{
    const struct logrec_opts *o = x->o;
    if (!strcmp(o->poses_topic, LOGREC_TF))
        return track_tree_at(&x->tree, o->world_frame, o->sensor_frame, s->t, o->pose_gap_s, &s->pose, why, n);
    return track_at(&x->track, s->t, o->pose_gap_s, &s->pose, why, n);
}

/* Rank the scans by stamp, give each its pose, write dropped.csv. */
static int logrec_assign(struct logrec_ctx *x, const char *dir, struct logrec_result *r, struct err *e)
{
    qsort(x->scans, x->n_scans, sizeof *x->scans, logrec_cmp_t);
    char path[RECORDING_PATH_MAX];
    fileio_join(path, sizeof path, dir, "dropped.csv");
    struct afile a;
    if (afile_open(&a, path, e)) return -1;
    fprintf(a.f, "message,t,reason\n");
    long rank = 0;
    char first[512] = "";
    for (size_t k = 0; k < x->n_scans; k++) {
        struct logrec_scan *s = &x->scans[k];
        if (k && s->t == x->scans[k - 1].t) {
            afile_abort(&a);
            return err_set(e, "%s: messages %zu and %zu (%s) have one stamp %.9f, expected one scan per time",
                           x->o->log, x->scans[k - 1].msg, s->msg, x->o->scans_topic, s->t);
        }
        char why[512];
        if (logrec_pose_at(x, s, why, sizeof why)) {
            fprintf(a.f, "%zu,%.9f,\"%s\"\n", s->msg, s->t, why);
            if (!first[0]) snprintf(first, sizeof first, "%s", why);
            if (r->dropped++ < 3 && !x->o->quiet)
                fprintf(stderr, "revisit log: scan at message %zu (t %.6f s) dropped: %s\n", s->msg, s->t, why);
            continue;
        }
        s->rank = rank++;
    }
    r->scans = (size_t)rank;
    if (afile_commit(&a, e)) return -1;
    if (rank == 0)
        return err_set(e, "%s: none of the %zu scans on %s has a pose (message %zu: %s), expected poses around the "
                       "scan stamps at most %.3f s apart (see --pose-gap)", x->o->log, x->n_scans, x->o->scans_topic,
                       x->scans[0].msg, first, x->o->pose_gap_s);
    return 0;
}

/* Second walk: decode each kept scan and write it at its rank. */
static int logrec_write_scan(void *ctx, const struct logf_msg *m, struct err *e)
{
    struct logrec_ctx *x = ctx;
    if (strcmp(m->topic->name, x->o->scans_topic)) return 0;
    const struct logrec_scan *s = &x->scans[x->next++];
    progress_add(&x->prog, 1);
    if (s->rank < 0) return 0;
    struct wire w;
    struct rosmsg_header h;
    if (wire_begin(&w, m->data, m->len, m->topic->wire, e) || rosmsg_cloud(&w, &h, &x->c, e))
        return logrec_wrap(x, m, e);
    for (size_t k = 0; x->c.ring && k < x->c.n; k++)
        if (x->c.ring[k] > x->max_ring) x->max_ring = x->c.ring[k];
    x->any_ring |= x->c.ring != NULL;
    if (recording_writer_scan(&x->w, (size_t)s->rank, &x->c, e)) return logrec_wrap(x, m, e);
    return 0;
}

/* The manifest's "log" object, as JSON text (malloc'ed) or NULL. */
static char *logrec_log_json(const struct logrec_ctx *x, const struct logrec_result *r)
{
    const struct logrec_opts *o = x->o;
    char real[PATH_MAX], hex[65];
    if (!realpath(o->log, real)) snprintf(real, sizeof real, "%s", o->log);
    sha256_hex(x->log.map, x->log.size, hex);
    int tf = !strcmp(o->poses_topic, LOGREC_TF);
    cJSON *j = cJSON_CreateObject();
    if (!j) return NULL;
    cJSON_AddStringToObject(j, "file", real);
    cJSON_AddStringToObject(j, "kind", logf_kind_name(x->log.kind));
    cJSON_AddNumberToObject(j, "bytes", (double)x->log.size);
    cJSON_AddStringToObject(j, "sha256", hex);
    cJSON_AddStringToObject(j, "scans_topic", o->scans_topic);
    cJSON_AddStringToObject(j, "scans_frame", x->scan_frame);
    cJSON_AddStringToObject(j, "poses_topic", tf ? "/tf /tf_static" : o->poses_topic);
    cJSON *fr = cJSON_AddArrayToObject(j, "poses_frames");
    cJSON_AddItemToArray(fr, cJSON_CreateString(tf ? o->world_frame : x->pose_frame));
    cJSON_AddItemToArray(fr, cJSON_CreateString(tf ? o->sensor_frame : x->pose_child));
    cJSON_AddNumberToObject(j, "pose_gap_s", o->pose_gap_s);
    cJSON_AddNumberToObject(j, "scans_in_log", (double)r->in_log);
    cJSON_AddNumberToObject(j, "scans_dropped", (double)r->dropped);
    cJSON_AddStringToObject(j, "dropped_list", "dropped.csv");
    char *s = cJSON_PrintUnformatted(j);
    cJSON_Delete(j);
    return s;
}

/* Both walks, and the recording writer staging the folder for o->out. */
static int logrec_build(struct logrec_ctx *x, struct logrec_result *r, struct err *e)
{
    const struct logrec_opts *o = x->o;
    if (logf_open(&x->log, o->log, e) || logf_each(&x->log, logrec_gather, x, e)) return -1;
    r->in_log = x->n_scans;
    if (!x->n_scans)
        return err_set(e, "%s: no messages on topic '%s', expected a sensor_msgs/PointCloud2 topic (list them with "
                       "'revisit log %s')", o->log, o->scans_topic, o->log);
    if (strcmp(o->poses_topic, LOGREC_TF) && !x->track.n)
        return err_set(e, "%s: no messages on topic '%s', expected a pose topic (list them with 'revisit log %s')",
                       o->log, o->poses_topic, o->log);
    if (track_finish(&x->track, o->poses_topic, e) || track_tree_finish(&x->tree, e)) return err_wrap(e, "%s", o->log);
    struct recording_sensor sensor;
    recording_sensor_init(&sensor);
    sensor.channels = o->channels > 0 ? o->channels : 1;
    /* dropped.csv goes into the writer's staged folder with the rest */
    if (recording_writer_begin(&x->w, o->out, &sensor, o->layout, e) || logrec_assign(x, x->w.dir, r, e)) return -1;
    qsort(x->scans, x->n_scans, sizeof *x->scans, logrec_cmp_msg);
    progress_start(&x->prog, "log scans", x->n_scans, o->quiet);
    int rc = logf_each(&x->log, logrec_write_scan, x, e);
    progress_end(&x->prog);
    if (rc) return -1;
    if (o->channels <= 0 && !x->any_ring)
        return err_set(e, "%s: the clouds on %s carry no ring field, expected --channels N (the number of sensor "
                       "channels)", o->log, o->scans_topic);
    x->w.sensor.channels = o->channels > 0 ? o->channels : (int)x->max_ring + 1;
    struct pose *v = malloc(r->scans * sizeof *v);
    if (!v) return err_set(e, "out of memory");
    qsort(x->scans, x->n_scans, sizeof *x->scans, logrec_cmp_t);
    for (size_t k = 0; k < x->n_scans; k++)
        if (x->scans[k].rank >= 0) v[x->scans[k].rank] = x->scans[k].pose;
    char *json = logrec_log_json(x, r);
    rc = recording_writer_poses(&x->w, v, r->scans, e);
    if (!rc) rc = recording_writer_source(&x->w, json, o->extrinsic, e);
    free(v);
    free(json);
    return rc ? -1 : recording_writer_finish(&x->w, e);
}

int logrec_make(const struct logrec_opts *o, struct logrec_result *r, struct err *e)
{
    memset(r, 0, sizeof *r);
    struct stat st;
    if (!lstat(o->out, &st))
        return err_at(e, o->out, 0, "already exists, expected a new folder for the recording");
    struct logrec_ctx x = {.o = o};
    track_init(&x.track);
    track_tree_init(&x.tree);
    cloud_init(&x.c);
    int rc = logrec_build(&x, r, e);
    recording_writer_free(&x.w);   /* removes the staged folder unless finish put it in place */
    cloud_free(&x.c);
    track_free(&x.track);
    track_tree_free(&x.tree);
    free(x.scans);
    logf_close(&x.log);
    return rc;
}

static int logrec_count(void *ctx, const struct logf_msg *m, struct err *e)
{
    (void)ctx; (void)m; (void)e;
    return 0;
}

int logrec_list(const char *log, FILE *out, struct err *e)
{
    struct logf l;
    if (logf_open(&l, log, e)) return -1;
    int rc = logf_each(&l, logrec_count, NULL, e);
    if (!rc) {
        fprintf(out, "%s: %s, %zu bytes, %zu messages\n", log, logf_kind_name(l.kind), l.size, l.n_msgs);
        for (size_t k = 0; k < l.n_topics; k++)
            fprintf(out, "%-32s %-44s %zu\n", l.topics[k].name, l.topics[k].type, l.topics[k].count);
    }
    logf_close(&l);
    return rc;
}

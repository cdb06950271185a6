/* track.h: pose streams sampled at other times, and trees of them.
 *
 * A track is a stream of timed poses (one topic, or one parent->child
 * transform).  track_at gives the pose at a time t between two samples at
 * most max_gap_s apart: position linear, rotation slerp (pose_interpolate);
 * it never extrapolates.  Worked case, samples at 0.0 s and 0.1 s, max gap
 * 0.2 s: t = 0.05 gives the midway pose; t = 0.15 gives none (after the
 * last sample); with samples at 0.0 s and 0.5 s, t = 0.25 gives none (the
 * samples around it are 0.5 s apart).  A static track (one pose, e.g. a
 * static transform) holds at every time.
 *
 * A tree holds named frames joined by tracks (parent -> child, the child's
 * pose in the parent).  track_tree_at chains the tracks on the path
 * between two frames (inverting those walked child -> parent), each
 * sampled at t.
 *
 *     struct track_tree tr; track_tree_init(&tr);
 *     track_tree_add(&tr, "map", "base", 0, &pose, e);   // per transform
 *     track_tree_finish(&tr, e);                         // sorts, checks
 *     int rc = track_tree_at(&tr, "map", "lidar", t, 0.2, &p, why, sizeof why);
 *     track_tree_free(&tr);
 *
 * Failure contract: the adders return 0 or -1 (out of memory, or two
 * different poses at one time of one track); track_at and track_tree_at
 * return 0 with the pose, or 1 with the reason in why (no path between the
 * frames, no samples near enough).  Not thread-safe while adding; the
 * lookups are thread-safe after finish.
 */
#ifndef RV_TRACK_H
#define RV_TRACK_H

#include <stddef.h>

#include "harness/base/err.h"
#include "harness/base/pose.h"

struct track {
    struct pose *v;     /* samples, sorted by time after track_finish */
    size_t n, cap;
    int is_static;      /* 1: one pose for all times */
};

void track_init(struct track *t);
void track_free(struct track *t);
int track_push(struct track *t, const struct pose *p, struct err *e);
/* Sort by time; equal times must hold equal poses (kept once). */
int track_finish(struct track *t, const char *what, struct err *e);
int track_at(const struct track *t, double time, double max_gap_s, struct pose *out, char *why, size_t n);

struct track_edge {
    char *parent, *child;
    struct track track;
};

struct track_tree {
    struct track_edge *e;
    size_t n, cap;
};

void track_tree_init(struct track_tree *tr);
void track_tree_free(struct track_tree *tr);
/* Add one sample of parent -> child; is_static marks a static transform
 * (its latest pose holds at every time). */
int track_tree_add(struct track_tree *tr, const char *parent, const char *child, int is_static,
                   const struct pose *p, struct err *e);
int track_tree_finish(struct track_tree *tr, struct err *e);
/* Pose of frame child in frame parent at time t. */
int track_tree_at(const struct track_tree *tr, const char *parent, const char *child, double t,
                  double max_gap_s, struct pose *out, char *why, size_t n);

#endif

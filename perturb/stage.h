/* stage.h: what a perturbation stage is, for the chain parser and the
 * stage files (perturb/stage_*.c).  Internal to perturb/.
 *
 * A stage file defines one `const struct stage_def stage_NAME` holding the
 * public table row (name, parameters, meaning), an optional cross-parameter
 * check run at parse time, and the apply function.  Parameter values arrive
 * in st->v[k], k being the parameter's row in the table (each file keeps an
 * enum beside its table).  A parameter given as `random` has bit k set in
 * st->random; the stage draws it with stage_value().
 *
 * apply works in place on the cloud, may use the scratch, allocates nothing
 * per point, and returns 0 or -1 (out of memory) with e set.
 */
#ifndef RV_STAGE_H
#define RV_STAGE_H

#include <math.h>
#include <stddef.h>
#include <stdint.h>
#include <string.h>

#include "perturb/chain.h"
#include "perturb/rng.h"

struct stage {
    const struct stage_def *def;
    double v[CHAIN_MAX_PARAMS];     /* number, or choice index */
    unsigned random;                /* bit k: parameter k is `random` */
    uint64_t list[4];               /* CHAIN_LIST entries 0..255 as a bit set */
    int per_recording;              /* its `draw` parameter says recording */
};

/* A parsed chain (chain.c parses it, chain_run.c applies it). */
struct chain {
    size_t n;
    struct stage st[CHAIN_MAX_STAGES];
};

struct stage_def {
    struct chain_stage_info info;
    /* Cross-parameter check; NULL when none.  On a problem returns the
     * parameter index to blame and sets *why ("must not exceed max"). */
    int (*check)(const struct stage *st, const char **why);
    int (*apply)(const struct stage *st, struct cloud *c, struct rng *r,
                 struct chain_scratch *s, struct err *e);
    /* 1 when apply, at these settings, leaves every cloud as it is (it
     * returns before touching a point); NULL when no setting does. */
    int (*identity)(const struct stage *st);
};

/* The `draw` parameter every stage with random draws carries. */
#define STAGE_DRAW_PARAM                                                        \
    {"draw", CHAIN_CHOICE, "", 0, 0, 1, 0, 0, "scan|recording", "scan or recording", \
     "scan: a new draw for every scan; recording: one draw for the whole recording"}

/* Keep, in order, the points p (const float *p: x y z i) for which KEEP_EXPR
 * is true, in one pass without branches on the outcome: every point is
 * copied to the write position, which advances only when it is kept.  The
 * point is read before the write, and the write index never passes the read
 * index, so the copy is safe in place.  Ring and time move with their points. */
#define STAGE_CULL(c, KEEP_EXPR)                                               \
    do {                                                                       \
        float *pts_ = (c)->pts;                                                \
        uint16_t *ring_ = (c)->ring;                                           \
        float *time_ = (c)->time;                                              \
        size_t n_ = (c)->n, j_ = 0;                                            \
        if (!ring_ && !time_) {                                                \
            for (size_t k_ = 0; k_ < n_; k_++) {                               \
                const float *p = pts_ + 4 * k_;                                \
                float v_[4];                                                   \
                memcpy(v_, p, sizeof v_);                                      \
                size_t keep_ = (KEEP_EXPR) ? 1 : 0;                            \
                memcpy(pts_ + 4 * j_, v_, sizeof v_);                          \
                j_ += keep_;                                                   \
            }                                                                  \
        } else {                                                               \
            for (size_t k_ = 0; k_ < n_; k_++) {                               \
                const float *p = pts_ + 4 * k_;                                \
                float v_[4];                                                   \
                memcpy(v_, p, sizeof v_);                                      \
                size_t keep_ = (KEEP_EXPR) ? 1 : 0;                            \
                memcpy(pts_ + 4 * j_, v_, sizeof v_);                          \
                if (ring_) ring_[j_] = ring_[k_];                              \
                if (time_) time_[j_] = time_[k_];                              \
                j_ += keep_;                                                   \
            }                                                                  \
        }                                                                      \
        (c)->n = j_;                                                           \
    } while (0)

/* The table, in --list order; NULL past the last one. */
const struct stage_def *stage_def_at(size_t i);

/* The parameter k: st->v[k], or when random a uniform draw in [lo, hi). */
double stage_value(const struct stage *st, int k, struct rng *r, double lo, double hi);
/* Scratch bytes (contents undefined); NULL when out of memory. */
void *stage_buf(struct chain_scratch *s, size_t bytes);

/* Azimuth in [0, 360) and elevation in [-90, 90] degrees of a point. */
static inline double stage_azimuth_deg(const float *p)
{
    double a = atan2((double)p[1], (double)p[0]) * (180.0 / M_PI);
    return a < 0 ? a + 360.0 : (a >= 360.0 ? a - 360.0 : a);
}
static inline double stage_elevation_deg(const float *p)
{
    double h = hypot((double)p[0], (double)p[1]);
    return atan2((double)p[2], h) * (180.0 / M_PI);
}

/* Stage definitions (one per file or group of files). */
extern const struct stage_def stage_yaw, stage_tilt, stage_shift, stage_skew;
extern const struct stage_def stage_sector, stage_dropout, stage_range, stage_fov;
extern const struct stage_def stage_channels, stage_noise, stage_intensity;
extern const struct stage_def stage_clutter, stage_density;

/* Channel recovery (stage_channels.c), exposed for its test: give every
 * point a channel number 0.. (lowest elevation = 0) by splitting the sorted
 * elevations at gaps wider than gap_deg.  ring has c->n entries.  Returns
 * the number of channels found, or -1 when out of memory. */
long stage_channels_recover(const struct cloud *c, double gap_deg, uint16_t *ring,
                            struct chain_scratch *s);

#endif

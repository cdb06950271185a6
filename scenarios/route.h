/* route.h: a drive through a district, and the revisits it makes.
 *
 * A route is a list of legs; a leg is a list of intersections driven in
 * order, on the right at lane_m from the street centre (0..3 m).  Each leg
 * starts where the previous one ended; legs are the epochs of scene change.
 * Corners are rounded, roundabouts are driven counter-clockwise around the
 * island, and the speed follows the bends (lateral and longitudinal
 * acceleration limits).  The drive is sampled every 0.5 m with its time.
 *
 *     struct route r;
 *     if (route_build(&r, &district, &params, e)) return -1;
 *     struct route_state s; route_at(&r, 12.3, &s);   // x, y, yaw, leg at t = 12.3 s
 *     route_free(&r);
 *
 * Revisits (route_revisits) are found from the scan poses alone: scan i
 * revisits when an earlier scan j with t_j <= t_i - exclusion_s lies within
 * radius_m; the kind follows the heading difference to the nearest such j:
 * same (< 45 degrees), reverse (> 135 degrees), crossing (between).
 */
#ifndef RV_ROUTE_H
#define RV_ROUTE_H

#include <stddef.h>
#include "harness/base/err.h"
#include "scenarios/district.h"

#define ROUTE_MAX_LEGS 32
#define ROUTE_MAX_STOPS 64

struct route_leg {
    int n;                        /* intersections in the leg, >= 2 */
    int node[ROUTE_MAX_STOPS];    /* j * nx + i */
    double lane_m;                /* right of the street centre */
};

struct route_params {
    int n_legs;
    struct route_leg leg[ROUTE_MAX_LEGS];
    double cruise_mps;            /* speed on straight streets */
    double lateral_mps2;          /* bend speed: v^2 * curvature <= this */
    double accel_mps2;            /* speeding up and braking */
};

struct route {
    size_t n;                     /* samples */
    double *x, *y, *yaw, *t, *v;  /* n each */
    int *leg;
    double duration_s, length_m;
};

struct route_state {
    double x, y, yaw, v;
    int leg;
};

void route_defaults(struct route_params *p);
/* Lay the route out on the district.  Errors name the leg and the stop:
 * "route.legs[1].path[3]: no street from (2, 1) to (4, 1)". 0 or -1. */
int route_build(struct route *r, const struct district *d, const struct route_params *p,
                struct err *e);
void route_free(struct route *r);
/* State at time t (clamped to the drive). Cannot fail. */
void route_at(const struct route *r, double t, struct route_state *s);

enum route_kind { ROUTE_SAME = 0, ROUTE_REVERSE = 1, ROUTE_CROSSING = 2 };
const char *route_kind_name(int kind);

/* A stretch of consecutive revisiting scans of one kind. */
struct route_revisit {
    int kind;
    size_t first, last;           /* query scans */
    size_t match_first, match_last;  /* nearest earlier scan of first and last */
    double t_first, t_last;
    double d_min_m, d_max_m;      /* nearest-match distances over the stretch */
    size_t scans;                 /* revisiting scans in the stretch */
};

/* From n scan positions xy (planar), headings and times.  *out is malloc'ed
 * (caller frees), *n_out stretches; *never counts scans with no other scan
 * within radius_m at a time difference of at least exclusion_s.  0 or -1. */
int route_revisits(const double *x, const double *y, const double *yaw, const double *t,
                   size_t n, double radius_m, double exclusion_s, struct route_revisit **out,
                   size_t *n_out, size_t *never, struct err *e);

#endif

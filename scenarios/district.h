/* district.h: a procedural district (streets, blocks, buildings, containers,
 * trees, poles, fences, hedges, parked and moving vehicles) generated from a
 * seed into a world.
 *
 * The street network is a grid of intersections that is not a perfect grid:
 * block sizes vary, every intersection is jittered, some blocks are cut by a
 * diagonal street, and some intersections are roundabouts.  Intersection
 * (i, j), 0 <= i < nx, 0 <= j < ny, has index j * nx + i.  A share of the
 * blocks copies one repeated module (same seed, same content in the block
 * frame), so distant places look alike on purpose.  Parked vehicles change
 * between epochs (route legs); moving vehicles drive along streets.
 *
 *     struct district d;
 *     if (district_build(&d, &world, &params, e)) ...   // fills world; then world_finish
 *     ... d.node[j * d.nx + i] ...
 *     district_free(&d);
 *
 * Failure contract: 0, or -1 (out of memory, or parameters it cannot lay
 * out) with e set; the world may then hold part of the district and must be
 * freed by the caller.
 */
#ifndef RV_DISTRICT_H
#define RV_DISTRICT_H

#include <stdint.h>
#include "harness/base/err.h"
#include "scenarios/world.h"

enum district_style { DISTRICT_PORT = 0, DISTRICT_CAMPUS = 1, DISTRICT_SUBURB = 2 };

/* Style names ("port", "campus", "suburb"); -1 if unknown. */
int district_style_parse(const char *name);
const char *district_style_name(int style);

struct district_params {
    uint64_t seed;
    int style;                 /* enum district_style */
    int nx, ny;                /* intersections per axis, 2..16 */
    double block_m[2];         /* block size range (between street centres) */
    double jitter_m;           /* intersection jitter */
    double street_width_m;
    double slope[2];           /* ground dz/dx, dz/dy */
    int roundabouts, diagonals;
    double repeat_share;       /* share of blocks that copy the repeated module */
    double parked_per_100m;    /* parked vehicles per 100 m of kerb */
    double change_share;       /* share of parked vehicles that change between epochs */
    int traffic;               /* moving vehicles */
    double trees_per_100m, poles_per_100m;
    int epochs;                /* 1..32, set from the route */
};

struct district {
    int nx, ny;
    double (*node)[2];         /* nx * ny intersections */
    uint8_t *round;            /* 1: roundabout */
    uint8_t *diag;             /* per block (i, j), index j * (nx-1) + i: 0 none,
                                  1 from (i, j) to (i+1, j+1), 2 from (i+1, j) to (i, j+1) */
    double island_r_m;         /* roundabout island radius */
    double half_width_m;       /* half the street width */
};

/* Defaults for a style (the built-in files override them). */
void district_defaults(struct district_params *p, int style);
int district_build(struct district *d, struct world *w, const struct district_params *p,
                   struct err *e);
void district_free(struct district *d);

/* 1 when intersections a and b are joined by a street (grid neighbours, or
 * the two ends of a block's diagonal). */
int district_street(const struct district *d, int a, int b);

#endif

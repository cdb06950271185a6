/* stage_table.c: every stage, in the order `revisit perturb --list` shows. */
#include "perturb/stage.h"

static const struct stage_def *const defs[] = {
    &stage_yaw,     &stage_sector,   &stage_dropout, &stage_range, &stage_noise,
    &stage_channels, &stage_fov,     &stage_tilt,    &stage_shift, &stage_clutter,
    &stage_density, &stage_skew,     &stage_intensity,
};

const struct stage_def *stage_def_at(size_t i)
{
    return i < sizeof defs / sizeof defs[0] ? defs[i] : NULL;
}

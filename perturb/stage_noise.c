/* stage_noise.c: range / position noise with spurious returns, and intensity. */
#include "perturb/stage.h"

/* ---- noise --------------------------------------------------------------- */

enum { NOISE_SIGMA, NOISE_MODE, NOISE_OUTLIERS, NOISE_DRAW };
enum { NOISE_RAY, NOISE_XYZ };
static const struct chain_param_info noise_params[] = {
    {"sigma", CHAIN_NUM, "m", 0.03, 0, 10, 0, 0, NULL, "metres from 0 to 10",
     "standard deviation of the Gaussian noise"},
    {"mode", CHAIN_CHOICE, "", NOISE_RAY, 0, 1, 0, 0, "ray|xyz", "ray or xyz",
     "ray: along each point's ray (range noise); xyz: isotropic in x, y and z"},
    {"outliers", CHAIN_NUM, "", 0, 0, 1, 0, 0, NULL, "a share from 0 to 1",
     "share of points replaced by a spurious return at a uniform range along the ray"},
    STAGE_DRAW_PARAM,
};

/* Draw order per point (fixed, so a seed gives the same scan): the outlier
 * uniform when outliers > 0, then either the outlier range or the noise.
 * Normals come in Box-Muller pairs shared across consecutive draws. */
static int noise_apply(const struct stage *st, struct cloud *c, struct rng *r,
                       struct chain_scratch *s, struct err *e)
{
    (void)s; (void)e;
    double sigma = st->v[NOISE_SIGMA], share = st->v[NOISE_OUTLIERS];
    int ray = st->v[NOISE_MODE] == NOISE_RAY;
    struct rng_normals nn = {{0, 0}, 0};
    for (size_t k = 0; k < c->n; k++) {
        float *p = c->pts + 4 * k;
        double x = p[0], y = p[1], z = p[2];
        double rr = sqrt(x * x + y * y + z * z);
        if (share > 0 && rng_uniform(r) < share) {
            double f = 1.0 - rng_uniform(r);          /* (0, 1]: before the surface */
            p[0] = (float)(x * f); p[1] = (float)(y * f); p[2] = (float)(z * f);
        } else if (ray) {
            double nr = rr + sigma * rng_normal_next(r, &nn);
            double f = rr > 0 ? (nr > 0 ? nr : 0) / rr : 0;
            p[0] = (float)(x * f); p[1] = (float)(y * f); p[2] = (float)(z * f);
        } else {
            p[0] = (float)(x + sigma * rng_normal_next(r, &nn));
            p[1] = (float)(y + sigma * rng_normal_next(r, &nn));
            p[2] = (float)(z + sigma * rng_normal_next(r, &nn));
        }
    }
    return 0;
}

const struct stage_def stage_noise = {
    {"noise", "add Gaussian noise along the rays or in x, y, z, and spurious returns", 4,
     noise_params},
    NULL, noise_apply, NULL};

/* ---- intensity ----------------------------------------------------------- */

enum { INT_SCALE, INT_NOISE, INT_STEP, INT_DRAW };
static const struct chain_param_info intensity_params[] = {
    {"scale", CHAIN_NUM, "", 0.5, 0, 1e6, 0, 0, NULL, "a factor from 0 to 1000000",
     "multiply every intensity"},
    {"noise", CHAIN_NUM, "", 0, 0, 1e6, 0, 0, NULL, "a standard deviation from 0 to 1000000",
     "add Gaussian noise after scaling (results below 0 become 0)"},
    {"step", CHAIN_NUM, "", 0, 0, 1e6, 0, 0, NULL, "0 or a step up to 1000000",
     "round to a multiple of step last (0: no rounding)"},
    STAGE_DRAW_PARAM,
};

static int intensity_apply(const struct stage *st, struct cloud *c, struct rng *r,
                           struct chain_scratch *s, struct err *e)
{
    (void)s; (void)e;
    double scale = st->v[INT_SCALE], sigma = st->v[INT_NOISE], step = st->v[INT_STEP];
    struct rng_normals nn = {{0, 0}, 0};
    for (size_t k = 0; k < c->n; k++) {
        double v = c->pts[4 * k + 3] * scale;
        if (sigma > 0) v += sigma * rng_normal_next(r, &nn);
        if (v < 0) v = 0;
        if (step > 0) v = step * floor(v / step + 0.5);
        c->pts[4 * k + 3] = (float)v;
    }
    return 0;
}

const struct stage_def stage_intensity = {
    {"intensity", "scale intensities, add noise to them, or round them to steps", 4,
     intensity_params},
    NULL, intensity_apply, NULL};

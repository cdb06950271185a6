/* stage_channels.c: keep a subset of the sensor's channels (rings).
 *
 * A channel comes from the per-point ring field when the scan has one.
 * Otherwise it is recovered from elevation angles: sort the elevations, and
 * start a new channel at every gap wider than `gap` degrees; channel 0 is
 * the lowest.  This holds for a spinning sensor whose beams each keep a
 * fixed elevation (noise along the rays does not move them).
 */
#include "perturb/stage.h"

#include <stdlib.h>

enum { CH_EVERY, CH_LIST, CH_GAP };
static const struct chain_param_info channels_params[] = {
    {"every", CHAIN_NUM, "", 2, 1, 256, 0, 0, NULL, "a whole number from 1 to 256",
     "keep channels 0, k, 2k, ... (a sensor with k times fewer channels)"},
    {"list", CHAIN_LIST, "", 0, 0, 255, 0, 0, NULL,
     "channel numbers from 0 to 255 separated by '/'",
     "keep exactly these channels (overrides every)"},
    {"gap", CHAIN_NUM, "deg", 0.01, 0.001, 10, 0, 0, NULL, "degrees from 0.001 to 10",
     "least elevation step between channels without a ring field (raise it when a channel scatters)"},
};

struct elev {
    float el;
    uint32_t idx;
};

static int elev_cmp(const void *a, const void *b)
{
    const struct elev *x = a, *y = b;
    if (x->el != y->el) return x->el < y->el ? -1 : 1;
    return x->idx < y->idx ? -1 : x->idx > y->idx;
}

long stage_channels_recover(const struct cloud *c, double gap_deg, uint16_t *ring,
                            struct chain_scratch *s)
{
    if (!c->n) return 0;
    struct elev *ev = stage_buf(s, c->n * sizeof *ev);
    if (!ev) return -1;
    for (size_t k = 0; k < c->n; k++) {
        double el = stage_elevation_deg(c->pts + 4 * k);
        ev[k].el = isnan(el) ? INFINITY : (float)el;   /* keeps the order total */
        ev[k].idx = (uint32_t)k;
    }
    qsort(ev, c->n, sizeof *ev, elev_cmp);
    long ch = 0;
    for (size_t k = 0; k < c->n; k++) {
        if (k && ev[k].el - ev[k - 1].el > gap_deg && ch < 65535) ch++;
        ring[ev[k].idx] = (uint16_t)ch;
    }
    return ch + 1;
}

static int channels_check(const struct stage *st, const char **why)
{
    if (st->v[CH_EVERY] != floor(st->v[CH_EVERY])) {
        *why = "must be a whole number";
        return CH_EVERY;
    }
    return -1;
}

static int channel_kept(const struct stage *st, int use_list, unsigned ch)
{
    if (use_list) return ch < 256 && (st->list[ch / 64] >> (ch % 64) & 1);
    return ch % (unsigned)st->v[CH_EVERY] == 0;
}

static int channels_apply(const struct stage *st, struct cloud *c, struct rng *r,
                          struct chain_scratch *s, struct err *e)
{
    (void)r;
    int use_list = (st->list[0] | st->list[1] | st->list[2] | st->list[3]) != 0;
    const uint16_t *ring = c->ring;
    if (!ring) {
        /* the recovered channels live in the scratch cloud's ring array */
        if (cloud_reserve(&s->tmp, c->n ? c->n : 1) || cloud_enable_ring(&s->tmp) ||
            stage_channels_recover(c, st->v[CH_GAP], s->tmp.ring, s) < 0)
            return err_set(e, "out of memory recovering channels of %zu points", c->n);
        ring = s->tmp.ring;
    }
    size_t j = 0;
    for (size_t k = 0; k < c->n; k++)
        if (channel_kept(st, use_list, ring[k])) cloud_move(c, j++, k);
    c->n = j;
    return 0;
}

const struct stage_def stage_channels = {
    {"channels", "keep every k-th channel or a listed set (a cheaper sensor with fewer channels)",
     3, channels_params},
    channels_check, channels_apply, NULL};

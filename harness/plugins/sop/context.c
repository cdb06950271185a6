/* context.c: the context features F_b is built from.
 *
 * Spatial: for segment i, the k_spatial other segments nearest by the
 * distance between hulls (GJK); S_i = sum_j w_j F_a[j] with
 * w = softmax(-d / context_temp_m).  Candidates are visited in the order
 * of the bounding-sphere lower bound |c_i - c_j| - r_i - r_j and the scan
 * stops once that bound passes the k-th distance found, so GJK runs on a
 * few pairs per segment, not on all of them.
 *
 * Temporal: the scene's horizontal shift since the previous scan is
 * estimated first (ctx_shift: median offset of mutual feature neighbours),
 * since the plugin does not know the sensor's motion.  In the previous scan,
 * take the k_temporal segments nearest to the shifted segment i by centroid
 * distance and the k_temporal nearest by feature
 * distance |F_a[i] - F_a[j]|; among those in both sets and within
 * match_max_m, the correspondence minimises
 *     match_weight * d_centroid / match_scale_m + (1 - match_weight) * d_feature / feature_scale.
 * Following the correspondence links back over at most `history` scans gives
 * a chain of segments m; T_i = sum_m (1 + track_m) F_a[m] / sum_m (1 + track_m),
 * where track_m counts the consecutive scans segment m had been matched, so
 * consistently matched segments weigh more.
 * With temporal_self (the default) the chain starts at segment i itself, so
 * T_i is its features smoothed along its track and an unmatched segment has
 * T_i = F_a[i]; without it the chain holds earlier scans only and an
 * unmatched segment keeps T_i = 0.  The default is there because on our
 * synthetic drives the zero rule made F_b jump between (S + T)/2 and S/2
 * depending on whether a match was found, and the full method scored below
 * F_a alone (see harness/plugins/README.md, "M2DP and segment pooling", for the numbers).
 *
 * Ties between equal distances are broken by the centroid coordinates, never
 * by the segments' positions in the array, so a permutation of the segments
 * gives bit-identical context features.
 */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "harness/plugins/sop/sop.h"

struct ctx_pick {
    double d;
    double key[3];  /* tie-break: the candidate's centroid */
    uint32_t j;
};

static int ctx_less(const struct ctx_pick *a, const struct ctx_pick *b)
{
    if (a->d != b->d)
        return a->d < b->d;
    for (int k = 0; k < 3; k++)
        if (a->key[k] != b->key[k])
            return a->key[k] < b->key[k];
    return 0;
}

static int ctx_cmp(const void *pa, const void *pb)
{
    const struct ctx_pick *a = pa, *b = pb;
    return ctx_less(a, b) ? -1 : ctx_less(b, a) ? 1 : 0;
}

/* Insert c into the sorted list top[0..*len) of at most k entries. */
static void ctx_insert(struct ctx_pick *top, int *len, int k, const struct ctx_pick *c)
{
    if (*len == k && !ctx_less(c, &top[k - 1]))
        return;
    int at = *len < k ? (*len)++ : k - 1;
    while (at > 0 && ctx_less(c, &top[at - 1])) {
        top[at] = top[at - 1];
        at--;
    }
    top[at] = *c;
}

int ctx_spatial(const struct sop_params *p, const struct sop_seg *s, size_t n, int dim,
                double *out)
{
    memset(out, 0, sizeof *out * n * (size_t)dim);
    int k = p->k_spatial < (int)n - 1 ? p->k_spatial : (int)n - 1;
    if (k < 1)
        return 0;
    struct ctx_pick *cand = malloc(sizeof *cand * n), top[64];
    if (!cand)
        return -1;
    if (k > 64)
        k = 64;
    for (size_t i = 0; i < n; i++) {
        size_t m = 0;
        for (size_t j = 0; j < n; j++) {
            if (j == i)
                continue;
            double dx = s[i].c[0] - s[j].c[0], dy = s[i].c[1] - s[j].c[1], dz = s[i].c[2] - s[j].c[2];
            double lb = sqrt(dx * dx + dy * dy + dz * dz) - s[i].radius - s[j].radius;
            cand[m] = (struct ctx_pick){lb > 0 ? lb : 0, {s[j].c[0], s[j].c[1], s[j].c[2]}, (uint32_t)j};
            m++;
        }
        qsort(cand, m, sizeof *cand, ctx_cmp);
        int len = 0;
        for (size_t c = 0; c < m; c++) {
            if (len == k && cand[c].d > top[k - 1].d)
                break;
            const struct sop_seg *b = &s[cand[c].j];
            struct ctx_pick e = cand[c];
            e.d = gjk_distance(s[i].v, s[i].nv, b->v, b->nv);
            ctx_insert(top, &len, k, &e);
        }
        double wsum = 0, *o = out + i * (size_t)dim;
        for (int t = 0; t < len; t++) {
            double w = exp(-(top[t].d - top[0].d) / p->context_temp_m);
            wsum += w;
            for (int a = 0; a < dim; a++)
                o[a] += w * s[top[t].j].fa[a];
        }
        for (int a = 0; a < dim; a++)
            o[a] /= wsum;
    }
    free(cand);
    return 0;
}

int ctx_history_init(struct ctx_history *h, int cap)
{
    memset(h, 0, sizeof *h);
    h->frames = calloc((size_t)(cap > 0 ? cap : 1), sizeof *h->frames);
    h->cap = cap > 0 ? cap : 1;
    return h->frames ? 0 : -1;
}

void ctx_history_clear(struct ctx_history *h)
{
    h->len = 0;
    h->head = 0;
}

void ctx_history_release(struct ctx_history *h)
{
    if (!h || !h->frames)
        return;
    for (int f = 0; f < h->cap; f++) {
        free(h->frames[f].c);
        free(h->frames[f].fa);
        free(h->frames[f].link);
        free(h->frames[f].track);
    }
    free(h->frames);
    memset(h, 0, sizeof *h);
}

static const struct ctx_frame *ctx_age(const struct ctx_history *h, int age)
{
    return &h->frames[(h->head - age + h->cap) % h->cap];
}

static double ctx_feature_dist2(const float *a, const float *b, int dim)
{
    double ff = 0;
    for (int k = 0; k < dim; k++)
        ff += ((double)a[k] - b[k]) * ((double)a[k] - b[k]);
    return ff;
}

static int ctx_cmp_double(const void *pa, const void *pb)
{
    double a = *(const double *)pa, b = *(const double *)pb;
    return a < b ? -1 : a > b;
}

/* Horizontal shift of the scene since frame f: the median of the centroid
 * offsets of mutual nearest neighbours in feature space, zero with fewer
 * than shift_min_pairs of them (or when ego_shift is off).  It stands in for
 * the sensor's own motion, which the plugin is not told.  0 or -1 (memory). */
static int ctx_shift(const struct sop_params *p, const struct sop_seg *s, size_t n, int dim,
                     const struct ctx_frame *f, double shift[2])
{
    shift[0] = shift[1] = 0;
    if (!p->ego_shift || !n || !f->n)
        return 0;
    double *off = malloc(sizeof *off * 2 * n);
    if (!off)
        return -1;
    size_t m = 0;
    for (size_t i = 0; i < n; i++) {
        size_t bj = 0, bi = 0;
        double bd = INFINITY;
        for (size_t j = 0; j < f->n; j++) {
            double d = ctx_feature_dist2(s[i].fa, f->fa + (size_t)dim * j, dim);
            if (d < bd)
                bd = d, bj = j;
        }
        bd = INFINITY;
        for (size_t q = 0; q < n; q++) {
            double d = ctx_feature_dist2(s[q].fa, f->fa + (size_t)dim * bj, dim);
            if (d < bd)
                bd = d, bi = q;
        }
        if (bi != i)
            continue;
        off[m] = f->c[3 * bj] - s[i].c[0];
        off[n + m++] = f->c[3 * bj + 1] - s[i].c[1];
    }
    if (m >= (size_t)p->shift_min_pairs) {
        qsort(off, m, sizeof *off, ctx_cmp_double);
        qsort(off + n, m, sizeof *off, ctx_cmp_double);
        shift[0] = m % 2 ? off[m / 2] : 0.5 * (off[m / 2 - 1] + off[m / 2]);
        shift[1] = m % 2 ? off[n + m / 2] : 0.5 * (off[n + m / 2 - 1] + off[n + m / 2]);
    }
    free(off);
    return 0;
}

/* Correspondence of segment si in frame f, or -1 (see the file comment);
 * shift is added to si's centroid first. */
static int32_t ctx_match(const struct sop_params *p, const struct sop_seg *si, int dim,
                         const struct ctx_frame *f, const double shift[2],
                         struct ctx_pick *by_c, struct ctx_pick *by_f)
{
    int k = p->k_temporal < (int)f->n ? p->k_temporal : (int)f->n, lc = 0, lf = 0;
    for (size_t j = 0; j < f->n; j++) {
        const double *c = f->c + 3 * j;
        double dx = si->c[0] + shift[0] - c[0], dy = si->c[1] + shift[1] - c[1];
        double dz = si->c[2] - c[2], ff = 0;
        for (int a = 0; a < dim; a++) {
            double d = (double)si->fa[a] - f->fa[(size_t)dim * j + a];
            ff += d * d;
        }
        struct ctx_pick e = {sqrt(dx * dx + dy * dy + dz * dz), {c[0], c[1], c[2]}, (uint32_t)j};
        ctx_insert(by_c, &lc, k, &e);
        e.d = sqrt(ff);
        ctx_insert(by_f, &lf, k, &e);
    }
    struct ctx_pick best = {INFINITY, {0, 0, 0}, 0};
    for (int a = 0; a < lc; a++) {
        if (by_c[a].d > p->match_max_m)
            break;
        for (int b = 0; b < lf; b++) {
            if (by_f[b].j != by_c[a].j)
                continue;
            struct ctx_pick e = by_c[a];
            e.d = p->match_weight * by_c[a].d / p->match_scale_m
                  + (1 - p->match_weight) * by_f[b].d / p->feature_scale;
            if (ctx_less(&e, &best))
                best = e;
        }
    }
    return isfinite(best.d) ? (int32_t)best.j : -1;
}

/* Store the current scan as the newest frame. */
static int ctx_push(struct ctx_history *h, const struct sop_seg *s, size_t n, int dim,
                    const int32_t *link, const uint32_t *track)
{
    int slot = h->len ? (h->head + 1) % h->cap : h->head;
    struct ctx_frame *f = &h->frames[slot];
    size_t m = n ? n : 1;
    double *c = realloc(f->c, sizeof *c * 3 * m);
    if (c)
        f->c = c;
    float *fa = realloc(f->fa, sizeof *fa * (size_t)dim * m);
    if (fa)
        f->fa = fa;
    int32_t *l = realloc(f->link, sizeof *l * m);
    if (l)
        f->link = l;
    uint32_t *t = realloc(f->track, sizeof *t * m);
    if (t)
        f->track = t;
    if (!c || !fa || !l || !t)
        return -1;
    for (size_t i = 0; i < n; i++) {
        memcpy(f->c + 3 * i, s[i].c, sizeof s[i].c);
        memcpy(f->fa + (size_t)dim * i, s[i].fa, sizeof *fa * (size_t)dim);
    }
    memcpy(f->link, link, sizeof *l * n);
    memcpy(f->track, track, sizeof *t * n);
    f->n = n;
    h->head = slot;
    if (h->len < h->cap)
        h->len++;
    return 0;
}

int ctx_temporal(const struct sop_params *p, const struct sop_seg *s, size_t n, int dim,
                 struct ctx_history *h, double *out)
{
    memset(out, 0, sizeof *out * n * (size_t)dim);
    int k = p->k_temporal > 0 ? p->k_temporal : 1;
    struct ctx_pick *by_c = malloc(sizeof *by_c * (size_t)k), *by_f = malloc(sizeof *by_f * (size_t)k);
    int32_t *link = malloc(sizeof *link * (n ? n : 1));
    uint32_t *track = malloc(sizeof *track * (n ? n : 1));
    int rc = -1;
    double shift[2] = {0, 0};
    if (!by_c || !by_f || !link || !track || (h->len && ctx_shift(p, s, n, dim, ctx_age(h, 0), shift)))
        goto out;
    for (size_t i = 0; i < n; i++) {
        link[i] = h->len ? ctx_match(p, &s[i], dim, ctx_age(h, 0), shift, by_c, by_f) : -1;
        track[i] = link[i] < 0 ? 0 : 1 + ctx_age(h, 0)->track[link[i]];
        double wsum = 0, *o = out + i * (size_t)dim;
        if (p->temporal_self) {  /* the segment itself, weighted as one more scan of its track */
            wsum = 1.0 + track[i];
            for (int a = 0; a < dim; a++)
                o[a] = wsum * s[i].fa[a];
        }
        int32_t m = link[i];
        for (int age = 0; age < h->len && m >= 0; age++) {
            const struct ctx_frame *f = ctx_age(h, age);
            double w = 1.0 + f->track[m];
            wsum += w;
            for (int a = 0; a < dim; a++)
                o[a] += w * f->fa[(size_t)dim * m + a];
            m = f->link[m];
        }
        for (int a = 0; wsum > 0 && a < dim; a++)
            o[a] /= wsum;
    }
    rc = ctx_push(h, s, n, dim, link, track);
out:
    free(by_c);
    free(by_f);
    free(link);
    free(track);
    return rc;
}

/* track.c: pose streams, sampling between samples, and transform trees. */
#include "harness/io/track.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/grow.h"

void track_init(struct track *t) { memset(t, 0, sizeof *t); }

void track_free(struct track *t)
{
    if (!t) return;
    free(t->v);
    track_init(t);
}

int track_push(struct track *t, const struct pose *p, struct err *e)
{
    if (grow_reserve(&t->v, &t->cap, t->n + 1, sizeof *t->v)) return err_set(e, "out of memory for %zu poses", t->n + 1);
    t->v[t->n++] = *p;
    return 0;
}

static int track_cmp(const void *a, const void *b)
{
    double x = ((const struct pose *)a)->t, y = ((const struct pose *)b)->t;
    return x < y ? -1 : x > y;
}

int track_finish(struct track *t, const char *what, struct err *e)
{
    if (t->is_static) {
        if (t->n > 1) t->v[0] = t->v[t->n - 1];  /* the latest static transform holds */
        t->n = t->n ? 1 : 0;
        return 0;
    }
    if (t->n > 1) qsort(t->v, t->n, sizeof *t->v, track_cmp);   /* t->v is NULL when empty: qsort must not see it */
    size_t j = 0;
    for (size_t k = 0; k < t->n; k++) {
        if (j && t->v[k].t == t->v[j - 1].t) {
            if (memcmp(t->v[k].p, t->v[j - 1].p, sizeof t->v[k].p) || memcmp(t->v[k].q, t->v[j - 1].q, sizeof t->v[k].q))
                return err_set(e, "%s: two different poses at time %.9f, expected one pose per time", what, t->v[k].t);
            continue;
        }
        t->v[j++] = t->v[k];
    }
    t->n = j;
    return 0;
}

int track_at(const struct track *t, double time, double max_gap_s, struct pose *out, char *why, size_t n)
{
    if (t->n == 0) return snprintf(why, n, "no poses"), 1;
    if (t->is_static) {
        *out = t->v[0];
        out->t = time;
        return 0;
    }
    size_t lo = 0, hi = t->n;  /* first sample with v.t > time */
    while (lo < hi) {
        size_t mid = lo + (hi - lo) / 2;
        if (t->v[mid].t <= time) lo = mid + 1;
        else hi = mid;
    }
    if (lo > 0 && t->v[lo - 1].t == time) {
        *out = t->v[lo - 1];
        return 0;
    }
    if (lo == 0) return snprintf(why, n, "before the first pose (%.6f s)", t->v[0].t), 1;
    if (lo == t->n) return snprintf(why, n, "after the last pose (%.6f s)", t->v[t->n - 1].t), 1;
    const struct pose *a = &t->v[lo - 1], *b = &t->v[lo];
    if (b->t - a->t > max_gap_s)
        return snprintf(why, n, "the poses around it are %.3f s apart, more than the largest gap %.3f s", b->t - a->t,
                        max_gap_s), 1;
    pose_interpolate(a, b, time, out);
    return 0;
}

void track_tree_init(struct track_tree *tr) { memset(tr, 0, sizeof *tr); }

void track_tree_free(struct track_tree *tr)
{
    if (!tr) return;
    for (size_t k = 0; k < tr->n; k++) {
        free(tr->e[k].parent);
        free(tr->e[k].child);
        track_free(&tr->e[k].track);
    }
    free(tr->e);
    track_tree_init(tr);
}

int track_tree_add(struct track_tree *tr, const char *parent, const char *child, int is_static,
                   const struct pose *p, struct err *e)
{
    struct track_edge *x = NULL;
    for (size_t k = 0; k < tr->n && !x; k++)
        if (!strcmp(tr->e[k].parent, parent) && !strcmp(tr->e[k].child, child)) x = &tr->e[k];
    if (!x) {
        if (grow_reserve(&tr->e, &tr->cap, tr->n + 1, sizeof *tr->e)) return err_set(e, "out of memory");
        x = &tr->e[tr->n];
        memset(x, 0, sizeof *x);
        x->parent = strdup(parent);
        x->child = strdup(child);
        if (!x->parent || !x->child) {
            free(x->parent);
            free(x->child);
            return err_set(e, "out of memory");
        }
        tr->n++;
    }
    x->track.is_static |= is_static;
    return track_push(&x->track, p, e);
}

int track_tree_finish(struct track_tree *tr, struct err *e)
{
    for (size_t k = 0; k < tr->n; k++) {
        char what[600];
        snprintf(what, sizeof what, "transform %s -> %s", tr->e[k].parent, tr->e[k].child);
        if (track_finish(&tr->e[k].track, what, e)) return -1;
    }
    return 0;
}

/* Breadth-first search from frame a to frame b over the edges in either
 * direction; via[k] is the edge that reached the k-th frame found. */
static int track_path(const struct track_tree *tr, const char *a, const char *b, long *edge, int *fwd,
                      size_t *len)
{
    size_t cap = 2 * tr->n + 2, nf = 1;
    const char **frame = malloc(cap * sizeof *frame);
    long *from = malloc(cap * sizeof *from), *by = malloc(cap * sizeof *by);
    int *dir = malloc(cap * sizeof *dir), found = -1;
    if (!frame || !from || !by || !dir) goto done;
    frame[0] = a;
    from[0] = by[0] = -1;
    for (size_t q = 0; q < nf && found < 0; q++) {
        if (!strcmp(frame[q], b)) { found = (int)q; break; }
        for (size_t k = 0; k < tr->n; k++) {
            const char *next = !strcmp(tr->e[k].parent, frame[q]) ? tr->e[k].child
                             : !strcmp(tr->e[k].child, frame[q]) ? tr->e[k].parent : NULL;
            int seen = 0;
            for (size_t j = 0; next && j < nf && !seen; j++) seen = !strcmp(frame[j], next);
            if (!next || seen) continue;
            frame[nf] = next;
            from[nf] = (long)q;
            by[nf] = (long)k;
            dir[nf++] = next == tr->e[k].child;
        }
    }
    *len = 0;
    for (long f = found; f > 0; f = from[f]) (*len)++;
    size_t i = *len;
    for (long f = found; f > 0; f = from[f]) {
        i--;
        edge[i] = by[f];
        fwd[i] = dir[f];
    }
done:
    free(frame);
    free(from);
    free(by);
    free(dir);
    return found;
}

int track_tree_at(const struct track_tree *tr, const char *parent, const char *child, double t,
                  double max_gap_s, struct pose *out, char *why, size_t n)
{
    long *edge = malloc((tr->n + 1) * sizeof *edge);
    int *fwd = malloc((tr->n + 1) * sizeof *fwd), rc = 0;
    size_t len = 0;
    if (!edge || !fwd || track_path(tr, parent, child, edge, fwd, &len) < 0) {
        snprintf(why, n, "no chain of transforms joins frame '%s' to frame '%s'", parent, child);
        rc = 1;
    }
    pose_identity(out, t);
    for (size_t k = 0; !rc && k < len; k++) {
        const struct track_edge *x = &tr->e[edge[k]];
        struct pose step;
        char sub[256];
        if (track_at(&x->track, t, max_gap_s, &step, sub, sizeof sub)) {
            snprintf(why, n, "transform %s -> %s: %s", x->parent, x->child, sub);
            rc = 1;
            break;
        }
        if (!fwd[k]) pose_inverse(&step, &step);
        pose_compose(out, &step, out);
    }
    out->t = t;
    free(edge);
    free(fwd);
    return rc;
}

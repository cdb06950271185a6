/* kinds.c: revisit kinds from headings, recall and R@100P per kind. */
#include "metrics/kinds.h"

#include <math.h>
#include <string.h>

static const char *const kind_names[KIND_N] = {"same", "reverse", "crossing"};

const char *kind_name(enum kind_id k)
{
    return (unsigned)k < KIND_N ? kind_names[k] : "?";
}

void kind_rule_defaults(struct kind_rule *r)
{
    r->same_deg = 45;
    r->reverse_deg = 135;
}

int kind_rule_check(const struct kind_rule *r)
{
    return r->same_deg >= 0 && r->same_deg < r->reverse_deg && r->reverse_deg <= 180 ? 0 : -1;
}

enum kind_id kind_of(double a, double b, const struct kind_rule *r)
{
    double d = fabs(remainder(a - b, 2 * M_PI)) * (180 / M_PI);   /* folded into [0, 180] */
    if (d <= r->same_deg) return KIND_SAME;
    if (d >= r->reverse_deg) return KIND_REVERSE;
    return KIND_CROSSING;
}

void kind_scores(const struct pr_set *s, const unsigned char *kind, size_t n_kind,
                 const struct kind_rule *r, struct kind_scores *out)
{
    memset(out, 0, sizeof *out);
    out->rule = *r;
    struct pr_scalars sc;
    pr_scalars_compute(s, NULL, &sc);
    double tau = sc.r100p_threshold;
    double top1[KIND_N] = {0}, acc[KIND_N] = {0};
    for (size_t k = 0; k < s->n; k++) {
        const struct pr_outcome *o = &s->o[k];
        if (!o->revisit || o->query >= n_kind || kind[o->query] >= KIND_N) continue;
        int c = kind[o->query];
        out->revisits[c] += 1;
        if (o->first_pos == 1) top1[c] += 1;
        if (o->cls == GT_POS && !isnan(tau) && o->d1 <= tau) acc[c] += 1;
    }
    for (int c = 0; c < KIND_N; c++) {
        out->recall_at_1[c] = out->revisits[c] > 0 ? top1[c] / out->revisits[c] : 0;
        out->r100p[c] = out->revisits[c] > 0 ? acc[c] / out->revisits[c] : 0;
    }
}

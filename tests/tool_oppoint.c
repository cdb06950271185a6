/* tool_oppoint.c: a driver for tests/xcheck_oppoint_sklearn.py.
 * stdin:  "N_REF N_AT COUNTING RULE TARGET RESAMPLES SEED KM HOURS" (COUNTING
 *         0 strict, 1 lenient; RULE as enum oppoint_rule), then N_REF and
 *         N_AT lines "D1 CLASS REVISIT" (CLASS as enum gt_class).  Query k
 *         of each set is slot k, so sets of one size are paired.
 * stdout: "tau V LO HI MISSING", "paired P", one "at NAME V LO HI DIFF DLO
 *         DHI" and one "ref NAME V" line per score, then for each resample
 *         "w B w_ref... | w_at..." (the weights the intervals used). */
#include <stdio.h>
#include <stdlib.h>

#include "metrics/boot.h"
#include "metrics/oppoint.h"

static struct pr_set *read_set(size_t n, int counting)
{
    struct pr_outcome *o = calloc(n ? n : 1, sizeof *o);
    if (!o) return NULL;
    for (size_t i = 0; i < n; i++) {
        int cls, rev;
        if (scanf("%lf %d %d", &o[i].d1, &cls, &rev) != 3) { free(o); return NULL; }
        o[i].query = o[i].slot = i;
        o[i].cls = (unsigned char)cls;
        o[i].revisit = (unsigned char)rev;
        o[i].first_pos = cls == 1;
    }
    struct pr_set *s = NULL;
    struct err e;
    if (pr_set_from_outcomes(o, n, 1000, counting ? PROTOCOL_LENIENT : PROTOCOL_STRICT, &s, &e))
        fprintf(stderr, "%s\n", e.msg);
    free(o);
    return s;
}

static void print_weights(const struct oppoint_result *r, size_t nr, size_t na, uint64_t seed)
{
    uint32_t *wr = malloc((nr + 1) * sizeof *wr), *wa = malloc((na + 1) * sizeof *wa);
    for (int b = 0; wr && wa && b < r->resamples; b++) {
        boot_weights(seed, b, na, wa);
        if (r->paired) boot_weights(seed, b, nr, wr);
        else boot_weights(seed + 1, b, nr, wr);
        printf("w %d", b);
        for (size_t k = 0; k < nr; k++) printf(" %u", wr[k]);
        printf(" |");
        for (size_t k = 0; k < na; k++) printf(" %u", wa[k]);
        printf("\n");
    }
    free(wr);
    free(wa);
}

int main(void)
{
    size_t nr, na;
    int counting, rule, resamples;
    double target, km, hours;
    unsigned long long seed;
    if (scanf("%zu %zu %d %d %lf %d %llu %lf %lf", &nr, &na, &counting, &rule, &target, &resamples, &seed,
              &km, &hours) != 9)
        return 2;
    struct pr_set *ref = read_set(nr, counting), *at = ref ? read_set(na, counting) : NULL;
    if (!ref || !at) return 2;
    struct oppoint_choice c = {(enum oppoint_rule)rule, target};
    struct oppoint_drive d = {km, hours};
    struct oppoint_result r;
    struct err e;
    if (oppoint_carry(ref, at, &c, &d, &d, resamples, seed, 0.95, &r, &e)) {
        fprintf(stderr, "%s\n", e.msg);
        return 2;
    }
    printf("tau %.17g %.17g %.17g %d\npaired %d\n", r.tau, r.tau_lo, r.tau_hi, r.tau_missing, r.paired);
    for (int k = 0; k < OPP_N; k++) {
        printf("at %s %.17g %.17g %.17g %.17g %.17g %.17g\n", oppoint_score_name((enum oppoint_score_id)k), r.at.v[k],
               r.lo[k], r.hi[k], r.diff[k], r.diff_lo[k], r.diff_hi[k]);
        printf("ref %s %.17g\n", oppoint_score_name((enum oppoint_score_id)k), r.ref.v[k]);
    }
    print_weights(&r, nr, na, seed);
    pr_set_free(ref);
    pr_set_free(at);
    return 0;
}

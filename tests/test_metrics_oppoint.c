/* test_metrics_oppoint.c: operating-point rules, degenerate sets, the parser.
 * The scores themselves are checked against scikit-learn in
 * tests/xcheck_oppoint_sklearn.py. */
#include "tests/check.h"

#include <stdlib.h>

#include "metrics/oppoint.h"

static struct pr_set *mk(const double *d1, const int *cls, const int *rev, size_t n)
{
    struct pr_outcome o[16];
    for (size_t i = 0; i < n; i++)
        o[i] = (struct pr_outcome){d1[i], i, i, cls[i] == 1, (unsigned char)cls[i], (unsigned char)rev[i]};
    struct pr_set *s = NULL;
    struct err e;
    if (pr_set_from_outcomes(o, n, 100, PROTOCOL_STRICT, &s, &e)) return NULL;
    return s;
}

int main(void)
{
    /* the worked case of oppoint.h, by hand */
    const double rd[] = {0.1, 0.2, 0.3, 0.4}, ad[] = {0.15, 0.18, 0.5};
    const int rc[] = {1, 1, 0, 1}, ac[] = {0, 1, 1};
    struct pr_set *ref = mk(rd, rc, rc, 4), *at = mk(ad, ac, ac, 3);
    struct oppoint_choice c;
    struct err e = {{0}};
    CHECK(!oppoint_parse("precision:0.99", &c, &e) && c.rule == OPPOINT_PRECISION && c.target == 0.99, "parse precision:P");
    CHECK_NEAR(oppoint_choose(ref, NULL, &c), 0.2, 0, "largest tau with precision >= 0.99");
    c = (struct oppoint_choice){OPPOINT_RECALL, 0.7};
    CHECK_NEAR(oppoint_choose(ref, NULL, &c), 0.4, 0, "smallest tau with recall >= 0.7 (2/3 at 0.2 is short)");
    c = (struct oppoint_choice){OPPOINT_F1MAX, 0};
    CHECK_NEAR(oppoint_choose(ref, NULL, &c), 0.4, 0, "F1max: 6/7 at 0.4 beats 0.8 at 0.2");
    struct oppoint_drive d = {2, 0.5};
    struct oppoint_result r;
    c = (struct oppoint_choice){OPPOINT_PRECISION, 0.99};
    CHECK(!oppoint_carry(ref, at, &c, &d, &d, 50, 3, 0.95, &r, &e), "carry runs");
    CHECK_NEAR(r.at.v[OPP_PRECISION], 0.5, 1e-15, "precision at 0.2: one TP, one FP");
    CHECK_NEAR(r.at.v[OPP_FP_PER_KM], 0.5, 1e-15, "one false positive over 2 km");
    CHECK_NEAR(r.at.v[OPP_FP_PER_HOUR], 2, 1e-15, "one false positive in half an hour");
    CHECK(!r.paired, "sets of other sizes are not paired");
    CHECK(r.tau_lo <= r.tau && r.tau <= r.tau_hi, "the choice lies inside its interval");
    /* nothing accepted: precision 1, recall 0, no false positives */
    oppoint_score(at, NULL, 0.01, NULL, &r.at);
    CHECK(r.at.v[OPP_PRECISION] == 1 && r.at.v[OPP_RECALL] == 0 && r.at.v[OPP_FP] == 0, "below every d1");
    CHECK(isnan(r.at.v[OPP_FP_PER_KM]), "no distance driven: no rate");
    /* a rule that finds nothing: NaN everywhere, not an error */
    c = (struct oppoint_choice){OPPOINT_PRECISION, 1.0};
    const int bad[] = {0, 0, 1, 1};
    struct pr_set *b = mk(rd, bad, bad, 4);
    CHECK(!oppoint_carry(b, at, &c, NULL, NULL, 20, 1, 0.95, &r, &e) && isnan(r.tau) && isnan(r.at.v[OPP_RECALL]),
          "no tau with precision 1: NaN scores");
    CHECK(!oppoint_carry(ref, ref, &c, NULL, NULL, 0, 1, 0.95, &r, &e) && r.paired && isnan(r.lo[OPP_F1]),
          "a set against itself is paired; no resamples, no interval");
    CHECK(oppoint_carry(ref, at, &c, NULL, NULL, -1, 1, 0.95, &r, &e) == -1, "negative resamples refused");
    CHECK_MSG(e.msg, "expected 0 or more", "the refusal says what was expected");
    /* the parser */
    CHECK(!oppoint_parse("f1max", &c, &e) && c.rule == OPPOINT_F1MAX, "parse f1max");
    CHECK(!oppoint_parse("0.31", &c, &e) && c.rule == OPPOINT_FIXED && c.target == 0.31, "a bare number is fixed");
    CHECK(!oppoint_parse("fixed:2.5", &c, &e) && c.target == 2.5, "parse fixed:D");
    CHECK(!oppoint_parse("recall:1", &c, &e) && c.rule == OPPOINT_RECALL, "recall 1 is allowed");
    CHECK(oppoint_parse("precision:1.5", &c, &e) == -1, "precision above 1 refused");
    CHECK_MSG(e.msg, "expected a number above 0 and at most 1 after 'precision:'", "the bad target is explained");
    CHECK(oppoint_parse("precise:0.9", &c, &e) == -1, "unknown rule refused");
    CHECK_MSG(e.msg, "expected f1max, precision:P, recall:R, fixed:D or a number", "the rules are listed");
    CHECK(oppoint_parse("recall:", &c, &e) == -1, "a rule without a number refused");
    pr_set_free(ref);
    pr_set_free(at);
    pr_set_free(b);
    return check_done();
}

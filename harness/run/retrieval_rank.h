/* retrieval_rank.h: what the two halves of the retrieval module share
 * (retrieval.c: pairs, rules, the custom path; retrieval_dense.c: the
 * sgemm path; retrieval_exact.c: its re-rank).  Internal to harness/run/retrieval*.c; see retrieval.h for
 * the module's contract.
 *
 * A candidate list is (score, index) pairs in any order; retr_rank turns
 * it into a query's row of the output: for L2 and cosine the distances are
 * recomputed in double from the descriptors (the scores only chose the
 * list), for a custom distance the scores are the distances; then the best
 * k by (distance, index) are kept.
 */
#ifndef RV_RETRIEVAL_RANK_H
#define RV_RETRIEVAL_RANK_H

#include "harness/run/retrieval.h"

/* Output arrays for nq queries x k, every slot empty.  0 or -1 (memory). */
int retr_out_alloc(struct retrieval_out *o, size_t nq, int k, struct err *e);

/* Sizes, dimensions and the rule's needs.  0 or -1 with e set. */
int retr_check(const struct retrieval_mat *map, const struct retrieval_mat *q,
               const struct retrieval_rule *rule, int k, struct err *e);

/* Row i of o from n candidates j[] (scores s[], used for RV_DIST_CUSTOM
 * only); pair is scratch of 2 n doubles.  Cannot fail. */
void retr_rank(const struct retrieval_mat *map, const struct retrieval_mat *q, enum rv_distance kind,
               const double *s, const int32_t *j, int n, size_t i, double *pair, struct retrieval_out *o);

/* retr_rank for L2 and cosine, the same output, faster: the distances in
 * AVX2 lanes (retrieval_exact.c) when fast (retr_exact_fast() said so);
 * a is scratch of dim doubles, pair of 2 n; js may be reordered.  Cannot
 * fail. */
int retr_exact_fast(void);
void retr_exact(const struct retrieval_mat *map, const struct retrieval_mat *q, enum rv_distance kind, int fast,
                int32_t *js, int n, size_t i, double *a, double *pair, struct retrieval_out *o);

#endif

/* opt_protocol.c: shared protocol options. */
#include "harness/cli/opt_protocol.h"

#include <limits.h>
#include <math.h>
#include <string.h>

void opt_protocol_init(struct opt_protocol *op)
{
    memset(op, 0, sizeof *op);
    op->r_pos = NAN;
    op->r_neg = NAN;
    op->excl_s = NAN;
    op->excl_scans = LONG_MIN;  /* not given; any number given is checked */
    op->top_k = LONG_MIN;
}

int opt_protocol_finish(const struct opt_protocol *op, const char *cmd,
                        struct protocol *p, struct err *e)
{
    protocol_defaults(p);
    if (op->mode && protocol_mode_parse(op->mode, &p->mode))
        return err_set(e, "revisit %s: --mode expects loop or reloc, got '%s'", cmd, op->mode);
    if (op->counting && protocol_counting_parse(op->counting, &p->counting))
        return err_set(e, "revisit %s: --counting expects strict or lenient, got '%s'", cmd, op->counting);
    if (!isnan(op->r_pos)) p->r_pos_m = op->r_pos;
    p->r_neg_m = isnan(op->r_neg) ? p->r_pos_m : op->r_neg;
    if (!isnan(op->excl_s)) p->exclusion_s = op->excl_s;
    if (op->excl_scans != LONG_MIN && (op->excl_scans < 0 || op->excl_scans > INT_MAX))
        return err_set(e, "revisit %s: --exclude-scans expects a whole number 0 or more, got %ld", cmd, op->excl_scans);
    if (op->top_k != LONG_MIN && (op->top_k < 0 || op->top_k > INT_MAX))
        return err_set(e, "revisit %s: --top-k expects a whole number 1 or more, got %ld", cmd, op->top_k);
    if (op->excl_scans != LONG_MIN) p->exclusion_scans = op->excl_scans;
    if (op->top_k != LONG_MIN) p->top_k = (int)op->top_k;
    p->planar = op->planar;
    char msg[256];
    if (protocol_check(p, msg, sizeof msg)) return err_set(e, "revisit %s: %s", cmd, msg);
    return 0;
}

/* opt_protocol.h: the protocol options every scoring command shares.
 *
 *   --mode loop|reloc  --radius M  --radius-neg M  --exclude-s S
 *   --exclude-scans N  --planar  --counting strict|lenient  --top-k K
 *
 * Usage: declare `struct opt_protocol op; opt_protocol_init(&op);`, splice
 * OPT_PROTOCOL_ROWS(op) into the option table, and after opt_parse call
 * opt_protocol_finish(&op, cmd, &protocol, e).
 */
#ifndef RV_OPT_PROTOCOL_H
#define RV_OPT_PROTOCOL_H

#include "harness/base/opt.h"
#include "metrics/protocol.h"

struct opt_protocol {
    const char *mode, *counting;
    double r_pos, r_neg, excl_s;
    long excl_scans, top_k;
    int planar;
};

#define OPT_PROTOCOL_ROWS(op) \
    {"--mode", OPT_STR, &(op).mode, "loop|reloc", "protocol mode (default loop; reloc when --query is given)"}, \
    {"--radius", OPT_METRES, &(op).r_pos, "M", "revisit radius, metres: 3 or 3m (default 3)"}, \
    {"--radius-neg", OPT_METRES, &(op).r_neg, "M", "wrong-match radius, metres (default = --radius)"}, \
    {"--exclude-s", OPT_SECONDS, &(op).excl_s, "S", "loop: skip candidates from the last S seconds: 30 or 30s (default 30)"}, \
    {"--exclude-scans", OPT_INT, &(op).excl_scans, "N", "loop: skip the last N scans instead of a time window"}, \
    {"--planar", OPT_FLAG, &(op).planar, NULL, "measure pose distances in x, y only"}, \
    {"--counting", OPT_STR, &(op).counting, "strict|lenient", "false-negative counting (default strict)"}, \
    {"--top-k", OPT_INT, &(op).top_k, "K", "candidates kept per query (default 25)"}

void opt_protocol_init(struct opt_protocol *op);
/* Turn the parsed options into a checked protocol. 0 or -1 with e set. */
int opt_protocol_finish(const struct opt_protocol *op, const char *cmd,
                        struct protocol *p, struct err *e);

#endif

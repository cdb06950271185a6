/* protocol.h: the evaluation protocol shared by ground truth, curves and the
 * commands that score (metrics, eval, sweep, inspect).  See design.md and the
 * metrics/README.md, "Evaluation protocol", for the definitions.
 *
 *     struct protocol p; protocol_defaults(&p);   // loop, 3 m, 30 s, strict
 */
#ifndef RV_PROTOCOL_H
#define RV_PROTOCOL_H

enum protocol_mode {
    PROTOCOL_LOOP = 0,   /* one recording; candidates are earlier scans */
    PROTOCOL_RELOC = 1   /* a map and a query recording; every map scan is a candidate */
};

enum protocol_counting {
    PROTOCOL_STRICT = 0,  /* FN = a revisit query that is not a TP */
    PROTOCOL_LENIENT = 1  /* FN = a revisit query that is not accepted */
};

struct protocol {
    enum protocol_mode mode;
    enum protocol_counting counting;
    double r_pos_m;       /* revisit radius (default 3 m) */
    double r_neg_m;       /* wrong-match radius, >= r_pos (default = r_pos) */
    double exclusion_s;   /* loop: candidates need t_j <= t_i - exclusion_s (default 30) */
    long exclusion_scans; /* loop: if >= 0, candidates need j <= i - exclusion_scans instead */
    int planar;           /* 1: distances in x, y only */
    int top_k;            /* candidates kept per query (default 25) */
};

/* The one table of protocol names: "loop", "reloc" (enum order) and
 * "strict", "lenient", each list NULL-terminated for the parsers that offer
 * them as choices.  A name gives its value: 0, or -1 when s is none of them. */
extern const char *const protocol_mode_names[];
extern const char *const protocol_counting_names[];
const char *protocol_mode_name(enum protocol_mode m);
const char *protocol_counting_name(enum protocol_counting c);
int protocol_mode_parse(const char *s, enum protocol_mode *out);
int protocol_counting_parse(const char *s, enum protocol_counting *out);

/* Fill the defaults above. Cannot fail. */
void protocol_defaults(struct protocol *p);

/* Check ranges (radii > 0, r_neg >= r_pos, exclusion >= 0, top_k >= 1).
 * Returns 0, or -1 with a message in msg (size n). */
int protocol_check(const struct protocol *p, char *msg, unsigned long n);

#endif

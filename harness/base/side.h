/* side.h: the sets of scans an evaluation has, and the words for them: a
 * perturbation is applied to the query scans, the map scans or both.  The
 * one table of those words, for the perturbation chains (perturb/chain.h),
 * the scenario loader and the recording manifest alike.
 *
 *     int k = side_lookup("map");       // SIDE_MAP
 *     if (k < 0) ... "expected query, map or both"
 *
 * Cannot fail; thread-safe (constant data).
 */
#ifndef RV_SIDE_H
#define RV_SIDE_H

enum side { SIDE_QUERY, SIDE_MAP, SIDE_BOTH };

/* The words, in enum order, NULL-terminated. */
extern const char *const side_names[];
/* The choices as a message says them. */
#define SIDE_CHOICES "query, map or both"

/* The enum value of a word, or -1 for anything else (NULL too). */
int side_lookup(const char *word);

#endif

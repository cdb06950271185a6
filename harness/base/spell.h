/* spell.h: nearest known names for a misspelt one ("did you mean ...").
 *
 *     const char *known[] = {"scan-context", "range-height", "m2dp", "sop"};
 *     char hint[256];
 *     if (spell_suggest("scan-contxt", known, 4, hint, sizeof hint))
 *         ... hint reads "'scan-context'" ...
 *
 * spell_distance is the Levenshtein edit distance (insertions, deletions
 * and substitutions of one byte each cost 1):
 *     spell_distance("sectr", "sector") == 1
 *
 * Failure contract: neither function can fail.  spell_suggest returns the
 * number of names written into out (0: none close enough, out is "");
 * out is always terminated and is cut short, never overrun, when small.
 */
#ifndef RV_SPELL_H
#define RV_SPELL_H

#include <stddef.h>

/* Edit distance between a and b (bytes, case-sensitive). */
size_t spell_distance(const char *a, const char *b);

/* Write the names of known nearest to word, as "'a'" or "'a' or 'b'", into
 * out.  A name counts as near when its distance is the smallest found and
 * at most a third of the word's length (at least 1, at most 3); a name equal
 * to word is never suggested. */
int spell_suggest(const char *word, const char *const *known, size_t n, char *out, size_t outn);

#endif

/* spell.c: edit distance and nearest-name suggestions for error messages. */
#include "harness/base/spell.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define SPELL_MAX 256   /* longer words are compared on their first SPELL_MAX bytes */

size_t spell_distance(const char *a, const char *b)
{
    size_t na = strnlen(a, SPELL_MAX), nb = strnlen(b, SPELL_MAX);
    size_t row[SPELL_MAX + 1];
    for (size_t j = 0; j <= nb; j++) row[j] = j;
    for (size_t i = 1; i <= na; i++) {
        size_t diag = row[0];   /* row[i-1][j-1] */
        row[0] = i;
        for (size_t j = 1; j <= nb; j++) {
            size_t up = row[j];
            size_t best = diag + (a[i - 1] != b[j - 1]);
            if (up + 1 < best) best = up + 1;
            if (row[j - 1] + 1 < best) best = row[j - 1] + 1;
            row[j] = best;
            diag = up;
        }
    }
    return row[nb];
}

int spell_suggest(const char *word, const char *const *known, size_t n, char *out, size_t outn)
{
    size_t len = strlen(word), limit = len / 3;
    if (limit < 1) limit = 1;
    if (limit > 3) limit = 3;
    size_t best = limit + 1;
    for (size_t k = 0; k < n; k++) {
        size_t d = spell_distance(word, known[k]);
        if (d > 0 && d < best) best = d;
    }
    if (outn) out[0] = 0;
    int count = 0;
    size_t used = 0;
    for (size_t k = 0; k < n && best <= limit; k++) {
        if (spell_distance(word, known[k]) != best) continue;
        int w = snprintf(out + used, outn > used ? outn - used : 0, "%s'%s'", count ? " or " : "", known[k]);
        if (w < 0 || (size_t)w >= outn - used) {   /* out is full: keep the whole names */
            if (outn) out[used] = 0;
            break;
        }
        used += (size_t)w;
        count++;
    }
    return count;
}

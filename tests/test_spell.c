/* test_spell.c: edit distance and the nearest-name suggestions. */
#include "harness/base/spell.h"
#include "tests/check.h"

int main(void)
{
    /* Levenshtein distance worked examples (common practice, no source):
     * kitten -> sitting is 3, flaw -> lawn is 2, saturday -> sunday is 3. */
    CHECK(spell_distance("kitten", "sitting") == 3, "kitten to sitting takes three edits");
    CHECK(spell_distance("flaw", "lawn") == 2, "flaw to lawn takes two edits");
    CHECK(spell_distance("saturday", "sunday") == 3, "saturday to sunday takes three edits");
    CHECK(spell_distance("sunday", "saturday") == 3, "the distance is symmetric");
    CHECK(spell_distance("", "abc") == 3, "from nothing, one insertion per byte");
    CHECK(spell_distance("abc", "abc") == 0, "a word is at distance 0 from itself");
    CHECK(spell_distance("sectr", "sector") == 1, "one missing letter is one edit");

    const char *known[] = {"scan-context", "range-height", "m2dp", "sop"};
    char hint[256];
    CHECK(spell_suggest("scan-contxt", known, 4, hint, sizeof hint) == 1, "one name is near scan-contxt");
    CHECK(!strcmp(hint, "'scan-context'"), "the near name is scan-context, quoted");
    CHECK(spell_suggest("rnage-height", known, 4, hint, sizeof hint) == 1 && !strcmp(hint, "'range-height'"),
          "two swapped letters still find range-height");
    CHECK(spell_suggest("sp", known, 4, hint, sizeof hint) == 1 && !strcmp(hint, "'sop'"),
          "a short word allows one edit");
    CHECK(spell_suggest("zzzzzz", known, 4, hint, sizeof hint) == 0 && hint[0] == 0,
          "nothing near gives no suggestion and an empty text");
    CHECK(spell_suggest("sop", known, 4, hint, sizeof hint) == 0, "the word itself is never suggested");
    const char *two[] = {"yaw", "jaw", "sector"};
    CHECK(spell_suggest("xaw", two, 3, hint, sizeof hint) == 2 && !strcmp(hint, "'yaw' or 'jaw'"),
          "names at the same smallest distance are all given");
    char tiny[8];
    CHECK(spell_suggest("xaw", two, 3, tiny, sizeof tiny) == 1 && !strcmp(tiny, "'yaw'"),
          "a small buffer keeps whole names only");
    return check_done();
}

/* test_json_path.c: the text position of a JSON path. */
#include "harness/base/json_path.h"
#include "tests/check.h"

/* Offset of needle's first occurrence (counted here with strstr). */
static size_t at(const char *text, const char *needle)
{
    return (size_t)(strstr(text, needle) - text);
}

int main(void)
{
    const char *t = "{\"a\": [1, {\"b\": \"x]}\\\"\", \"c\": [[0, 1], [2, {\"d\": true}]]}],\n \"e\": null}";
    size_t n = strlen(t), off;
    CHECK(!json_path_find(t, n, "", &off) && off == 0, "the empty path is the whole text");
    CHECK(!json_path_find(t, n, "a", &off) && off == at(t, "\"a\""), "a top-level key gives its quote");
    CHECK(!json_path_find(t, n, "a[0]", &off) && off == at(t, "1,"), "an index gives the element");
    CHECK(!json_path_find(t, n, "a[1].c[1][1].d", &off) && off == at(t, "\"d\""),
          "nested arrays and objects are walked");
    CHECK(!json_path_find(t, n, "e", &off) && off == at(t, "\"e\""),
          "a string holding brackets and an escaped quote is skipped whole");
    CHECK(json_path_find(t, n, "a[2]", &off) == -1, "an index past the end is not found");
    CHECK(json_path_find(t, n, "f", &off) == -1, "a missing key is not found");
    CHECK(json_path_find(t, n, "a.b", &off) == -1, "a key into an array is not found");
    CHECK(json_path_find("{\"a\": [1, 2", 11, "a[5]", &off) == -1, "a cut text is not found, never overrun");
    return check_done();
}

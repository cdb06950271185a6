/* test_scan_refusals.c: every refusal of the text, PCD and PLY readers, one
 * file each, checking that the message names the file (and line) and says
 * what was expected.  Headers follow the PCD v0.7 file-format description
 * and the PLY format description (Turk, 1994), broken one way at a time. */
#include <stdio.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "harness/io/scan_io.h"
#include "tests/check.h"

struct bad { const char *name, *text, *frag; };

#define PCD_XYZ "FIELDS x y z\nSIZE 4 4 4\nTYPE F F F\n"
#define PLY_XYZ "element vertex 1\nproperty float x\nproperty float y\nproperty float z\n"

static const struct bad cases[] = {
    /* text */
    {"e.txt", "", "e.txt: file is empty, expected lines of x y z [i]"},
    /* PCD header */
    {"k.pcd", "VERSION 0.7\nCOLOR x\n", "k.pcd:2: unknown header keyword 'COLOR'"},
    {"s.pcd", "SIZE 4 4 4\n", "s.pcd:1: SIZE before FIELDS, expected FIELDS first"},
    {"n.pcd", "FIELDS x y z\nSIZE 4 4\n", "n.pcd:2: SIZE has 2 entries, expected 3 (one per field)"},
    {"z.pcd", "FIELDS x y z\nSIZE 4 4 0\n", "z.pcd:2: SIZE entry 3 is '0', expected a whole number 1, 2, 4 or 8"},
    {"c.pcd", PCD_XYZ "COUNT 1 x 1\n", "c.pcd:4: COUNT entry 2 is 'x', expected a whole number from 1 to 8"},
    {"w.pcd", PCD_XYZ "WIDTH -3\n", "w.pcd:4: WIDTH is '-3', expected a whole number"},
    {"d.pcd", PCD_XYZ "WIDTH 1\nDATA zipped\n", "d.pcd:5: DATA 'zipped', expected ascii, binary or binary_compressed"},
    {"h.pcd", PCD_XYZ "WIDTH 1\n", "h.pcd:4: header has no DATA line"},
    {"t.pcd", "FIELDS x y z\nSIZE 4 4 4\nWIDTH 1\nDATA ascii\n1 2 3\n", "t.pcd: header lacks TYPE"},
    {"p.pcd", PCD_XYZ "WIDTH 2\nHEIGHT 2\nPOINTS 3\nDATA ascii\n", "p.pcd: POINTS 3 does not equal WIDTH 2 x HEIGHT 2"},
    {"f.pcd", "FIELDS x y z\nSIZE 4 4 2\nTYPE F F F\nWIDTH 1\nDATA ascii\n1 2 3\n",
     "f.pcd: field 'z' has TYPE F with SIZE 2, expected SIZE 4 or 8"},
    {"i.pcd", "FIELDS x y z\nSIZE 4 4 8\nTYPE F F I\nWIDTH 1\nDATA ascii\n1 2 3\n",
     "i.pcd: field 'z' has TYPE I with SIZE 8, expected SIZE 1, 2 or 4"},
    /* PCD ascii body */
    {"a.pcd", PCD_XYZ "WIDTH 3\nDATA ascii\n1 2 3\n4 5 6\n        ", "a.pcd:8: file ends after 2 points, POINTS declares 3"},
    {"v.pcd", PCD_XYZ "WIDTH 1\nDATA ascii\n1 two 3\n", "v.pcd:6: value 2 is not a number, expected 3 values per point"},
    {"b.pcd", PCD_XYZ "WIDTH 4\nDATA ascii\n1 2 3\n", "b.pcd: body is 6 bytes, too short for POINTS 4 of 3 values"},
    {"empty.pcd", "", "empty.pcd: file is empty, expected a scan"},
    {"more.pcd", PCD_XYZ "WIDTH 1\nDATA ascii\n1 2 3\n\n4 5 6\n",
     "more.pcd:8: more points than POINTS 1 declares, expected POINTS to count every point"},
    /* PLY header */
    {"f.ply", "ply\nformat ascii 2.0\n", "f.ply:2: format version '2.0', expected 1.0"},
    {"g.ply", "ply\nformat utf8 1.0\n", "g.ply:2: format 'utf8', expected ascii or binary_little_endian"},
    {"k.ply", "ply\nformat ascii 1.0\nvertices 3\n", "k.ply:3: unknown header keyword 'vertices'"},
    {"p.ply", "ply\nformat ascii 1.0\nproperty float x\n", "p.ply:3: property before any element"},
    {"l.ply", "ply\nformat ascii 1.0\nelement face 1\nproperty list float int idx\n",
     "l.ply:4: bad list property, expected 'property list COUNT_TYPE ITEM_TYPE NAME'"},
    {"q.ply", "ply\nformat ascii 1.0\nelement vertex 1\nproperty float\n", "q.ply:4: bad property line, expected 'property TYPE NAME'"},
    {"c.ply", "ply\nformat ascii 1.0\nelement vertex -1\n", "c.ply:3: bad element line, expected 'element NAME COUNT'"},
    {"h.ply", "ply\nformat ascii 1.0\n" PLY_XYZ, "h.ply:6: header has no end_header line"},
    {"m.ply", "ply\n" PLY_XYZ "end_header\n1 2 3\n", "m.ply: header has no format line"},
    {"n.ply", "ply\nformat ascii 1.0\nelement face 1\nproperty uchar a\nend_header\n1\n",
     "n.ply: no vertex element, expected 'element vertex N'"},
    {"s.ply", "ply\nformat ascii 1.0\n" PLY_XYZ "end_header\n1   2   ", "s.ply:8: file ends early, expected more values"},
    {"x.ply", "ply\nformat ascii 1.0\n" PLY_XYZ "end_header\n1 y 3\n", "x.ply:8: value is not a number, expected a number"},
    {"y.ply", "ply\nformat ascii 1.0\nelement vertex 1\nproperty list uchar float x\nproperty float y\n"
              "property float z\nend_header\n1 2 3 4\n", "y.ply: vertex property 'x' is a list, expected a scalar"},
    {"o.ply", "ply\nformat ascii 1.0\nelement face 1\nproperty list int int idx\n" PLY_XYZ "end_header\n-4 1 2 3\n",
     "o.ply:10: list length -4, expected 0 to 1000000"},
    {"u.ply", "ply\nformat ascii 1.0\nelement face 1000000000000000000\n" PLY_XYZ "end_header\n1 2 3\n",
     "u.ply: element face has no properties and 1000000000000000000 items, more than the"},
    {"r.ply", "ply\nformat ascii 1.0\nelement face 9\nproperty uchar a\n" PLY_XYZ "end_header\n1\n2\n1 2 3\n",
     "r.ply: body is 10 bytes, too short for element face 9 (at least 2 bytes each)"},
};

/* Binary bodies (NUL bytes allowed): length given. */
struct bad_bin { const char *name, *head; size_t body; const char *frag; };

static const struct bad_bin bin_cases[] = {
    /* 3 float32 per point, POINTS 1 and a body of 2 points */
    {"more.bin.pcd", PCD_XYZ "WIDTH 1\nDATA binary\n", 24,
     "more.bin.pcd: binary body is 24 bytes, POINTS 1 needs 12 (12 bytes per point): 12 bytes more than"},
    /* a list in the vertex element: each vertex takes at least its scalars and the list count */
    {"list.ply", "ply\nformat binary_little_endian 1.0\nelement vertex 268435456\nproperty float x\n"
                 "property float y\nproperty float z\nproperty list uchar int idx\nend_header\n", 26,
     "list.ply: body is 26 bytes, too short for element vertex 268435456 (at least 13 bytes each)"},
};

static void test_binary_bodies(void)
{
    for (size_t k = 0; k < sizeof bin_cases / sizeof bin_cases[0]; k++) {
        const struct bad_bin *b = &bin_cases[k];
        FILE *f = fopen(b->name, "wb");
        fputs(b->head, f);
        for (size_t j = 0; j < b->body; j++) fputc(j % 12 ? 0 : 0x3f, f);
        fclose(f);
        struct cloud c;
        cloud_init(&c);
        struct err e;
        e.msg[0] = 0;
        char desc[160];
        snprintf(desc, sizeof desc, "%s is refused", b->name);
        CHECK(scan_read(b->name, b->name[strlen(b->name) - 1] == 'd' ? SCAN_PCD : SCAN_PLY, &c, &e) == -1 &&
              c.n == 0, desc);
        snprintf(desc, sizeof desc, "%s: the message names the file and the fault", b->name);
        CHECK_MSG(e.msg, b->frag, desc);
        cloud_free(&c);
    }
}

/* A FIFO is refused at once (opened without blocking), never waited on. */
static void test_fifo(void)
{
    unlink("pipe.pcd");
    CHECK(mkfifo("pipe.pcd", 0600) == 0, "a FIFO can be made for the test");
    alarm(20);  /* a reader that blocks on the FIFO dies here and the test fails */
    struct cloud c;
    cloud_init(&c);
    struct err e;
    e.msg[0] = 0;
    CHECK(scan_read("pipe.pcd", SCAN_AUTO, &c, &e) == -1, "a FIFO listed as a scan is refused");
    CHECK_MSG(e.msg, "pipe.pcd: not a regular file (a FIFO), expected a scan file", "the message names the kind");
    e.msg[0] = 0;
    CHECK(scan_read("pipe.pcd", SCAN_RAW, &c, &e) == -1, "a FIFO read as raw floats is refused");
    CHECK_MSG(e.msg, "pipe.pcd: not a regular file (a FIFO)", "the raw reader names the kind");
    e.msg[0] = 0;
    CHECK(scan_read("pipe.pcd", SCAN_TEXT, &c, &e) == -1, "a FIFO read as text is refused");
    CHECK_MSG(e.msg, "pipe.pcd: not a regular file (a FIFO)", "the text reader names the kind");
    e.msg[0] = 0;
    CHECK(scan_read("pipe.pcd", SCAN_PLY, &c, &e) == -1, "a FIFO read as PLY is refused");
    CHECK_MSG(e.msg, "pipe.pcd: not a regular file (a FIFO)", "the PLY reader names the kind");
    e.msg[0] = 0;
    CHECK(scan_read(".", SCAN_PCD, &c, &e) == -1, "a folder is refused");
    CHECK_MSG(e.msg, ".: not a regular file (a folder)", "the message says it is a folder");
    alarm(0);
    cloud_free(&c);
    unlink("pipe.pcd");
}


int main(void)
{
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        const struct bad *b = &cases[k];
        FILE *f = fopen(b->name, "w");
        fputs(b->text, f);
        fclose(f);
        struct cloud c;
        cloud_init(&c);
        struct err e;
        e.msg[0] = 0;
        char desc[160];
        snprintf(desc, sizeof desc, "%s is refused", b->name);
        CHECK(scan_read(b->name, SCAN_AUTO, &c, &e) == -1 && c.n == 0, desc);
        snprintf(desc, sizeof desc, "%s: the message names the file and the fault", b->name);
        CHECK_MSG(e.msg, b->frag, desc);
        cloud_free(&c);
    }
    test_binary_bodies();
    test_fifo();
    /* A message longer than the error record is cut visibly, never silently. */
    char deep[2200] = "";
    for (int k = 0; k < 40; k++) strcat(deep, "a-folder-name-of-fifty-characters-for-the-test-xx/");
    strcat(deep, "x.pcd");
    struct cloud c;
    cloud_init(&c);
    struct err e;
    CHECK(scan_read(deep, SCAN_AUTO, &c, &e) == -1, "a scan under a path of 2000 bytes that does not exist is refused");
    CHECK(strlen(e.msg) == ERR_MSG_MAX - 1 && !strcmp(e.msg + ERR_MSG_MAX - 4, "..."),
          "the message cut to the record's size ends in '...'");
    cloud_free(&c);
    return check_done();
}

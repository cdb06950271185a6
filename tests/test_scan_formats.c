/* test_scan_formats.c: raw, text, PCD and PLY readers and writers, and their
 * refusals.  The PCD fixtures are written by hand from the PCD v0.7
 * file-format description (header keywords, DATA ascii/binary, point-major
 * binary body); the PLY fixtures from the PLY format description (Turk,
 * 1994: header, element/property lines, ascii and binary_little_endian
 * bodies, list properties). */
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "harness/io/pcd.h"
#include "harness/io/ply.h"
#include "harness/io/scan_io.h"
#include "tests/check.h"

static void put(const char *path, const void *data, size_t len)
{
    FILE *f = fopen(path, "wb");
    fwrite(data, 1, len, f);
    fclose(f);
}

static void puts_file(const char *path, const char *text) { put(path, text, strlen(text)); }

static void test_raw(void)
{
    struct err e;
    struct cloud c;
    cloud_init(&c);
    float v[8] = {1, 2, 3, 0.5f, -4, 5.5f, 6, 1};
    put("a.bin", v, sizeof v);
    CHECK(!scan_read("a.bin", SCAN_AUTO, &c, &e) && c.n == 2, "a raw file of 2 records gives 2 points");
    CHECK(CLOUD_X(&c, 1) == -4 && CLOUD_Y(&c, 1) == 5.5f && CLOUD_I(&c, 0) == 0.5f && !c.ring && !c.time,
          "raw values land in x y z i order, no ring or time");
    put("b.bin", v, 20);
    CHECK(scan_read("b.bin", SCAN_RAW, &c, &e) == -1 && c.n == 0, "a raw size not a multiple of 16 is refused");
    CHECK_MSG(e.msg, "b.bin: size 20 bytes is not a multiple of 16", "the message names the file and the size");
    put("empty.bin", v, 0);
    CHECK(scan_read("empty.bin", SCAN_AUTO, &c, &e) == -1, "an empty raw file is refused");
    CHECK_MSG(e.msg, "empty.bin: file is empty", "the message names the file and says it is empty");
    CHECK(scan_read("missing.bin", SCAN_AUTO, &c, &e) == -1, "a missing file is refused");
    CHECK_MSG(e.msg, "missing.bin: cannot open", "the message names the missing file");
    CHECK(scan_read("a.xyzw", SCAN_AUTO, &c, &e) == -1, "an unknown extension is refused");
    CHECK_MSG(e.msg, "unknown scan file extension", "the message says the extension is unknown");
    /* Writer round trip keeps the bits. */
    struct cloud w;
    cloud_init(&w);
    for (int k = 0; k < 1000; k++) cloud_push(&w, k * 0.1f, -k * 0.2f, 1e-7f * k, (float)k);
    CHECK(!scan_write_raw("w.bin", &w, &e) && !scan_read("w.bin", SCAN_AUTO, &c, &e) && c.n == 1000 &&
          !memcmp(c.pts, w.pts, 16000), "raw write then read gives the same bytes");
    struct cloud empty;
    cloud_init(&empty);
    CHECK(scan_write_raw("e.bin", &empty, &e) == -1, "an empty cloud is not written as raw");
    CHECK_MSG(e.msg, "pcd layout", "the message points to the pcd layout");
    /* A sparse file one record over the point bound: refused from its size,
     * before any allocation (the file holds no data blocks). */
    FILE *f = fopen("huge.bin", "wb");
    int sparse = f && !ftruncate(fileno(f), (off_t)((CLOUD_MAX_POINTS + 1) * 16));
    if (f) fclose(f);
    CHECK(sparse && scan_read("huge.bin", SCAN_RAW, &c, &e) == -1 && c.cap < 1000000,
          "a raw file over the point bound is refused without allocating");
    CHECK_MSG(e.msg, "huge.bin: 268435457 points is more than the limit of 268435456", "the message names the bound");
    unlink("huge.bin");
    cloud_free(&w);
    cloud_free(&c);
}

/* The non-finite check on raw files runs block by block as they are read
 * (512 KiB blocks: point 32768 starts the second); a bad point in the last
 * record of the first block, one deep in the second and a NaN intensity
 * (kept) must all be handled. */
static void test_read_finite(void)
{
    struct err e;
    struct cloud w, c;
    cloud_init(&w);
    cloud_init(&c);
    for (int k = 0; k < 40000; k++) cloud_push(&w, (float)k, 1, 2, 3);
    CHECK(!scan_write_raw("f.bin", &w, &e), "a 40000-point raw scan is written");
    size_t d = 9;
    CHECK(!scan_read_finite("f.bin", SCAN_AUTO, &c, &d, &e) && c.n == 40000 && d == 0,
          "an all-finite raw scan drops nothing");
    CLOUD_Z(&w, 32767) = INFINITY;
    CLOUD_X(&w, 35000) = NAN;
    CLOUD_I(&w, 100) = NAN;
    scan_write_raw("f.bin", &w, &e);
    CHECK(!scan_read_finite("f.bin", SCAN_RAW, &c, &d, &e) && c.n == 39998 && d == 2,
          "non-finite coordinates at a block edge and in a later block are dropped and counted");
    CHECK(CLOUD_X(&c, 32767) == 32768 && CLOUD_X(&c, 34998) == 34999 && CLOUD_X(&c, 34999) == 35001 &&
          isnan(CLOUD_I(&c, 100)), "the points after a dropped one move up; a NaN intensity is kept");
    w.n = 32768;
    CLOUD_Z(&w, 32767) = 2;
    CLOUD_Y(&w, 5) = -INFINITY;
    scan_write_raw("g.bin", &w, &e);
    CHECK(!scan_read_finite("g.bin", SCAN_RAW, &c, &d, &e) && c.n == 32767 && d == 1,
          "a file of exactly one block with a bad point in it");
    w.n = 40000;
    CHECK(!pcd_write_binary("f.pcd", &w, &e) && !scan_read_finite("f.pcd", SCAN_AUTO, &c, &d, &e) &&
          c.n == 39998 && d == 2, "the same holds for PCD scans");
    cloud_free(&w);
    cloud_free(&c);
}

static void test_text(void)
{
    struct err e;
    struct cloud c;
    cloud_init(&c);
    puts_file("a.txt", "# a comment\n1 2 3 4\n\n5,6,7\n  8\t9\t10 11  # trailing\n");
    CHECK(!scan_read("a.txt", SCAN_AUTO, &c, &e) && c.n == 3, "text with comments, blanks, commas and tabs");
    CHECK(CLOUD_I(&c, 0) == 4 && CLOUD_I(&c, 1) == 0 && CLOUD_X(&c, 2) == 8 && CLOUD_I(&c, 2) == 11,
          "x y z [i], intensity 0 when absent");
    puts_file("b.txt", "1 2 3\n1 2\n");
    CHECK(scan_read("b.txt", SCAN_TEXT, &c, &e) == -1, "a line of 2 numbers is refused");
    CHECK_MSG(e.msg, "b.txt:2: found 2 numbers, expected 3", "the message names file, line and count");
    puts_file("c.txt", "1 2 3\n1 2 x\n");
    CHECK(scan_read("c.txt", SCAN_TEXT, &c, &e) == -1, "a word among the numbers is refused");
    CHECK_MSG(e.msg, "c.txt:2: field 3 is not a number", "the message names the field");
    puts_file("d.txt", "1 2 3 4 5 6\n");
    CHECK(scan_read("d.txt", SCAN_TEXT, &c, &e) == -1, "a line of 6 numbers is refused");
    CHECK_MSG(e.msg, "d.txt:1: found more than 4 numbers", "the message says too many numbers");
    cloud_free(&c);
}

static const char pcd_ascii[] =
    "# .PCD v0.7 - Point Cloud Data file format\n"
    "VERSION 0.7\n"
    "FIELDS x y z intensity ring normal_x\n"
    "SIZE 4 4 4 4 2 4\n"
    "TYPE F F F F U F\n"
    "COUNT 1 1 1 1 1 3\n"
    "WIDTH 3\n"
    "HEIGHT 1\n"
    "VIEWPOINT 0 0 0 1 0 0 0\n"
    "POINTS 3\n"
    "DATA ascii\n"
    "1.5 2.5 -3.5 10 0 0 0 1\n"
    "4 5 6 20 7 0 1 0\n"
    "nan 0 0 0 31 1 0 0\n";

/* A binary body built field by field from the description: x y z as F 4,
 * intensity as U 1, ring as U 2, t as F 8, a skipped I 4 field. */
static size_t pcd_binary_fixture(unsigned char *out, size_t npts, size_t keep_bytes)
{
    const char *hdr = "VERSION .7\nFIELDS x y z intensity ring t skip\nSIZE 4 4 4 1 2 8 4\n"
                      "TYPE F F F U U F I\nCOUNT 1 1 1 1 1 1 1\nWIDTH 2\nHEIGHT 1\nPOINTS 2\nDATA binary\n";
    size_t o = strlen(hdr);
    memcpy(out, hdr, o);
    for (size_t k = 0; k < npts; k++) {
        float xyz[3] = {(float)k + 0.25f, -2.0f * (float)k, 3.0f};
        memcpy(out + o, xyz, 12); o += 12;
        out[o++] = (unsigned char)(200 + k);
        uint16_t r = (uint16_t)(300 + k); memcpy(out + o, &r, 2); o += 2;
        double t = 0.05 * (double)k; memcpy(out + o, &t, 8); o += 8;
        int32_t s = -1; memcpy(out + o, &s, 4); o += 4;
    }
    return keep_bytes ? strlen(hdr) + keep_bytes : o;
}

static void test_pcd(void)
{
    struct err e;
    struct cloud c;
    cloud_init(&c);
    puts_file("a.pcd", pcd_ascii);
    CHECK(!scan_read("a.pcd", SCAN_AUTO, &c, &e) && c.n == 3, "PCD ascii with a COUNT 3 field reads 3 points");
    CHECK(CLOUD_X(&c, 0) == 1.5f && CLOUD_Z(&c, 0) == -3.5f && CLOUD_I(&c, 1) == 20 && c.ring && c.ring[1] == 7 &&
          c.ring[2] == 31 && !c.time, "ascii values land by field name, ring kept, extra fields skipped");
    CHECK(isnan(CLOUD_X(&c, 2)), "a nan coordinate is kept by the reader (the recording drops it)");
    unsigned char buf[1024];
    put("b.pcd", buf, pcd_binary_fixture(buf, 2, 0));
    CHECK(!scan_read("b.pcd", SCAN_PCD, &c, &e) && c.n == 2, "PCD binary with mixed types reads 2 points");
    CHECK(CLOUD_X(&c, 1) == 1.25f && CLOUD_Y(&c, 1) == -2 && CLOUD_I(&c, 1) == 201 && c.ring[1] == 301 &&
          c.time && fabs(c.time[1] - 0.05) < 1e-7, "binary U1, U2 and F8 fields convert; t is the time field");
    put("trunc.pcd", buf, pcd_binary_fixture(buf, 2, 40));
    CHECK(scan_read("trunc.pcd", SCAN_PCD, &c, &e) == -1 && c.n == 0, "a truncated binary body is refused");
    CHECK_MSG(e.msg, "trunc.pcd: binary body is 40 bytes, POINTS 2 needs 54 (27 bytes per point)", "the message names file and sizes");
    char bad[2048];
    snprintf(bad, sizeof bad, "%s", pcd_ascii);
    memcpy(strstr(bad, "TYPE F F F F U F"), "TYPE F F F X U F", 16);
    puts_file("type.pcd", bad);
    CHECK(scan_read("type.pcd", SCAN_PCD, &c, &e) == -1, "an unknown field type is refused");
    CHECK_MSG(e.msg, "type.pcd:5: unknown field type 'X' for field 4", "the message names file, line and field");
    puts_file("big.pcd", "VERSION 0.7\nFIELDS x y z\nSIZE 4 4 4\nTYPE F F F\nWIDTH 1000000\nPOINTS 1000000\nDATA binary\nabcd");
    CHECK(scan_read("big.pcd", SCAN_PCD, &c, &e) == -1, "POINTS larger than the file can hold is refused");
    CHECK_MSG(e.msg, "needs 12000000", "the message gives the bytes the header asks for");
    puts_file("huge.pcd", "VERSION 0.7\nFIELDS x y z\nSIZE 4 4 4\nTYPE F F F\nWIDTH 1000000000000\nPOINTS 1000000000000\nDATA binary\n");
    CHECK(scan_read("huge.pcd", SCAN_PCD, &c, &e) == -1, "POINTS beyond the point bound is refused");
    CHECK_MSG(e.msg, "more than the limit", "the message names the bound");
    puts_file("noz.pcd", "VERSION 0.7\nFIELDS x y\nSIZE 4 4\nTYPE F F\nWIDTH 0\nPOINTS 0\nDATA ascii\n");
    CHECK(scan_read("noz.pcd", SCAN_PCD, &c, &e) == -1, "a PCD without z is refused");
    CHECK_MSG(e.msg, "lack z", "the message names the missing field");
    puts_file("short.pcd", "FIELDS x y z\nSIZE 4 4 4\nTYPE F F F\nWIDTH 3\nPOINTS 3\nDATA ascii\n1 2 3\n4 5 6 7\n1 1 1\n");
    CHECK(scan_read("short.pcd", SCAN_PCD, &c, &e) == -1, "an ascii line with too many values is refused");
    CHECK_MSG(e.msg, "short.pcd:8: more than 3 values", "the message names the body line");
    /* Writers: binary and ascii both read back, ring and time kept. */
    struct cloud w;
    cloud_init(&w);
    cloud_enable_ring(&w);
    cloud_enable_time(&w);
    /* 9000 records of 22 bytes: the body spans the header read and several blocks */
    for (int k = 0; k < 9000; k++) {
        cloud_push(&w, k * 0.5f, 1.0f / (k + 1), -(float)k, 0.25f * k);
        w.ring[k] = (uint16_t)(k % 64);
        w.time[k] = k * 1e-4f;
    }
    CHECK(!pcd_write_binary("w.pcd", &w, &e) && !scan_read("w.pcd", SCAN_AUTO, &c, &e) && c.n == 9000 &&
          !memcmp(c.pts, w.pts, 9000 * 16) && !memcmp(c.ring, w.ring, 18000) && !memcmp(c.time, w.time, 36000),
          "PCD binary write then read gives the same points, rings and times");
    w.n = 500;
    CHECK(!pcd_write_ascii("wa.pcd", &w, &e) && !scan_read("wa.pcd", SCAN_AUTO, &c, &e) && c.n == 500 &&
          !memcmp(c.pts, w.pts, 500 * 16) && !memcmp(c.time, w.time, 2000),
          "PCD ascii with 9 significant digits gives the same floats back");
    struct cloud empty;
    cloud_init(&empty);
    CHECK(!pcd_write_binary("e.pcd", &empty, &e) && !scan_read("e.pcd", SCAN_AUTO, &c, &e) && c.n == 0,
          "an empty cloud is written and read as PCD");
    cloud_free(&w);
    cloud_free(&c);
}

/* A binary_compressed file of two points x y z (float32) whose LZF block is
 * one literal run (control byte 23: 24 literal bytes follow; liblzf's
 * lzf_d.c format, a control byte below 32 is a run of that many plus one
 * literals), with the stated sizes given. */
static size_t pcd_compressed_fixture(unsigned char *buf, unsigned packed, unsigned unpacked, int corrupt)
{
    const char *head = "VERSION 0.7\nFIELDS x y z\nSIZE 4 4 4\nTYPE F F F\nCOUNT 1 1 1\nWIDTH 2\nHEIGHT 1\n"
                       "POINTS 2\nDATA binary_compressed\n";
    size_t o = strlen(head);
    memcpy(buf, head, o);
    const float col[6] = {1.5f, -7, 2, 0.25f, 3, 1e3f};  /* x0 x1 y0 y1 z0 z1 */
    for (int k = 0; k < 4; k++) buf[o + k] = (unsigned char)(packed >> (8 * k));
    for (int k = 0; k < 4; k++) buf[o + 4 + k] = (unsigned char)(unpacked >> (8 * k));
    buf[o + 8] = corrupt ? 0xe0 : 23;  /* corrupt: a back reference before the start */
    memcpy(buf + o + 9, col, 24);
    return o + 33;
}

static void test_pcd_compressed(void)
{
    struct err e;
    struct cloud c, w;
    cloud_init(&c);
    cloud_init(&w);
    unsigned char buf[512];
    put("lit.pcd", buf, pcd_compressed_fixture(buf, 25, 24, 0));
    CHECK(!scan_read("lit.pcd", SCAN_PCD, &c, &e) && c.n == 2, "binary_compressed with a literal LZF block reads 2 points");
    CHECK(CLOUD_X(&c, 0) == 1.5f && CLOUD_X(&c, 1) == -7 && CLOUD_Y(&c, 0) == 2 && CLOUD_Y(&c, 1) == 0.25f &&
          CLOUD_Z(&c, 1) == 1e3f, "the unpacked body is field after field (all x, then all y, then all z)");
    put("lie.pcd", buf, pcd_compressed_fixture(buf, 90, 24, 0));
    CHECK(scan_read("lie.pcd", SCAN_PCD, &c, &e) == -1 && c.n == 0, "a packed size past the end of the file is refused");
    CHECK_MSG(e.msg, "lie.pcd: binary_compressed packed size 90 (byte 108) runs past the end of the file, expected at most 25",
              "the message names the file, the size, its byte and the bound");
    put("un.pcd", buf, pcd_compressed_fixture(buf, 25, 20, 0));
    CHECK(scan_read("un.pcd", SCAN_PCD, &c, &e) == -1, "an unpacked size other than POINTS x point size is refused");
    CHECK_MSG(e.msg, "un.pcd: binary_compressed unpacked size 20 (byte 112), expected 24 for POINTS 2 of 12 bytes",
              "the message names both sizes");
    put("bad.pcd", buf, pcd_compressed_fixture(buf, 25, 24, 1));
    CHECK(scan_read("bad.pcd", SCAN_PCD, &c, &e) == -1, "a corrupt LZF block is refused");
    CHECK_MSG(e.msg, "bad.pcd: binary_compressed block at byte 116 does not unpack", "the message names the block");
    put("cut.pcd", buf, pcd_compressed_fixture(buf, 25, 24, 0) - 30);
    CHECK(scan_read("cut.pcd", SCAN_PCD, &c, &e) == -1, "a body shorter than its two sizes is refused");
    CHECK_MSG(e.msg, "cut.pcd: binary_compressed body at byte 108 is 3 bytes, expected at least 8", "the message names the body");
    cloud_enable_ring(&w);
    cloud_enable_time(&w);
    for (int k = 0; k < 9000; k++) {
        cloud_push(&w, (float)(k % 100) * 0.5f, 1.0f / (k + 1), -(float)k, 0.25f * (k % 7));
        w.ring[k] = (uint16_t)(k % 64);
        w.time[k] = k * 1e-4f;
    }
    int ok = !pcd_write_compressed("wc.pcd", &w, &e) && !scan_read("wc.pcd", SCAN_AUTO, &c, &e) && c.n == 9000 &&
             c.ring && c.time;
    for (size_t k = 0; ok && k < w.n; k++)
        ok = !memcmp(c.pts + 4 * k, w.pts + 4 * k, 16) && c.ring[k] == w.ring[k] && c.time[k] == w.time[k];
    CHECK(ok, "a compressed file we write reads back with the same x y z intensity ring time");
    FILE *f = fopen("wc.pcd", "rb");
    long size = f && !fseek(f, 0, SEEK_END) ? ftell(f) : -1;
    if (f) fclose(f);
    CHECK(size > 0 && size < 9000 * 22, "the compressed file is smaller than the binary body");
    w.n = 0;
    CHECK(!pcd_write_compressed("wc0.pcd", &w, &e) && !scan_read("wc0.pcd", SCAN_AUTO, &c, &e) && c.n == 0,
          "an empty cloud writes and reads back as binary_compressed");
    cloud_free(&c);
    cloud_free(&w);
}

static void test_ply(void)
{
    struct err e;
    struct cloud c;
    cloud_init(&c);
    puts_file("a.ply", "ply\nformat ascii 1.0\ncomment hand-written\nelement vertex 3\n"
                       "property float x\nproperty float y\nproperty float z\nproperty uchar intensity\n"
                       "element face 1\nproperty list uchar int vertex_indices\nend_header\n"
                       "0 0 0 10\n1.5 0 0 20\n0 2.5 -1 30\n3 0 1 2\n");
    CHECK(!scan_read("a.ply", SCAN_AUTO, &c, &e) && c.n == 3, "PLY ascii with a face element reads 3 vertices");
    CHECK(CLOUD_X(&c, 1) == 1.5f && CLOUD_Z(&c, 2) == -1 && CLOUD_I(&c, 2) == 30, "vertex values by property name");
    /* binary_little_endian with a face element BEFORE the vertices (list
     * properties must be walked), then vertices with a double z and a skipped short. */
    unsigned char b[512];
    const char *h = "ply\nformat binary_little_endian 1.0\nelement face 2\nproperty list uchar int vertex_indices\n"
                    "element vertex 2\nproperty float x\nproperty float y\nproperty double z\nproperty short nx\n"
                    "property float intensity\nend_header\n";
    size_t o = strlen(h);
    memcpy(b, h, o);
    for (int f = 0; f < 2; f++) {
        b[o++] = 3;
        for (int k = 0; k < 3; k++) { int32_t v = k; memcpy(b + o, &v, 4); o += 4; }
    }
    for (int k = 0; k < 2; k++) {
        float x = 1.0f + k, y = -1.0f * k, in = 0.5f * k;
        double z = 7.25;
        int16_t nx = -3;
        memcpy(b + o, &x, 4); o += 4;
        memcpy(b + o, &y, 4); o += 4;
        memcpy(b + o, &z, 8); o += 8;
        memcpy(b + o, &nx, 2); o += 2;
        memcpy(b + o, &in, 4); o += 4;
    }
    put("b.ply", b, o);
    CHECK(!scan_read("b.ply", SCAN_PLY, &c, &e) && c.n == 2, "PLY binary with faces first reads 2 vertices");
    CHECK(CLOUD_X(&c, 1) == 2 && CLOUD_Y(&c, 1) == -1 && CLOUD_Z(&c, 0) == 7.25f && CLOUD_I(&c, 1) == 0.5f,
          "binary double and float properties convert, short skipped");
    put("t.ply", b, o - 5);
    CHECK(scan_read("t.ply", SCAN_PLY, &c, &e) == -1, "a truncated binary PLY is refused");
    CHECK_MSG(e.msg, "t.ply", "the truncation message names the file");
    puts_file("be.ply", "ply\nformat binary_big_endian 1.0\nelement vertex 1\nproperty float x\nproperty float y\n"
                        "property float z\nend_header\nabcdefghijkl");
    CHECK(scan_read("be.ply", SCAN_PLY, &c, &e) == -1, "binary_big_endian is refused");
    CHECK_MSG(e.msg, "be.ply:2: format binary_big_endian is not supported", "the message names file and line");
    puts_file("nox.ply", "ply\nformat ascii 1.0\nelement vertex 1\nproperty float y\nproperty float z\nend_header\n1 2\n");
    CHECK(scan_read("nox.ply", SCAN_PLY, &c, &e) == -1, "a vertex element without x is refused");
    CHECK_MSG(e.msg, "lacks property x", "the message names the missing property");
    puts_file("typ.ply", "ply\nformat ascii 1.0\nelement vertex 1\nproperty quad x\nend_header\n1\n");
    CHECK(scan_read("typ.ply", SCAN_PLY, &c, &e) == -1, "an unknown property type is refused");
    CHECK_MSG(e.msg, "typ.ply:4: unknown property type 'quad'", "the message names file, line and type");
    puts_file("notply.ply", "PLY?\n");
    CHECK(scan_read("notply.ply", SCAN_PLY, &c, &e) == -1, "a file not starting with ply is refused");
    CHECK_MSG(e.msg, "notply.ply:1: first line is not 'ply'", "the message names line 1");
    puts_file("big.ply", "ply\nformat binary_little_endian 1.0\nelement vertex 99999999\nproperty float x\n"
                         "property float y\nproperty float z\nend_header\n0123456789ab");
    CHECK(scan_read("big.ply", SCAN_PLY, &c, &e) == -1, "a vertex count beyond the file is refused");
    CHECK_MSG(e.msg, "too short for element vertex 99999999", "the message gives the declared count");
    puts_file("huge.ply", "ply\nformat ascii 1.0\nelement vertex 300000000\nproperty float x\n"
                          "property float y\nproperty float z\nend_header\n1 2 3\n");
    CHECK(scan_read("huge.ply", SCAN_PLY, &c, &e) == -1, "a vertex count over the point bound is refused");
    CHECK_MSG(e.msg, "element vertex 300000000 is more than the limit", "the message names the bound");
    struct cloud w;
    cloud_init(&w);
    cloud_enable_ring(&w);
    for (int k = 0; k < 300; k++) { cloud_push(&w, k * 0.1f, k * 0.2f, k * 0.3f, k * 0.4f); w.ring[k] = (uint16_t)k; }
    CHECK(!ply_write_binary("w.ply", &w, &e) && !scan_read("w.ply", SCAN_AUTO, &c, &e) && c.n == 300 &&
          !memcmp(c.pts, w.pts, 300 * 16) && c.ring && c.ring[299] == 299 && !c.time,
          "PLY binary write then read gives the same points and rings");
    CHECK(!ply_write_ascii("wa.ply", &w, &e) && !scan_read("wa.ply", SCAN_AUTO, &c, &e) && c.n == 300 &&
          !memcmp(c.pts, w.pts, 300 * 16), "PLY ascii write then read gives the same floats");
    cloud_free(&w);
    cloud_free(&c);
}

static void test_names(void)
{
    struct err e;
    enum scan_layout l;
    CHECK(!scan_layout_parse("pcd", &l, &e) && l == SCAN_PCD, "layout words parse");
    CHECK(scan_layout_parse("las", &l, &e) == -1, "an unknown layout word is refused");
    CHECK_MSG(e.msg, "expected auto, raw, pcd, ply, text or pcd-compressed", "the message lists the layouts");
    CHECK(scan_layout_from_path("x/a.b/000.PCD") == SCAN_PCD && scan_layout_from_path("x/a.b/000") == SCAN_AUTO,
          "the extension decides, case-insensitively, dots in folders ignored");
}

/* Every row of the format table is reachable the ways commands reach it:
 * by its word, by each of its extensions, and through scan_write and
 * scan_read (a round trip keeps the points). */
static void test_table(void)
{
    const struct scan_format *f;
    size_t rows = 0;
    struct cloud c, back;
    cloud_init(&c);
    cloud_init(&back);
    cloud_push(&c, 1.5f, -2.25f, 3.0f, 0.5f);
    cloud_push(&c, 4.0f, 5.0f, -6.5f, 1.0f);
    for (size_t i = 0; (f = scan_format_at(i)); i++, rows++) {
        char desc[128], path[64];
        enum scan_layout l = SCAN_AUTO;
        struct err e;
        snprintf(desc, sizeof desc, "the word '%s' names its row", f->name);
        CHECK(!scan_layout_parse(f->name, &l, &e) && l == f->layout && scan_format_of(l) == f, desc);
        for (int x = 0; x < SCAN_FORMAT_EXTS && f->exts[x]; x++) {
            snprintf(path, sizeof path, "scan%s", f->exts[x]);
            /* rows may share an extension when one reader reads both (pcd, pcd-compressed) */
            snprintf(desc, sizeof desc, "extension %s finds the %s row or one with its reader", f->exts[x], f->name);
            const struct scan_format *g = scan_format_of(scan_layout_from_path(path));
            CHECK(g && (g == f || g->read == f->read), desc);
        }
        snprintf(path, sizeof path, "table%s", scan_layout_ext(f->layout));
        snprintf(desc, sizeof desc, "a %s file written through the table reads back by its extension", f->name);
        CHECK(!scan_write(path, f->layout, &c, &e) && !scan_read(path, SCAN_AUTO, &back, &e) && back.n == 2 &&
              CLOUD_X(&back, 1) == 4.0f && CLOUD_Z(&back, 1) == -6.5f, desc);
    }
    CHECK(rows == 5, "five formats in the table: raw, pcd, ply, text, pcd-compressed");
    char list[128];
    scan_format_list(list, sizeof list, ", ", " or ", SCAN_LIST_RECORDING);
    CHECK(!strcmp(list, "raw, pcd, ply or pcd-compressed"), "recordings are written in the formats the table marks");
    scan_format_list(list, sizeof list, ", ", " or ", SCAN_LIST_EXTS);
    CHECK(!strcmp(list, ".bin, .pcd, .ply, .txt, .xyz or .csv"), "an extension two rows share is listed once");
    cloud_free(&c);
    cloud_free(&back);
}

int main(void)
{
    test_table();
    test_raw();
    test_read_finite();
    test_text();
    test_pcd();
    test_pcd_compressed();
    test_ply();
    test_names();
    return check_done();
}

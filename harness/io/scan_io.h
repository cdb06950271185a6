/* scan_io.h: read one scan file into a struct cloud, and write one back.
 *
 * Layouts read (see harness/io/README.md, "Recordings and formats"):
 *   SCAN_RAW   little-endian float32 records x y z intensity, 16 bytes per
 *              point, no header (".bin")
 *   SCAN_PCD   PCD v0.7 ascii or binary (".pcd"; see harness/io/pcd.h)
 *   SCAN_PLY   PLY ascii or binary_little_endian (".ply"; see harness/io/ply.h)
 *   SCAN_TEXT  one point per line "x y z [i]", separated by spaces, tabs or
 *              commas; '#' starts a comment (".txt", ".xyz", ".csv")
 * SCAN_AUTO picks the layout from the file extension.
 *
 *     struct cloud c; cloud_init(&c);
 *     if (scan_read("scans/000012.bin", SCAN_AUTO, &c, e)) return -1;
 *     ...  cloud_free(&c);
 *
 * Failure contract: 0, or -1 with "FILE:LINE: what, expected what" in e
 * (LINE omitted for binary files; the message then names the byte offset or
 * point index).  On -1 the cloud holds no points (n == 0) but keeps its
 * buffers.  On 0 the cloud's previous contents are replaced; its ring / time
 * arrays are present exactly when the file carries those fields.  Points with
 * non-finite coordinates are kept here: recording_load_scan drops and counts
 * them.  Every bound is checked before allocating: a scan over
 * CLOUD_MAX_POINTS points is refused.  No state; every function is
 * thread-safe on distinct clouds.
 */
#ifndef RV_SCAN_IO_H
#define RV_SCAN_IO_H

#include <stdio.h>

#include "harness/base/cloud.h"
#include "harness/base/err.h"

enum scan_layout {
    SCAN_AUTO = 0,
    SCAN_RAW,
    SCAN_PCD,
    SCAN_PLY,
    SCAN_TEXT,
    SCAN_PCD_COMPRESSED   /* PCD written as DATA binary_compressed; read as any .pcd */
};

/* One row of the scan-format table (scan_io.c), the one place a format is
 * registered: the word, the extensions (the first is the one written), the
 * reader and writer, and whether recordings may be written in it. */
#define SCAN_FORMAT_EXTS 4
struct scan_format {
    enum scan_layout layout;
    const char *name;                       /* "pcd" */
    const char *exts[SCAN_FORMAT_EXTS];     /* ".pcd"; NULL after the last */
    int (*read)(const char *path, struct cloud *c, struct err *e);
    /* the reader again, also telling whether every value of x y z
     * intensity is finite (*finite 1; checked while the bytes are in
     * cache), or NULL: scan_read_finite then checks after reading */
    int (*read_finite)(const char *path, struct cloud *c, int *finite, struct err *e);
    int (*write)(const char *path, const struct cloud *c, struct err *e);
    int recording;                          /* recordings may be written in it */
    const char *keeps;                      /* what a file of it holds of a point */
};

/* Row i of the table, NULL past the last; the row of a layout (NULL for
 * SCAN_AUTO). */
const struct scan_format *scan_format_at(size_t i);
const struct scan_format *scan_format_of(enum scan_layout layout);

/* The table as a list for messages and help into out (size n): every
 * format's word, the words of those recordings may be written in, or every
 * extension; entries joined by sep, the last by last ("raw, pcd or ply",
 * "raw|pcd|ply").  Cannot fail (cut at a whole entry when out is small). */
enum { SCAN_LIST_NAMES, SCAN_LIST_RECORDING, SCAN_LIST_EXTS };
void scan_format_list(char *out, size_t n, const char *sep, const char *last, int what);

/* "auto" or a format's word -> layout; -1 with e naming the accepted words
 * otherwise. */
int scan_layout_parse(const char *name, enum scan_layout *out, struct err *e);
/* The word for a layout ("raw", ...). */
const char *scan_layout_name(enum scan_layout layout);
/* Layout from the extension of path, case-insensitive; SCAN_AUTO if unknown. */
enum scan_layout scan_layout_from_path(const char *path);
/* The usual extension for a layout, with the dot (".bin", ".pcd", ...). */
const char *scan_layout_ext(enum scan_layout layout);

/* Read path as layout (SCAN_AUTO: by extension; an unknown extension is an
 * error naming the extensions accepted). */
int scan_read(const char *path, enum scan_layout layout, struct cloud *c, struct err *e);

/* scan_read, then drop the points with a non-finite coordinate and count
 * them in *n_dropped (may be NULL).  For formats whose row has a
 * read_finite (raw, pcd) the check runs on each block as it is read, while
 * it is still in cache. */
int scan_read_finite(const char *path, enum scan_layout layout, struct cloud *c, size_t *n_dropped,
                     struct err *e);

/* Writers, each atomic (harness/base/fileio.h).  The raw layout keeps x y z i
 * only; scan_write picks the writer for layout (SCAN_PCD and SCAN_PLY write
 * binary; SCAN_TEXT writes "x y z i" lines with 9 significant digits). */
int scan_write_raw(const char *path, const struct cloud *c, struct err *e);
int scan_write_text(const char *path, const struct cloud *c, struct err *e);
int scan_write(const char *path, enum scan_layout layout, const struct cloud *c, struct err *e);

#endif

/* scan_body.h: internal to the scan readers and writers of harness/io/
 * (scan_io.c, pcd.c, ply.c, and the log writer logwrite.c): whole reads of
 * a scan file, and the one writer of PCD and PLY files (a header function
 * of the format, then the point body).  The format table (scan_io.h) names
 * the readers; they share this, so no reader calls another.
 *
 * Failure contract: the reads and scan_body_write return 0, or -1 with e
 * naming the file; scan_body_record cannot fail.  No state; thread-safe on
 * distinct files and clouds.
 */
#ifndef RV_SCAN_BODY_H
#define RV_SCAN_BODY_H

#include <stddef.h>
#include <stdio.h>

#include "harness/base/cloud.h"
#include "harness/base/err.h"

/* Read exactly len bytes from fd into buf.  With finite != NULL, read in
 * blocks and check each for NaN / infinity while it is in cache (len a
 * multiple of 4, buf float-aligned); *finite is 1 when none was found. */
int scan_body_read_full(int fd, void *buf, size_t len, int *finite, const char *path, struct err *e);

/* Read a whole regular file of at most max_bytes into *buf (malloc'ed, one
 * NUL after the bytes; the caller frees), with the bound in the message
 * phrased for scans. */
int scan_body_slurp(const char *path, size_t max_bytes, unsigned char **buf, size_t *len, struct err *e);

/* Point k as a binary record into rec: x y z intensity as float32, then
 * ring as little-endian uint16 and time as float32 when the cloud has them
 * (up to 22 bytes); the bytes used. */
#define SCAN_BODY_RECORD_MAX 22
size_t scan_body_record(const struct cloud *c, size_t k, unsigned char rec[SCAN_BODY_RECORD_MAX]);

/* A format's header for cloud c into out (size n), as snprintf: its
 * length, or -1.  word is the format's name for the body kind ("binary",
 * "binary_little_endian", "ascii", ...). */
typedef int (*scan_header_fn)(char *out, size_t n, const struct cloud *c, const char *word);

/* What follows the header: c's points as binary records
 * (scan_body_record), one text line a point (the same fields, floats with
 * 9 significant digits, ring as a whole number), or len bytes given. */
enum scan_body_kind { SCAN_BODY_RECORDS, SCAN_BODY_LINES, SCAN_BODY_GIVEN };

/* The one writer of PCD and PLY files: path written atomically (afile),
 * header(c, word) then the body of that kind.  Records are packed with
 * the header into blocks of a few MiB, each handed to the file in one
 * write.  0, or -1 with e naming path (out of memory, a write error, a
 * header longer than SCAN_HEADER_MAX bytes); nothing is left at path on -1. */
#define SCAN_HEADER_MAX 1024
int scan_body_write(const char *path, const struct cloud *c, scan_header_fn header, const char *word,
                    enum scan_body_kind kind, const void *given, size_t len, struct err *e);

#endif

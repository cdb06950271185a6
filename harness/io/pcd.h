/* pcd.h: PCD point-cloud files, version 0.7 (ascii, binary, binary_compressed).
 *
 * Read: the header lines VERSION, FIELDS, SIZE, TYPE, COUNT, WIDTH, HEIGHT,
 * VIEWPOINT, POINTS, DATA in that order (comments '#' allowed).  Fields
 * x y z are required; intensity, ring and time (also "t") are kept when
 * present; other fields are skipped.  Types: I (1, 2, 4 bytes), U (1, 2, 4),
 * F (4, 8) as the format allows; any other type or size is refused.
 * DATA binary_compressed (LZF, liblzf) is read after both of its sizes are
 * checked: the unpacked size against POINTS times the point size, the packed
 * size against the bytes left in the file.  The declared point count is
 * checked against the file size and CLOUD_MAX_POINTS before any allocation.
 * Write: DATA binary with fields x y z intensity (float32), plus ring
 * (uint16) and time (float32) when the cloud has them; atomic.
 *
 * Failure contract as in scan_io.h.  Thread-safe on distinct clouds.
 */
#ifndef RV_PCD_H
#define RV_PCD_H

#include "harness/base/cloud.h"
#include "harness/base/err.h"

int pcd_read(const char *path, struct cloud *c, struct err *e);
/* pcd_read, and *finite 1 when every value of x y z intensity is finite
 * (binary bodies are checked block by block while in cache), else 0 (a
 * value was not, or the body kind is not checked here). */
int pcd_read_finite(const char *path, struct cloud *c, int *finite, struct err *e);
int pcd_write_binary(const char *path, const struct cloud *c, struct err *e);
/* The same content as DATA ascii (9 significant digits). */
int pcd_write_ascii(const char *path, const struct cloud *c, struct err *e);
/* The same content as DATA binary_compressed (LZF).  liblzf may pick other
 * matches from run to run, so the bytes can differ; what they unpack to cannot. */
int pcd_write_compressed(const char *path, const struct cloud *c, struct err *e);

#endif

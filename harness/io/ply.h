/* ply.h: PLY polygon files, read as point clouds.
 *
 * Read: format ascii 1.0 or binary_little_endian 1.0 (binary_big_endian is
 * refused with a clear message).  The element "vertex" must hold properties
 * x y z; intensity (also "scalar_intensity"), ring and time are kept when
 * present; other properties are skipped, and other elements (faces, ...)
 * before or after the vertices are skipped, list properties included.
 * Scalar types: char uchar short ushort int uint float double and their
 * sized names int8 uint8 int16 uint16 int32 uint32 float32 float64.
 * Write: binary_little_endian with float x y z intensity, plus ushort ring
 * and float time when the cloud has them; atomic.
 *
 * Failure contract as in scan_io.h.  Thread-safe on distinct clouds.
 */
#ifndef RV_PLY_H
#define RV_PLY_H

#include "harness/base/cloud.h"
#include "harness/base/err.h"

int ply_read(const char *path, struct cloud *c, struct err *e);
int ply_write_binary(const char *path, const struct cloud *c, struct err *e);
int ply_write_ascii(const char *path, const struct cloud *c, struct err *e);

#endif

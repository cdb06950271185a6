/* poses_io.h: pose files in three layouts, detected or forced, and a writer.
 *
 * Layouts:
 *   POSES_CSV     comma-separated with a header line naming the columns
 *                 t,x,y,z,qx,qy,qz,qw in any order (extra columns ignored)
 *   POSES_TEXT    whitespace-separated lines "t x y z qx qy qz qw"
 *   POSES_MATRIX  lines of 12 numbers, the row-major 3x4 [R | p], with the
 *                 times in a separate file (one number per line); without a
 *                 times file the times are 0, 1, 2, ... seconds -- callers
 *                 that need real times pass one
 * In every layout blank lines and lines starting with '#' are skipped.
 * Detection (POSES_AUTO): a first data line with a letter in it is a CSV
 * header; else 12 numbers on a line mean POSES_MATRIX, 8 mean POSES_TEXT.
 *
 *     struct poses ps;
 *     if (poses_read("poses.csv", POSES_AUTO, NULL, &ps, e)) return -1;
 *     ... ps.v[i].t, ps.v[i].p ...   poses_free(&ps);
 *
 * Checks, each naming file and line: the column count of every line, every
 * number, every quaternion (pose_from_quat) or rotation (pose_from_matrix),
 * and strictly increasing times.  At most POSES_MAX entries.
 * Failure contract: 0, or -1 with e set and *out empty.  Thread-safe.
 */
#ifndef RV_POSES_IO_H
#define RV_POSES_IO_H

#include <stddef.h>
#include "harness/base/err.h"
#include "harness/base/pose.h"

#define POSES_MAX ((size_t)10000000)

enum poses_layout {
    POSES_AUTO = 0,
    POSES_CSV,
    POSES_TEXT,
    POSES_MATRIX
};

struct poses {
    size_t n;
    struct pose *v;      /* n entries, times strictly increasing */
    enum poses_layout layout;  /* the layout read (after detection) */
};

/* "auto" | "csv" | "text" | "matrix"; -1 with e naming the words otherwise. */
int poses_layout_parse(const char *name, enum poses_layout *out, struct err *e);
const char *poses_layout_name(enum poses_layout layout);

/* Read path in layout (POSES_AUTO detects); times_path is the times file
 * for POSES_MATRIX (NULL: times 0, 1, 2, ...) and must be NULL otherwise. */
int poses_read(const char *path, enum poses_layout layout, const char *times_path,
               struct poses *out, struct err *e);

/* Read a file of one time per line (seconds), strictly increasing.  The
 * caller frees *t.  0 or -1. */
int poses_read_times(const char *path, double **t, size_t *n, struct err *e);

void poses_free(struct poses *ps);

/* Time units of a pose file. POSES_UNIT_AUTO: seconds when they give a
 * plausible rate, else the first of ms, us, ns that does; the median step
 * between poses must lie within [POSES_STEP_MIN_S, POSES_STEP_MAX_S] (1 kHz
 * down to 0.1 Hz), the median speed between poses must stay below
 * POSES_SPEED_MAX_MPS, and the largest time below POSES_TIME_MAX_S once
 * scaled (an epoch in seconds is about 1.7e9).  A unit that is named is
 * checked for magnitude and for a step of POSES_STEP_MIN_S to
 * POSES_STEP_MAX_NAMED_S, so a sparse recording (one scan every 40 s) is read
 * as written, never as milliseconds. */
enum poses_unit { POSES_UNIT_AUTO = 0, POSES_UNIT_S, POSES_UNIT_MS, POSES_UNIT_US, POSES_UNIT_NS };
#define POSES_STEP_MIN_S 1e-3
#define POSES_STEP_MAX_S 10.0
#define POSES_STEP_MAX_NAMED_S 60.0
#define POSES_TIME_MAX_S 1e11
/* 100 m/s = 360 km/h: above any ground vehicle (common practice, no source) */
#define POSES_SPEED_MAX_MPS 100.0

/* "auto" | "s" | "ms" | "us" | "ns"; -1 with e naming the words otherwise. */
int poses_unit_parse(const char *name, enum poses_unit *out, struct err *e);
const char *poses_unit_name(enum poses_unit unit);

/* Scale the times of ps to seconds from unit (POSES_UNIT_AUTO detects); the
 * unit applied goes to *used. Refuses, naming path, the median step and the
 * rate it implies, when no unit (or not the one named) gives a plausible
 * rate. 0, or -1 with e set and ps unchanged. */
int poses_apply_unit(struct poses *ps, enum poses_unit unit, const char *path, enum poses_unit *used,
                     struct err *e);

/* Write n poses in layout (not POSES_AUTO), atomically, each number in
 * round-trip form (harness/base/numfmt.h) so a read gives back the same
 * doubles.  POSES_MATRIX writes the
 * times to times_path (required then, NULL otherwise). */
int poses_write(const char *path, enum poses_layout layout, const struct pose *v, size_t n,
                const char *times_path, struct err *e);

#endif

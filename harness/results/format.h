/* format.h: the format version every file of a results folder carries, and
 * the check a reader makes before it reads on.
 *
 * A CSV file opens with a comment line naming its kind and version:
 *
 *     # revisit scan poses, format 1
 *     set,index,t,x,y,z
 *
 * a JSON file with a "format" key: "revisit-result-1".  A reader passes each
 * comment line before the data to results_format_line: a line of its own
 * kind and version reads on, an ordinary comment is passed over, and the
 * marker of another kind or of a version this build does not know is
 * refused, naming the file and line.  A file without a marker is read as
 * the current version (files written before the markers, and files made by
 * other programs, such as a per-query results CSV).
 *
 * Failure contract: the checks return -1 with e set as "FILE:LINE: what,
 * expected what"; nothing global; thread-safe.
 */
#ifndef RV_RESULTS_FORMAT_H
#define RV_RESULTS_FORMAT_H

#include <stdio.h>
#include <cjson/cJSON.h>

#include "harness/base/err.h"

/* The CSV kinds; every file of a results folder is at one version. */
#define RESULTS_QUERIES_KIND "per-query results"
#define RESULTS_POSES_KIND "scan poses"
#define RESULTS_MATRIX_KIND "distance matrix"
#define RESULTS_SENSITIVITY_KIND "sensitivity ranking"
#define RESULTS_FORMAT_VERSION 1

/* 1: line is the marker of kind at RESULTS_FORMAT_VERSION; 0: not a marker
 * (any other text); -1: the marker of another kind or version (e set). */
int results_format_line(const char *line, const char *kind, const char *path, long lineno,
                        struct err *e);

/* "# revisit KIND, format N\n" into f. */
void results_format_write(FILE *f, const char *kind);

/* JSON: root's "format" must be "revisit-NAME-1" (name "result", "summary",
 * "verdicts").  0, or -1 with e naming path and what was found. */
int results_format_json(const cJSON *root, const char *name, const char *path, struct err *e);

/* "revisit-NAME-1" into out (size n) for a writer. */
void results_format_json_name(char *out, size_t n, const char *name);

#endif
